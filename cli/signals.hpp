// Ctrl-C during a long run: the first SIGINT sets a flag the walker polls, so
// the run stops cleanly and keeps what it found; a second one at least a
// second later kills as usual.
#pragma once

#include <atomic>

namespace pleat::cli {

class InterruptGuard {
 public:
  InterruptGuard();   // installs the handler (SIGINT and SIGTERM)
  ~InterruptGuard();  // restores the default
  InterruptGuard(const InterruptGuard&) = delete;
  InterruptGuard& operator=(const InterruptGuard&) = delete;
  const std::atomic<bool>& flag() const;
};

}  // namespace pleat::cli
