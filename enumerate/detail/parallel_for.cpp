#include "enumerate/detail/parallel_for.hpp"

#include "core/stop.hpp"
#include "enumerate/detail/worker_pool.hpp"
#include "enumerate/detail/worker_thread.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <optional>
#include <thread>
#include <vector>

namespace pleat::detail {

void parallel_for(std::size_t count, unsigned threads, const std::function<void(std::size_t)>& work) {
  std::atomic<std::size_t> next{0};
  std::mutex error_mutex;
  std::exception_ptr error;
  const StopRequest* stop = current_stop_request();
  auto run = [&] {
    std::optional<StopScope> scope;
    if (stop) scope.emplace(*stop);
    try {
      for (std::size_t i; (i = next++) < count;) work(i);
    } catch (...) {
      const std::lock_guard lock(error_mutex);
      if (!error) error = std::current_exception();
      next = count;
    }
  };
  threads = static_cast<unsigned>(std::max<std::size_t>(1, std::min<std::size_t>(threads, count)));
  if (WorkerPool* lent = current_worker_pool(); lent && threads > 1) {
    lent->run(threads - 1, run);
    if (error) std::rethrow_exception(error);
    return;
  }
  std::vector<std::thread> pool;
  for (unsigned t = 1; t < threads; ++t) pool.push_back(start_worker_thread(run, t - 1));
  run();
  for (auto& thread : pool) thread.join();
  if (error) std::rethrow_exception(error);
}

LoopThreads::LoopThreads(unsigned threads)
    : pool_(threads > 1 ? std::make_unique<WorkerPool>(threads - 1) : nullptr),
      scope_(pool_ ? std::make_unique<WorkerPoolScope>(pool_.get()) : nullptr) {}

LoopThreads::~LoopThreads() {
  scope_.reset();  // the scope before the pool it lends
  pool_.reset();
}

}  // namespace pleat::detail
