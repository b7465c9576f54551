#include "cli/signals.hpp"

#include <csignal>

namespace pleat::cli {
namespace {

std::atomic<bool> interrupted{false};

extern "C" void on_interrupt(int signal_number) {
  interrupted.store(true);
  std::signal(signal_number, SIG_DFL);  // a second signal ends the process
}

}  // namespace

InterruptGuard::InterruptGuard() {
  interrupted.store(false);
  std::signal(SIGINT, on_interrupt);
  std::signal(SIGTERM, on_interrupt);
}

InterruptGuard::~InterruptGuard() {
  std::signal(SIGINT, SIG_DFL);
  std::signal(SIGTERM, SIG_DFL);
}

const std::atomic<bool>& InterruptGuard::flag() const { return interrupted; }

}  // namespace pleat::cli
