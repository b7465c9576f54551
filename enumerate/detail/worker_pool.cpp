#include "enumerate/detail/worker_pool.hpp"

#include "enumerate/detail/worker_thread.hpp"

#include <chrono>

namespace pleat::detail {
namespace {

thread_local WorkerPool* innermost_pool = nullptr;

// How long a helper keeps looking for the next job before it sleeps: certify's
// loops after the walk follow each other within a few hundred microseconds, and a
// sleeping helper takes tens of microseconds (more in a virtual machine) to wake.
constexpr std::chrono::microseconds spin_time{300};

}  // namespace

WorkerPool::WorkerPool(unsigned helpers) {
  threads_.reserve(helpers);
  for (unsigned t = 0; t < helpers; ++t) threads_.push_back(start_worker_thread([this] { serve(); }, t));
}

WorkerPool::~WorkerPool() {
  {
    const std::lock_guard lock(mutex_);
    stopping_ = true;
    generation_.fetch_add(1);
  }
  wake_.notify_all();
  for (std::thread& thread : threads_) thread.join();
}

void WorkerPool::run(unsigned helpers, const std::function<void()>& job) {
  {
    std::unique_lock lock(mutex_);
    if (busy_ || helpers == 0 || threads_.empty()) {
      lock.unlock();
      job();
      return;
    }
    busy_ = true;
    job_ = &job;
    wanted_ = helpers;
    generation_.fetch_add(1);
  }
  wake_.notify_all();
  job();
  std::unique_lock lock(mutex_);
  job_ = nullptr;  // closed: no helper joins from now on
  wanted_ = 0;
  finished_.wait(lock, [&] { return running_ == 0; });
  busy_ = false;
}

void WorkerPool::serve() {
  // From the pool's first generation, not the current one: a helper that
  // starts late must still see the jobs and the stop offered before.
  std::size_t seen = 0;
  for (;;) {
    // Spin a little, then sleep until the generation moves.
    const auto spin_end = std::chrono::steady_clock::now() + spin_time;
    while (generation_.load(std::memory_order_acquire) == seen && std::chrono::steady_clock::now() < spin_end)
      std::this_thread::yield();
    std::unique_lock lock(mutex_);
    wake_.wait(lock, [&] { return generation_.load() != seen; });
    seen = generation_.load();
    if (stopping_) return;
    if (job_ == nullptr || wanted_ == 0) continue;
    const std::function<void()>& job = *job_;
    --wanted_;
    ++running_;
    lock.unlock();
    job();
    lock.lock();
    if (--running_ == 0) finished_.notify_all();
  }
}

WorkerPoolScope::WorkerPoolScope(WorkerPool* pool) : previous_(innermost_pool) { innermost_pool = pool; }

WorkerPoolScope::~WorkerPoolScope() { innermost_pool = previous_; }

WorkerPool* current_worker_pool() { return innermost_pool; }

}  // namespace pleat::detail
