// certify_functional_dimension across ranks (enumerate/distributed_certify),
// the ranks as threads of one process: the same result as alone for 1 to 4
// ranks (the rows kept, the kernel, the value), whether the walk runs to its
// end, stops early at the scaling bound, or starts from the rows of points;
// and a candidate that one rank alone rejects is not certified. The MPI run
// is tested end to end (tests/mpi/certify_test.sh).
#include "enumerate/distributed_certify.hpp"

#include "core/random_network.hpp"
#include "enumerate/functional_dimension.hpp"
#include "tests/support/thread_transport.hpp"

#include <gtest/gtest.h>

#include <optional>
#include <thread>

namespace pleat {
namespace {

using test::Board;
using test::ThreadTransport;

Domain unit_box(std::size_t dim) { return make_box(RationalVector(dim, Rational(-1)), RationalVector(dim, Rational(1))); }

FunctionalDimensionOptions certify_options(bool stop_at_scaling_bound, bool points_first) {
  FunctionalDimensionOptions options;
  options.walk.threads = 2;
  options.stop_at_scaling_bound = stop_at_scaling_bound;
  options.points_first = points_first;
  options.keep_rows = true;
  options.keep_kernel = true;
  return options;
}

// Rank 0 certifies on this thread; ranks 1.. follow on their own threads.
// altered_rank: that rank checks a wrong candidate (the test hook).
FunctionalDimensionResult certify_across(std::size_t ranks, const Network& network, const Domain& domain,
                                         FunctionalDimensionOptions options,
                                         std::optional<std::size_t> altered_rank = std::nullopt) {
  Board board(ranks);
  std::vector<std::thread> followers;
  for (std::size_t r = 1; r < ranks; ++r)
    followers.emplace_back([&, r] {
      ThreadTransport transport(board, r);
      const auto work = certify_follower_work(network, nullptr, CertifyFollowerOptions{altered_rank == r});
      follow_distributed_walks(network, domain, transport, nullptr, work.get());
    });
  ThreadTransport leader(board, 0);
  const auto across = lead_certify_across(leader, 0);
  options.across = across.get();
  FunctionalDimensionResult result = certify_functional_dimension(network, domain, options);
  finish_distributed_walks(leader);
  for (auto& thread : followers) thread.join();
  return result;
}

void expect_same_result(const FunctionalDimensionResult& alone, const FunctionalDimensionResult& across) {
  EXPECT_EQ(alone.functional_dimension, across.functional_dimension);
  EXPECT_EQ(alone.lower_bound, across.lower_bound);
  EXPECT_EQ(alone.upper_bound, across.upper_bound);
  EXPECT_EQ(alone.certified, across.certified);
  EXPECT_EQ(alone.early_stop, across.early_stop);
  EXPECT_EQ(alone.certified_by_points, across.certified_by_points);
  EXPECT_EQ(alone.stop_reason, across.stop_reason);
  EXPECT_EQ(alone.regions_walked, across.regions_walked);
  EXPECT_EQ(alone.regions_contributing, across.regions_contributing);
  EXPECT_EQ(alone.walk_complete, across.walk_complete);
  EXPECT_EQ(alone.walk.regions, across.walk.regions);
  EXPECT_EQ(alone.points_drawn, across.points_drawn);
  EXPECT_EQ(alone.rows, across.rows);  // the same rows kept, in the same order
  EXPECT_EQ(alone.kernel, across.kernel);
  ASSERT_EQ(alone.extra_kernel.size(), across.extra_kernel.size());
  for (std::size_t i = 0; i < alone.extra_kernel.size(); ++i) {
    EXPECT_EQ(alone.extra_kernel[i].dense(), across.extra_kernel[i].dense());
    EXPECT_EQ(alone.extra_kernel[i].mechanism, across.extra_kernel[i].mechanism);
  }
}

TEST(DistributedCertify, TheFullWalkGivesTheSameRowsKernelAndValueForOneToFourRanks) {
  // Below the scaling bound (values from pleat certify --full-walk alone):
  // the extra directions are proved by every rank's check.
  for (const auto& [architecture, seed] :
       std::vector<std::pair<std::vector<std::size_t>, std::uint64_t>>{{{2, 3, 3, 3, 1}, 1}, {{2, 5, 4, 1}, 2}}) {
    const Network network = random_network(architecture, seed);
    const Domain domain = unit_box(architecture[0]);
    const FunctionalDimensionResult alone = certify_functional_dimension(network, domain, certify_options(false, false));
    ASSERT_TRUE(alone.certified);
    ASSERT_FALSE(alone.extra_kernel.empty());
    for (std::size_t ranks = 1; ranks <= 4; ++ranks) {
      SCOPED_TRACE("seed " + std::to_string(seed) + ", ranks " + std::to_string(ranks));
      expect_same_result(alone, certify_across(ranks, network, domain, certify_options(false, false)));
    }
  }
}

TEST(DistributedCertify, AnEarlyStopAtTheScalingBoundStopsAtTheSameRegion) {
  // At the scaling bound on the whole plane (35, pleat certify alone).
  const Network network = random_network({2, 5, 4, 1}, 1);
  const Domain domain = make_whole_space(2);
  const FunctionalDimensionResult alone = certify_functional_dimension(network, domain, certify_options(true, false));
  ASSERT_TRUE(alone.early_stop);
  ASSERT_GT(alone.regions_walked, 1u);
  for (std::size_t ranks : {2u, 3u}) {
    SCOPED_TRACE("ranks " + std::to_string(ranks));
    expect_same_result(alone, certify_across(ranks, network, domain, certify_options(true, false)));
  }
}

TEST(DistributedCertify, AWalkAfterPointsStartsFromTheirRowsOnEveryRank) {
  // Below the bound: the points stall, then the walk adds the rows the
  // points did not reach; each rank starts from the points' rows.
  const Network network = random_network({2, 3, 3, 3, 1}, 1);
  const Domain domain = unit_box(2);
  const FunctionalDimensionResult alone = certify_functional_dimension(network, domain, certify_options(true, true));
  ASSERT_FALSE(alone.witness_points.empty());
  ASSERT_GT(alone.regions_walked, 0u);
  ASSERT_TRUE(alone.certified);
  for (std::size_t ranks : {2u, 4u}) {
    SCOPED_TRACE("ranks " + std::to_string(ranks));
    const FunctionalDimensionResult across = certify_across(ranks, network, domain, certify_options(true, true));
    expect_same_result(alone, across);
    EXPECT_EQ(alone.witness_points, across.witness_points);
  }
}

TEST(DistributedCertify, ACandidateOneRankRejectsIsNotCertified) {
  const Network network = random_network({2, 3, 3, 3, 1}, 1);
  const Domain domain = unit_box(2);
  const FunctionalDimensionResult alone = certify_functional_dimension(network, domain, certify_options(false, false));
  ASSERT_TRUE(alone.certified);
  ASSERT_LT(alone.upper_bound, alone.scaling_bound);  // an extra kernel was proved
  for (std::size_t altered : {1u, 2u}) {
    SCOPED_TRACE("rank " + std::to_string(altered) + " of 3 checks a wrong candidate");
    const FunctionalDimensionResult across = certify_across(3, network, domain, certify_options(false, false), altered);
    EXPECT_FALSE(across.certified);
    EXPECT_FALSE(across.functional_dimension.has_value());
    EXPECT_EQ(across.lower_bound, alone.lower_bound);         // still proved
    EXPECT_EQ(across.upper_bound, across.scaling_bound);      // the extra directions were not
    EXPECT_TRUE(across.extra_kernel.empty());
  }
  // The hook on a rank that does not exist changes nothing.
  expect_same_result(alone, certify_across(2, network, domain, certify_options(false, false), 5));
}

TEST(DistributedCertify, AnInterruptBeforeTheCheckLeavesBounds) {
  const Network network = random_network({2, 5, 4, 1}, 2);
  std::atomic<bool> interrupted{true};
  FunctionalDimensionOptions options = certify_options(false, false);
  options.walk.interrupt = &interrupted;
  const FunctionalDimensionResult across = certify_across(3, network, unit_box(2), options);
  EXPECT_FALSE(across.certified);
  EXPECT_EQ(across.stop_reason, StopReason::interrupted);
}

}  // namespace
}  // namespace pleat
