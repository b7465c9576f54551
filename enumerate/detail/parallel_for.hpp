// A parallel loop for certify's phases after the walk. Internal to
// enumerate/ (not installed).
#pragma once

#include <cstddef>
#include <functional>
#include <memory>

namespace pleat::detail {

// Runs work(i) for i in [0, count) on up to `threads` threads (the calling
// thread among them), each under the calling thread's stop request when one
// is installed; rethrows the first exception (a Stopped included) after
// every thread has ended. Which thread runs which i is not fixed: work must
// write only to its own slot for the result to be thread-count independent.
// The threads are the current WorkerPool's (worker_pool.hpp) when this
// thread has one, else started for this call.
void parallel_for(std::size_t count, unsigned threads, const std::function<void(std::size_t)>& work);

class WorkerPool;
class WorkerPoolScope;

// While it lives, the parallel loops of the thread that made it
// (parallel_for, first_rejected_pattern) run on `threads - 1` helpers started
// here once (a WorkerPool lent by a WorkerPoolScope) instead of threads
// started per loop. For one certify call. Not shared across threads.
class LoopThreads {
 public:
  explicit LoopThreads(unsigned threads);
  ~LoopThreads();
  LoopThreads(const LoopThreads&) = delete;
  LoopThreads& operator=(const LoopThreads&) = delete;

 private:
  std::unique_ptr<WorkerPool> pool_;
  std::unique_ptr<WorkerPoolScope> scope_;
};

}  // namespace pleat::detail
