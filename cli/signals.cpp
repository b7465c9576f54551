#include "cli/signals.hpp"

#include <unistd.h>

#include <array>
#include <csignal>
#include <cstring>
#include <ctime>

namespace pleat::cli {
namespace {

std::atomic<bool> interrupted{false};
std::atomic<long long> first_signal_nanoseconds{0};
int guard_depth = 0;  // guards are taken and dropped on the main thread only

// RemovedIfKilled's files. A slot is free, being filled, set (its path
// complete), or taken by the handler, which then owns it for good (the
// process is ending), so that the path it reads is never rewritten under it.
enum SlotState : int { free_slot, filling, set, taken };
struct KillSlot {
  std::atomic<int> state{free_slot};
  std::array<char, 4096> path{};
};
std::array<KillSlot, 4> kill_slots;
static_assert(std::atomic<int>::is_always_lock_free, "read in a signal handler");

void remove_files_registered() {
  for (KillSlot& slot : kill_slots) {
    int expected = set;
    if (slot.state.compare_exchange_strong(expected, taken)) ::unlink(slot.path.data());
  }
}

long long monotonic_nanoseconds() {
  timespec now{};
  clock_gettime(CLOCK_MONOTONIC, &now);  // async-signal-safe (POSIX)
  return static_cast<long long>(now.tv_sec) * 1000000000LL + now.tv_nsec;
}

// The first signal asks for a clean stop. A repeat within a second is the
// same request delivered twice (timeout(1) signals the child and then its
// process group), so it is ignored; a later one ends the process at once.
// The two copies may reach two threads at the same instant: the first
// signal's time is claimed with one compare-and-swap, so the other handler
// always reads a time (never the 0 of "no signal yet", which would look a
// second old and end the process).
extern "C" void on_interrupt(int signal_number) {
  const long long now = monotonic_nanoseconds();
  long long first = 0;
  if (first_signal_nanoseconds.compare_exchange_strong(first, now)) {
    interrupted.store(true);
    return;
  }
  if (now - first >= 1000000000LL) {
    remove_files_registered();
    std::signal(signal_number, SIG_DFL);
    std::raise(signal_number);
  }
}

}  // namespace

InterruptGuard::InterruptGuard() {
  if (guard_depth++ > 0) return;
  interrupted.store(false);
  first_signal_nanoseconds.store(0);
  std::signal(SIGINT, on_interrupt);
  std::signal(SIGTERM, on_interrupt);
}

InterruptGuard::~InterruptGuard() {
  if (--guard_depth > 0) return;
  std::signal(SIGINT, SIG_DFL);
  std::signal(SIGTERM, SIG_DFL);
}

const std::atomic<bool>& InterruptGuard::flag() const { return interrupted; }

RemovedIfKilled::RemovedIfKilled(const std::string& path) {
  for (std::size_t i = 0; i < kill_slots.size(); ++i) {
    KillSlot& slot = kill_slots[i];
    if (path.size() >= slot.path.size()) return;
    int expected = free_slot;
    if (!slot.state.compare_exchange_strong(expected, filling)) continue;
    std::memcpy(slot.path.data(), path.c_str(), path.size() + 1);
    slot.state.store(set);
    slot_ = static_cast<int>(i);
    return;
  }
}

RemovedIfKilled::~RemovedIfKilled() {
  if (slot_ < 0) return;
  int expected = set;  // taken by the handler: left so, the process is ending
  kill_slots[static_cast<std::size_t>(slot_)].state.compare_exchange_strong(expected, free_slot);
}

}  // namespace pleat::cli
