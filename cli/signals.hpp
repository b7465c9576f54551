// Ctrl-C during a long run: the first SIGINT sets a flag the walker polls, so
// the run stops cleanly and keeps what it found; a second one at least a
// second later kills as usual.
//
// Guards nest: a command takes one before it reads its input (so a Ctrl-C
// while a large network is read still ends in a clean, well-formed stop at
// the job's first poll instead of killing the process), and the phases it
// runs may take their own. Only the outermost guard clears the flag and
// installs or restores the handlers.
#pragma once

#include <atomic>
#include <memory>
#include <string>

namespace pleat::cli {

class InterruptGuard {
 public:
  InterruptGuard();   // outermost: clears the flag, installs the handler (SIGINT and SIGTERM)
  ~InterruptGuard();  // outermost: restores the default
  InterruptGuard(const InterruptGuard&) = delete;
  InterruptGuard& operator=(const InterruptGuard&) = delete;
  const std::atomic<bool>& flag() const;
};

// A file to remove if a repeated signal ends the process (a staged file's
// hidden temporary, which would otherwise stay behind: up to gigabytes for
// certify --rows-out). Registered while this lives; the handler removes it
// (unlink, async-signal-safe) just before it ends the process. Four at most
// at once, paths under 4096 bytes: any other is not registered and stays
// behind, as before.
class RemovedIfKilled {
 public:
  explicit RemovedIfKilled(const std::string& path);
  ~RemovedIfKilled();
  RemovedIfKilled(const RemovedIfKilled&) = delete;
  RemovedIfKilled& operator=(const RemovedIfKilled&) = delete;

 private:
  int slot_ = -1;
};

}  // namespace pleat::cli
