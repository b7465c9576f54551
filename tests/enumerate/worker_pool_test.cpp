// detail::WorkerPool: a job runs on the caller and on the helpers that join
// it, a job offered to a busy pool runs on its caller alone, and parallel_for
// and first_rejected_pattern lent a pool give what they give on threads of
// their own: every index once, the first exception, and the same first
// rejected region as exact products with coefficient_blocks.
#include "enumerate/detail/worker_pool.hpp"

#include "core/jacobian.hpp"
#include "core/random_network.hpp"
#include "enumerate/detail/kernel_check.hpp"
#include "enumerate/detail/parallel_for.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <mutex>
#include <optional>
#include <set>
#include <stdexcept>
#include <thread>
#include <vector>

namespace pleat {
namespace {

// A job that waits (at most 10 s) until `threads` threads are inside it.
// Helpers join only while the caller's own job runs, so the waiting caller
// keeps the job open for them.
std::set<std::thread::id> threads_meeting_in(detail::WorkerPool& pool, unsigned helpers, unsigned threads) {
  std::mutex mutex;
  std::set<std::thread::id> seen;
  std::atomic<unsigned> inside{0};
  pool.run(helpers, [&] {
    {
      const std::lock_guard lock(mutex);
      seen.insert(std::this_thread::get_id());
    }
    ++inside;
    const auto give_up = std::chrono::steady_clock::now() + std::chrono::seconds(10);
    while (inside.load() < threads && std::chrono::steady_clock::now() < give_up) std::this_thread::yield();
  });
  return seen;
}

TEST(WorkerPool, RunsAJobOnTheCallerAndItsHelpers) {
  detail::WorkerPool pool(2);
  EXPECT_EQ(pool.helpers(), 2u);
  for (int round = 0; round < 20; ++round) {  // helpers asleep and helpers still spinning
    const std::set<std::thread::id> seen = threads_meeting_in(pool, 2, 3);
    EXPECT_EQ(seen.size(), 3u) << "round " << round;
    EXPECT_TRUE(seen.contains(std::this_thread::get_id()));
    if (round % 5 == 4) std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
  // At most the helpers asked for: one helper, two threads in all.
  EXPECT_EQ(threads_meeting_in(pool, 1, 2).size(), 2u);
}

// Resting only changes what helpers do between jobs: a resting pool's
// helpers still join a job, and a woken one's too; RestingWorkerPool rests
// the current pool while it lives.
TEST(WorkerPool, ARestingPoolStillRunsJobsOnItsHelpers) {
  detail::WorkerPool pool(1);
  pool.rest();
  EXPECT_TRUE(pool.is_resting());
  for (int round = 0; round < 5; ++round) EXPECT_EQ(threads_meeting_in(pool, 1, 2).size(), 2u);
  pool.wake();
  EXPECT_FALSE(pool.is_resting());
  for (int round = 0; round < 5; ++round) EXPECT_EQ(threads_meeting_in(pool, 1, 2).size(), 2u);
  {
    const detail::RestingWorkerPool no_pool;  // no current pool: nothing to rest
  }
  const detail::WorkerPoolScope scope(&pool);
  {
    const detail::RestingWorkerPool resting;
    EXPECT_TRUE(pool.is_resting());
    EXPECT_EQ(threads_meeting_in(pool, 1, 2).size(), 2u);
  }
  EXPECT_FALSE(pool.is_resting());
}

TEST(WorkerPool, AJobOfferedToABusyPoolRunsOnItsCaller) {
  detail::WorkerPool pool(1);
  std::atomic<int> inner_runs{0};
  std::set<std::thread::id> inner_threads;
  std::mutex mutex;
  pool.run(1, [&] {
    // From the caller and from the helper (if it joins): the pool is busy.
    pool.run(1, [&] {
      ++inner_runs;
      const std::lock_guard lock(mutex);
      inner_threads.insert(std::this_thread::get_id());
    });
  });
  EXPECT_GE(inner_runs.load(), 1);
  EXPECT_LE(inner_runs.load(), 2);
  EXPECT_EQ(static_cast<int>(inner_threads.size()), inner_runs.load());  // each on its own caller
}

TEST(WorkerPool, ParallelForLentAPoolRunsEveryIndexOnceAndRethrows) {
  detail::WorkerPool pool(2);
  const detail::WorkerPoolScope scope(&pool);
  EXPECT_EQ(detail::current_worker_pool(), &pool);
  for (std::size_t count : {0u, 1u, 2u, 3u, 17u, 1000u})
    for (unsigned threads : {1u, 2u, 3u, 8u})
      for (int round = 0; round < 20; ++round) {
        std::vector<std::atomic<int>> runs(count);
        detail::parallel_for(count, threads, [&](std::size_t i) { ++runs[i]; });
        for (std::size_t i = 0; i < count; ++i) ASSERT_EQ(runs[i].load(), 1) << count << " " << threads << " " << i;
      }
  EXPECT_THROW(detail::parallel_for(100, 3,
                                    [](std::size_t i) {
                                      if (i == 57) throw std::runtime_error("57");
                                    }),
               std::runtime_error);
  // Still serving after the exception.
  std::atomic<std::size_t> sum{0};
  detail::parallel_for(100, 3, [&](std::size_t i) { sum += i; });
  EXPECT_EQ(sum.load(), 4950u);
  {
    const detail::WorkerPoolScope none(nullptr);  // scopes nest
    EXPECT_EQ(detail::current_worker_pool(), nullptr);
    std::atomic<std::size_t> count{0};
    detail::parallel_for(10, 2, [&](std::size_t) { ++count; });
    EXPECT_EQ(count.load(), 10u);
  }
  EXPECT_EQ(detail::current_worker_pool(), &pool);
}

TEST(WorkerPool, LoopThreadsLendAPoolWhileTheyLive) {
  EXPECT_EQ(detail::current_worker_pool(), nullptr);
  {
    const detail::LoopThreads one(1);  // no helpers: nothing to lend
    EXPECT_EQ(detail::current_worker_pool(), nullptr);
  }
  {
    const detail::LoopThreads three(3);
    detail::WorkerPool* lent = detail::current_worker_pool();
    ASSERT_NE(lent, nullptr);
    EXPECT_EQ(lent->helpers(), 2u);
    std::thread other([] { EXPECT_EQ(detail::current_worker_pool(), nullptr); });  // this thread's only
    other.join();
  }
  EXPECT_EQ(detail::current_worker_pool(), nullptr);
}

// The check on a pool's threads names the same first region as exact
// products with coefficient_blocks: a unit vector e_c is rejected on the
// first region whose blocks have a nonzero in column c.
TEST(WorkerPool, FirstRejectedPatternOnAPoolNamesTheExactProductsRegion) {
  const Network network = random_network({2, 5, 4, 1}, 7);
  std::vector<ActivationPattern> smooth;
  WalkOptions options;
  options.threads = 1;
  options.on_region = [&](const Region& region) {
    if (region.nonsmooth_neurons.empty()) smooth.push_back(region.pattern);
    return true;
  };
  ASSERT_TRUE(walk_regions(network, make_whole_space(network.input_dim), options).complete);
  ASSERT_GT(smooth.size(), 16u);  // more than one run of patterns per thread
  std::vector<RationalMatrix> blocks;
  for (const ActivationPattern& pattern : smooth) blocks.push_back(coefficient_blocks(network, pattern));
  const detail::CheckScale scale(network);
  detail::WorkerPool pool(2);
  const detail::WorkerPoolScope scope(&pool);
  std::size_t rejected = 0;
  for (std::size_t c = 0; c < network.parametric_dimension(); ++c) {
    std::optional<std::size_t> exact;
    for (std::size_t p = 0; p < blocks.size() && !exact; ++p)
      for (std::size_t r = 0; r < blocks[p].rows() && !exact; ++r)
        if (blocks[p](r, c) != 0) exact = p;
    detail::SparseRationalRows unit{network.parametric_dimension(), {{{c, Rational(1)}}}};
    const detail::AnnihilationCheck check(network, unit, scale, 3);
    for (unsigned threads : {2u, 3u}) {
      bool stopped = false;
      bool is_reported_here = true;
      const std::thread::id caller = std::this_thread::get_id();
      const auto first = detail::first_rejected_pattern(
          check, smooth, threads, StopRequest(), stopped,
          [&](std::size_t, std::size_t) { is_reported_here = is_reported_here && std::this_thread::get_id() == caller; });
      EXPECT_FALSE(stopped);
      EXPECT_EQ(first, exact) << "column " << c << ", " << threads << " threads";
      EXPECT_TRUE(is_reported_here);  // progress from the calling thread only
    }
    if (exact) ++rejected;
  }
  EXPECT_GT(rejected, 10u);
}

}  // namespace
}  // namespace pleat
