#include "enumerate/detail/prefix_pool.hpp"

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
                     const std::function<void(std::size_t finished)>& on_tick) {
  using clock = std::chrono::steady_clock;
  PrefixRun run;
  auto last_tick = clock::now();
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

PrefixRun run_prefix_pool(std::size_t count, std::size_t workers, const StopRequest& stop,
                          const std::function<void(std::size_t worker, std::size_t item)>& process,
                          const std::function<void(std::size_t finished)>& on_tick,
                          const std::function<bool(std::size_t item)>& consume) {
  PrefixRun run;
  if (count == 0) return run;
  if (std::min(workers, count) <= 1) return run_inline(count, stop, process, on_tick);  // consume: left to the caller
  std::vector<std::atomic<bool>> done(count);
  std::atomic<std::size_t> next{0};
  std::atomic<std::size_t> finished{0};
  std::atomic<bool> halt{false};
  std::mutex error_mutex;
  std::exception_ptr error;
  std::mutex wake_mutex;
  std::condition_variable wake;
  std::atomic<int> stopped_inside{static_cast<int>(StopReason::none)};
  std::mutex consume_mutex;
  std::atomic<std::size_t> consumed{0};
  std::atomic<bool> consumer_halted{false};
  // Consumes the done items in order unless another thread is doing so. That
  // thread re-checks after letting go, so an item finished meanwhile (whose
  // thread found the role taken) is not left waiting.
  const StopRequest never;
  auto consume_ready = [&] {
    const auto is_next_ready = [&] {
      const std::size_t k = consumed;
      return !consumer_halted && k < count && done[k];
    };
    while (is_next_ready()) {
      const std::unique_lock lock(consume_mutex, std::try_to_lock);
      if (!lock.owns_lock()) return;
      const StopScope unstoppable(never);  // consume has no partial result to abandon
      while (is_next_ready()) {
        const std::size_t k = consumed;
        const bool is_going_on = consume(k);
        consumed = k + 1;
        if (!is_going_on) {
          consumer_halted = true;
          halt = true;
        }
      }
    }
  };
  auto work = [&](std::size_t worker) {
    try {
      const StopScope scope(stop);
      for (std::size_t i; !halt && (i = next++) < count;) {
        process(worker, i);
        done[i] = true;
        ++finished;
        if (consume) consume_ready();
      }
    } catch (const Stopped& stopped) {  // mid-item: that item stays undone
      stopped_inside = static_cast<int>(stopped.reason());
      halt = true;
    } catch (...) {
      const std::lock_guard lock(error_mutex);
      if (!error) error = std::current_exception();
      halt = true;
    }
    const std::lock_guard lock(wake_mutex);
    wake.notify_all();
  };
  std::vector<std::thread> pool;
  const std::size_t threads = std::max<std::size_t>(1, std::min(workers, count));
  for (std::size_t t = 0; t < threads; ++t) pool.emplace_back(work, t);
  {
    // Wake when every item is done, or every 0.2 s to report and check limits.
    std::unique_lock lock(wake_mutex);
    while (!wake.wait_for(lock, std::chrono::milliseconds(200), [&] { return finished == count || halt; })) {
      if (const StopReason reason = stop.reason(); reason != StopReason::none) {
        run.stopped = reason;
        halt = true;
      }
      if (on_tick) on_tick(finished);
    }
  }
  for (auto& thread : pool) thread.join();
  if (error) std::rethrow_exception(error);
  if (run.stopped == StopReason::none) run.stopped = static_cast<StopReason>(stopped_inside.load());
  while (run.prefix < count && done[run.prefix]) ++run.prefix;
  run.consumed = consumed;
  return run;
}

}  // namespace pleat::detail
