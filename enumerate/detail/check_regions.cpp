// The kernel check's loop over regions (first_rejected_pattern, declared in
// kernel_check.hpp): in the patterns' lexicographic order, in runs per
// thread, on the certify call's worker pool when there is one.
#include "enumerate/detail/kernel_check.hpp"

#include "enumerate/detail/worker_pool.hpp"
#include "enumerate/detail/worker_thread.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <thread>

namespace pleat::detail {

std::optional<std::size_t> first_rejected_pattern(const AnnihilationCheck& check,
                                                  const std::vector<ActivationPattern>& patterns, unsigned threads,
                                                  const StopRequest& stop, bool& stopped,
                                                  const std::function<void(std::size_t, std::size_t)>& progress) {
  std::vector<std::size_t> order(patterns.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return states_before(patterns[a], patterns[b]); });
  constexpr std::size_t run = 16;  // consecutive patterns per thread
  std::atomic<std::size_t> next{0}, done{0};
  std::atomic<std::size_t> first_rejected{patterns.size()};
  std::atomic<bool> halt{false};
  std::mutex error_mutex;
  std::exception_ptr error;
  auto work = [&](bool reports) {
    const StopScope scope(stop);  // annihilates() polls it inside one pattern
    try {
      for (std::size_t start; !halt && (start = next.fetch_add(run)) < patterns.size();)
        for (std::size_t position = start; position < std::min(start + run, patterns.size()) && !halt; ++position) {
          const std::size_t i = order[position];
          if (i > first_rejected.load()) continue;  // a smaller index already failed
          if (stop.is_requested()) {
            halt = true;
            break;
          }
          if (!check.annihilates(patterns[i])) {
            std::size_t current = first_rejected.load();
            while (i < current && !first_rejected.compare_exchange_weak(current, i)) {
            }
          }
          ++done;
          if (reports && progress) progress(done.load(), patterns.size());
        }
    } catch (...) {
      const std::lock_guard lock(error_mutex);
      if (!error) error = std::current_exception();
      halt = true;
    }
  };
  threads = static_cast<unsigned>(std::max<std::size_t>(1, std::min<std::size_t>(threads, patterns.size())));
  // On the current worker pool's threads when there is one (a wake-up, not
  // a thread start), else on threads started here; the caller reports.
  if (WorkerPool* lent = current_worker_pool(); lent && threads > 1) {
    const std::thread::id caller = std::this_thread::get_id();
    lent->run(threads - 1, [&] { work(std::this_thread::get_id() == caller); });
  } else {
    std::vector<std::thread> pool;
    for (unsigned t = 1; t < threads; ++t) pool.push_back(start_worker_thread([&] { work(false); }, t - 1));
    work(true);
    for (auto& thread : pool) thread.join();
  }
  if (error) std::rethrow_exception(error);
  if (halt && stop.is_requested()) {
    stopped = true;
    return std::nullopt;
  }
  if (first_rejected.load() < patterns.size()) return first_rejected.load();
  return std::nullopt;
}

}  // namespace pleat::detail
