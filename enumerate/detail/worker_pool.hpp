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
// After a job a helper spins briefly before it sleeps: the next loop
// usually follows within a fraction of a millisecond.
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

}  // namespace pleat::detail
