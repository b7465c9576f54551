#include "enumerate/detail/prefix_pool.hpp"

#include "enumerate/detail/worker_thread.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace pleat::detail {

namespace {

// One worker: the calling thread itself, polling the request before each
// item and ticking every 0.2 s. Starting a thread per level would cost more
// than a small level's work: a 2-input walk of 640 regions has 25 levels,
// and each new thread rebuilds its thread-local buffers (and page-faults its
// stack) from scratch.
PrefixRun run_inline(std::size_t count, const StopRequest& stop,
                     const std::function<void(std::size_t worker, std::size_t item)>& process,
                     const std::function<void(std::size_t finished)>& on_tick,
                     std::chrono::steady_clock::time_point& last_tick) {
  using clock = std::chrono::steady_clock;
  PrefixRun run;
  try {
    const StopScope scope(stop);
    for (; run.prefix < count; ++run.prefix) {
      if (const StopReason reason = stop.reason(); reason != StopReason::none) {
        run.stopped = reason;
        break;
      }
      process(0, run.prefix);
      if (on_tick && clock::now() - last_tick >= std::chrono::milliseconds(200)) {
        on_tick(run.prefix + 1);
        last_tick = clock::now();
      }
    }
  } catch (const Stopped& stopped) {  // mid-item: that item stays undone
    run.stopped = stopped.reason();
  }
  return run;
}

}  // namespace

// One run's shared state: its items and the counters the workers advance.
struct PrefixPool::Job {
  std::size_t count = 0;
  const StopRequest* stop = nullptr;
  const std::function<void(std::size_t, std::size_t)>* process = nullptr;
  const std::function<void(std::size_t)>* on_tick = nullptr;  // the caller's (worker 0's) only
  std::vector<std::atomic<bool>> done;
  std::atomic<int> stopped_polled{static_cast<int>(StopReason::none)};
  std::atomic<std::size_t> next{0};
  std::atomic<std::size_t> finished{0};
  std::atomic<bool> halt{false};
  std::atomic<int> stopped_inside{static_cast<int>(StopReason::none)};
  std::mutex error_mutex;
  std::exception_ptr error;
};

PrefixPool::PrefixPool(std::size_t workers) : workers_(std::max<std::size_t>(1, workers)) {
  try {
    // Worker 0 is the thread that calls run.
    for (std::size_t t = 1; t < workers_; ++t) threads_.push_back(start_worker_thread([this, t] { serve(t); }, t - 1));
  } catch (...) {  // a thread that could not start: end those that did
    close();
    throw;
  }
}

PrefixPool::~PrefixPool() { close(); }

std::size_t PrefixPool::busy_count() {
  const std::lock_guard lock(mutex_);
  return busy_;
}

void PrefixPool::close() {
  {
    const std::lock_guard lock(mutex_);
    is_closing_ = true;
  }
  wake_workers_.notify_all();
  for (auto& thread : threads_) thread.join();
  threads_.clear();
}

// A worker thread: waits for each run, works on it, says when it is out.
void PrefixPool::serve(std::size_t worker) {
  std::uint64_t seen = 0;
  while (true) {
    Job* job = nullptr;
    {
      std::unique_lock lock(mutex_);
      wake_workers_.wait(lock, [&] { return is_closing_ || generation_ != seen; });
      if (is_closing_) return;
      seen = generation_;
      job = job_;
    }
    work(*job, worker);
    {
      const std::lock_guard lock(mutex_);
      --busy_;
    }
    wake_caller_.notify_all();
  }
}

void PrefixPool::work(Job& job, std::size_t worker) {
  using clock = std::chrono::steady_clock;
  try {
    const StopScope scope(*job.stop);
    while (!job.halt) {
      // Polled between items; inside one, StopScope's poll_stop acts.
      if (const StopReason reason = job.stop->reason(); reason != StopReason::none) {
        job.stopped_polled = static_cast<int>(reason);
        job.halt = true;
        break;
      }
      const std::size_t i = job.next++;
      if (i >= job.count) break;
      (*job.process)(worker, i);
      job.done[i] = true;
      ++job.finished;
      if (worker == 0 && job.on_tick && *job.on_tick && clock::now() - last_tick_ >= std::chrono::milliseconds(200)) {
        (*job.on_tick)(job.finished);
        last_tick_ = clock::now();
      }
    }
  } catch (const Stopped& stopped) {  // mid-item: that item stays undone
    job.stopped_inside = static_cast<int>(stopped.reason());
    job.halt = true;
  } catch (...) {
    const std::lock_guard lock(job.error_mutex);
    if (!job.error) job.error = std::current_exception();
    job.halt = true;
  }
}

PrefixRun PrefixPool::run(std::size_t count, const StopRequest& stop,
                          const std::function<void(std::size_t worker, std::size_t item)>& process,
                          const std::function<void(std::size_t finished)>& on_tick) {
  PrefixRun run;
  if (count == 0) return run;
  if (workers_ == 1 || count == 1) return run_inline(count, stop, process, on_tick, last_tick_);
  Job job;
  job.count = count;
  job.stop = &stop;
  job.process = &process;
  job.on_tick = &on_tick;
  job.done = std::vector<std::atomic<bool>>(count);
  {
    const std::lock_guard lock(mutex_);
    job_ = &job;
    busy_ = threads_.size();
    ++generation_;
  }
  wake_workers_.notify_all();
  work(job, 0);  // the caller works too: no wake-up of its own on the level's critical path
  {
    // The others finish their last items: a short spin first (a level of a
    // walk is often well under a millisecond, a sleep and a wake-up a good
    // part of one), then sleep, waking every 0.2 s to report and check limits.
    const auto spin_until = std::chrono::steady_clock::now() + std::chrono::microseconds(200);
    while (busy_count() > 0 && std::chrono::steady_clock::now() < spin_until) std::this_thread::yield();
    std::unique_lock lock(mutex_);
    while (!wake_caller_.wait_for(lock, std::chrono::milliseconds(200), [&] { return busy_ == 0; })) {
      if (const StopReason reason = stop.reason(); reason != StopReason::none) {
        run.stopped = reason;
        job.halt = true;
      }
      if (on_tick) {
        lock.unlock();
        on_tick(job.finished);
        last_tick_ = std::chrono::steady_clock::now();
        lock.lock();
      }
    }
    job_ = nullptr;
  }
  if (job.error) std::rethrow_exception(job.error);
  if (run.stopped == StopReason::none) run.stopped = static_cast<StopReason>(job.stopped_polled.load());
  if (run.stopped == StopReason::none) run.stopped = static_cast<StopReason>(job.stopped_inside.load());
  while (run.prefix < count && job.done[run.prefix]) ++run.prefix;
  return run;
}

PrefixRun run_prefix_pool(std::size_t count, std::size_t workers, const StopRequest& stop,
                          const std::function<void(std::size_t worker, std::size_t item)>& process,
                          const std::function<void(std::size_t finished)>& on_tick) {
  PrefixPool pool(std::min(workers, count));
  return pool.run(count, stop, process, on_tick);
}

}  // namespace pleat::detail
