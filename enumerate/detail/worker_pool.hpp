// Threads kept for the parallel loops of one certify call. Internal to
// enumerate/ (not installed).
#pragma once

#include <atomic>
#include <condition_variable>
#include <cstddef>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace pleat::detail {

// `helpers` threads (start_worker_thread) that wait for jobs, so that a
// parallel loop costs a wake-up instead of a thread start (110-215 us each
// on our 2-core virtual machine, about 9 loops per certify after the walk).
// After a job (or wake) a helper spins for 2 ms before it sleeps, unless the
// pool rests: the next loop usually follows within a millisecond. A new
// pool's helpers sleep until the first job.
class WorkerPool {
 public:
  explicit WorkerPool(unsigned helpers);
  ~WorkerPool();  // stops and joins the helpers (no job may be running)
  WorkerPool(const WorkerPool&) = delete;
  WorkerPool& operator=(const WorkerPool&) = delete;

  unsigned helpers() const { return static_cast<unsigned>(threads_.size()); }

  // Runs job() on the calling thread and on up to `helpers` of the pool's
  // threads that are free to take it, and returns once each of those has
  // returned from it. Helpers that come late (after the caller's own job()
  // returned) do not run it, so the caller never waits for a helper to
  // start: job must split its work dynamically (each call takes what is
  // left; parallel_for). job must not throw. When the pool is busy with
  // another caller's job, job() runs on the calling thread alone.
  void run(unsigned helpers, const std::function<void()>& job);

  // While other threads take the processors (certify's walk): helpers sleep
  // between jobs instead of spinning.
  void rest();
  // Work is coming (the walk has ended): the helpers stop resting, wake now
  // and spin for the next job, so that it does not wait for a wake-up.
  void wake();
  bool is_resting() const { return is_resting_.load(); }

 private:
  void serve();

  std::mutex mutex_;
  std::condition_variable wake_, finished_;
  std::atomic<std::size_t> generation_{0};  // bumped by each job offered, and by the stop
  const std::function<void()>* job_ = nullptr;  // the job open for helpers to join
  unsigned wanted_ = 0;   // helpers the open job may still take
  unsigned running_ = 0;  // helpers inside a job
  bool busy_ = false;     // a caller is inside run
  bool stopping_ = false;
  std::atomic<bool> is_resting_{false};
  std::vector<std::thread> threads_;  // last: started once the rest is set up
};

// The pool parallel_for lends its loops to on this thread while the scope
// lives (none by default: each loop then starts its own threads). Scopes
// nest; the innermost wins.
class WorkerPoolScope {
 public:
  explicit WorkerPoolScope(WorkerPool* pool);
  ~WorkerPoolScope();
  WorkerPoolScope(const WorkerPoolScope&) = delete;
  WorkerPoolScope& operator=(const WorkerPoolScope&) = delete;

 private:
  WorkerPool* previous_;
};

// The pool of the innermost WorkerPoolScope on this thread, or null.
WorkerPool* current_worker_pool();

// While it lives, this thread's current pool (if any) rests; woken as it
// ends. For a walk inside certify: the walk's own threads take the
// processors, and the loops after it find the helpers awake.
class RestingWorkerPool {
 public:
  RestingWorkerPool() : pool_(current_worker_pool()) {
    if (pool_) pool_->rest();
  }
  ~RestingWorkerPool() {
    if (pool_) pool_->wake();
  }
  RestingWorkerPool(const RestingWorkerPool&) = delete;
  RestingWorkerPool& operator=(const RestingWorkerPool&) = delete;

 private:
  WorkerPool* pool_;
};

}  // namespace pleat::detail
