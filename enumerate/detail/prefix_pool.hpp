// The worker pool of a walk's level (walk_regions and the distributed walk
// share it). Internal to enumerate/ (not installed).
#pragma once

#include "core/stop.hpp"

#include <chrono>
#include <condition_variable>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace pleat::detail {

// How far a pool got through its items.
struct PrefixRun {
  std::size_t prefix = 0;                   // items [0, prefix) were processed, without a gap
  StopReason stopped = StopReason::none;    // why the pool stopped before the end (none: it did not)
};

// Runs process(worker, i) for every i in [0, count) on `workers` threads
// (at most count of them), thread t passing worker t, each under a
// StopScope of `stop`; one worker runs on the calling thread itself. Wakes
// every 0.2 s to poll stop.reason() and call on_tick(items finished so far)
// (may be empty). A stop (polled, or Stopped
// thrown inside an item, which leaves that item undone) halts the pool; only
// the prefix finished without a gap counts, so that which items are kept
// does not depend on the thread count beyond where the stop fell.
// process must write only to item i's own slot. Rethrows the first other
// exception after every thread has ended.
PrefixRun run_prefix_pool(std::size_t count, std::size_t workers, const StopRequest& stop,
                          const std::function<void(std::size_t worker, std::size_t item)>& process,
                          const std::function<void(std::size_t finished)>& on_tick);

// The same, on worker threads that live as long as the pool, so that a walk
// of many small levels starts its threads (and warms their thread-local
// buffers) once, not once per level. The thread calling run is worker 0 (it
// processes items too, and calls on_tick between them); the pool starts the
// others. One worker: no threads. run is called from one thread at a time.
class PrefixPool {
 public:
  explicit PrefixPool(std::size_t workers);
  ~PrefixPool();
  PrefixPool(const PrefixPool&) = delete;
  PrefixPool& operator=(const PrefixPool&) = delete;

  // As run_prefix_pool with this pool's workers.
  PrefixRun run(std::size_t count, const StopRequest& stop,
                const std::function<void(std::size_t worker, std::size_t item)>& process,
                const std::function<void(std::size_t finished)>& on_tick);

 private:
  struct Job;
  void close();
  std::size_t busy_count();
  void serve(std::size_t worker);
  void work(Job& job, std::size_t worker);

  std::size_t workers_;
  std::mutex mutex_;
  std::condition_variable wake_workers_;
  std::condition_variable wake_caller_;
  Job* job_ = nullptr;               // the current run (under mutex_)
  std::uint64_t generation_ = 0;     // counts runs (under mutex_)
  std::size_t busy_ = 0;             // workers not yet out of the current run (under mutex_)
  bool is_closing_ = false;
  // on_tick's last call, kept across runs so that a walk of many levels,
  // each shorter than 0.2 s, still ticks every 0.2 s (worker 0's only).
  std::chrono::steady_clock::time_point last_tick_ = std::chrono::steady_clock::now();
  std::vector<std::thread> threads_;  // last: started once the rest is set up
};

}  // namespace pleat::detail
