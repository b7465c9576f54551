// detail::start_worker_thread: the thread runs its body, and only its first
// processor is chosen: inside the body it may run on every processor its
// parent may (a thread left pinned would stay on one core however busy).
#include "enumerate/detail/worker_thread.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <vector>

#ifdef __linux__
#include <sched.h>
#endif

namespace pleat {
namespace {

TEST(WorkerThread, RunsItsBodyFreeToMove) {
#ifdef __linux__
  cpu_set_t parent;
  ASSERT_EQ(sched_getaffinity(0, sizeof parent, &parent), 0);
#endif
  for (std::size_t index = 0; index < 4; ++index) {
    std::atomic<int> runs{0};
    bool is_same_set = true;
    std::thread thread = detail::start_worker_thread(
        [&] {
          ++runs;
#ifdef __linux__
          cpu_set_t own;
          is_same_set = sched_getaffinity(0, sizeof own, &own) == 0 && CPU_EQUAL(&own, &parent);
#endif
        },
        index);
    thread.join();
    EXPECT_EQ(runs.load(), 1);
    EXPECT_TRUE(is_same_set) << "index " << index;
  }
}

}  // namespace
}  // namespace pleat
