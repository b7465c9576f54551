#include "enumerate/detail/worker_pool.hpp"

#include "enumerate/detail/worker_thread.hpp"

#include <chrono>
#include <exception>

namespace pleat::detail {
namespace {

thread_local WorkerPool* innermost_pool = nullptr;

// How long a helper keeps looking for the next job before it sleeps: certify's
// loops after the walk follow each other within about a millisecond (serial
// eliminations between them), and a sleeping helper took 30-50 us to join a
// job (median; up to 0.8-3.8 ms) on our 2-core virtual machine, 0.4 us when
// spinning.
constexpr std::chrono::microseconds spin_time{2000};
// Of which the first part pausing, keeping the core (relax_processor), then
// yielding: the gaps between certify's loops are mostly under this.
constexpr std::chrono::microseconds pause_time{500};

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
  std::exception_ptr error;
  try {
    job();
  } catch (...) {  // closed and waited for all the same: the helpers hold a reference to job
    error = std::current_exception();
  }
  std::unique_lock lock(mutex_);
  job_ = nullptr;  // closed: no helper joins from now on
  wanted_ = 0;
  finished_.wait(lock, [&] { return running_ == 0; });
  busy_ = false;
  if (error) std::rethrow_exception(error);
}

void WorkerPool::rest() { is_resting_.store(true); }

void WorkerPool::wake() {
  is_resting_.store(false);
  {
    const std::lock_guard lock(mutex_);
    generation_.fetch_add(1);  // no job: the helpers wake, then spin for the next
  }
  wake_.notify_all();
}

void WorkerPool::serve() {
  // From the pool's first generation, not the current one: a helper that
  // starts late must still see the jobs and the stop offered before.
  std::size_t seen = 0;
  bool spins = false;  // not when just started: certify's walk starts now
  for (;;) {
    if (spins)  // a little while for the next job, then sleep until it comes
      spin_while(
          [&] {
            return generation_.load(std::memory_order_acquire) == seen && !is_resting_.load(std::memory_order_relaxed);
          },
          pause_time, spin_time);
    std::unique_lock lock(mutex_);
    wake_.wait(lock, [&] { return generation_.load() != seen; });
    seen = generation_.load();
    if (stopping_) return;
    spins = !is_resting_.load();
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
