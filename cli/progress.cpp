#include "cli/progress.hpp"

#include <unistd.h>

#include <chrono>
#include <cstdio>

namespace pleat::cli {
namespace {
double now_seconds() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}
}  // namespace

ProgressLine::ProgressLine(bool is_quiet) : shown_(!is_quiet && isatty(STDERR_FILENO)) {}

ProgressLine::~ProgressLine() { finish(); }

bool ProgressLine::is_due() const { return shown_ && now_seconds() - last_ >= 0.2; }

void ProgressLine::show(const std::string& text) {
  last_ = now_seconds();
  std::fprintf(stderr, "\r\033[K%s", text.c_str());
  std::fflush(stderr);
  dirty_ = true;
}

void ProgressLine::update(const std::string& text) {
  if (is_due()) show(text);
}

void ProgressLine::finish() {
  if (!shown_ || !dirty_) return;
  std::fprintf(stderr, "\r\033[K");
  std::fflush(stderr);
  dirty_ = false;
}

}  // namespace pleat::cli
