#include "enumerate/detail/worker_thread.hpp"

#include <atomic>
#include <memory>
#include <utility>
#include <vector>

#ifdef __linux__
#include <pthread.h>
#include <sched.h>
#endif

namespace pleat::detail {

std::thread start_worker_thread(std::function<void()> body, std::size_t index) {
#ifdef __linux__
  cpu_set_t allowed;
  CPU_ZERO(&allowed);
  const int here = sched_getcpu();
  std::vector<int> others;
  if (here >= 0 && sched_getaffinity(0, sizeof allowed, &allowed) == 0)
    for (int cpu = 0; cpu < CPU_SETSIZE; ++cpu)
      if (cpu != here && CPU_ISSET(cpu, &allowed)) others.push_back(cpu);
  if (!others.empty()) {
    // The thread waits until it is placed, then takes back the whole set:
    // only where it starts is chosen.
    auto placed = std::make_shared<std::atomic<bool>>(false);
    std::thread thread([body = std::move(body), placed, allowed] {
      while (!placed->load(std::memory_order_acquire)) std::this_thread::yield();
      sched_setaffinity(0, sizeof allowed, &allowed);
      body();
    });
    cpu_set_t target;
    CPU_ZERO(&target);
    CPU_SET(others[index % others.size()], &target);
    pthread_setaffinity_np(thread.native_handle(), sizeof target, &target);  // on failure: where it was put
    placed->store(true, std::memory_order_release);
    return thread;
  }
#else
  (void)index;
#endif
  return std::thread(std::move(body));
}

}  // namespace pleat::detail
