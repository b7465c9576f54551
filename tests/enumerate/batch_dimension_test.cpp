// The batch functional dimension (enumerate/batch_dimension.hpp) against
// the plain definition: rank_exact of the exact Jacobians stacked at every
// point, and of the coefficient blocks of every point's region; and a stop at
// any moment leaves bounds that contain those values.
#include "enumerate/batch_dimension.hpp"

#include "core/jacobian.hpp"
#include "core/network_io.hpp"
#include "core/random_network.hpp"
#include "core/rank.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <map>
#include <random>
#include <set>
#include <string>
#include <vector>

namespace pleat {
namespace {

std::string place(std::size_t i) { return "point " + std::to_string(i); }

// Points with coordinates k/8 + small odd offsets/1009, k in [-16, 16]:
// many share a region, none on a bent hyperplane in practice (a point
// that is: the test asks for the next).
std::vector<RationalVector> points_in_box(const Network& network, std::size_t count, std::uint64_t seed) {
  std::mt19937_64 random(seed);
  std::vector<RationalVector> points;
  while (points.size() < count) {
    RationalVector x;
    for (std::size_t i = 0; i < network.input_dim; ++i)
      x.push_back(Rational(static_cast<long>(random() % 33) - 16, 8) + Rational(static_cast<long>(random() % 50) * 2 + 1, 1009));
    if (region_pattern_at(network, x) && nonsmooth_neurons(network, *region_pattern_at(network, x)).empty())
      points.push_back(x);
  }
  return points;
}

std::size_t stacked_jacobian_rank(const Network& network, const std::vector<RationalVector>& points) {
  RationalMatrix rows(0, network.parametric_dimension());
  for (const RationalVector& x : points) {
    const RationalMatrix jacobian = parameter_jacobian_exact(network, x);
    for (std::size_t r = 0; r < jacobian.rows(); ++r) rows.append_row(jacobian.row(r));
  }
  return rank_exact(rows);
}

std::size_t stacked_block_rank(const Network& network, const std::vector<RationalVector>& points) {
  std::set<ActivationPattern> patterns;
  for (const RationalVector& x : points) patterns.insert(*region_pattern_at(network, x));
  RationalMatrix rows(0, network.parametric_dimension());
  for (const ActivationPattern& pattern : patterns) {
    const RationalMatrix blocks = coefficient_blocks(network, pattern);
    for (std::size_t r = 0; r < blocks.rows(); ++r) rows.append_row(blocks.row(r));
  }
  return rank_exact(rows);
}

struct Case {
  std::vector<std::size_t> architecture;
  std::uint64_t seed;
  std::size_t points;
};

// Few points (most regions hold one or two: their rows are checked one by
// one, or, few rows being dependent, each dependent row is proved a
// combination of the kept ones: the regions' rank of seeds 5 and 7, the
// batch rank of seed 9) and many (regions spanned: their blocks are
// checked), one and two outputs, 1 to 3 inputs.
const std::vector<Case> cases = {{{2, 6, 5, 1}, 1, 12},  {{2, 6, 5, 1}, 1, 300},   {{1, 5, 4, 1}, 2, 40},
                                 {{3, 5, 4, 2}, 3, 25},  {{3, 5, 4, 2}, 3, 200},   {{2, 4, 4, 4, 1}, 4, 150},
                                 {{2, 8, 8, 1}, 5, 40},  {{2, 10, 10, 1}, 7, 30}, {{3, 8, 8, 1}, 9, 100}};

TEST(BatchDimension, EqualsTheRanksOfTheStackedRows) {
  for (const Case& c : cases) {
    const Network network = random_network(c.architecture, c.seed);
    const std::vector<RationalVector> points = points_in_box(network, c.points, c.seed);
    const BatchDimension batch =
        batch_dimension(network, make_whole_space(network.input_dim), points, place, StopRequest());
    SCOPED_TRACE("architecture seed " + std::to_string(c.seed) + ", " + std::to_string(c.points) + " points");
    EXPECT_EQ(batch.stop_reason, StopReason::none);
    EXPECT_EQ(batch.points_checked, points.size());
    ASSERT_TRUE(batch.batch.is_exact());
    ASSERT_TRUE(batch.regions.is_exact());
    EXPECT_EQ(batch.batch.lower, stacked_jacobian_rank(network, points));
    EXPECT_EQ(batch.regions.lower, stacked_block_rank(network, points));
  }
}

// A stop after the k-th progress call of a phase: the bounds contain the
// exact values, and a stop while deciding the points says how far it got.
TEST(BatchDimension, AStopAnywhereLeavesBoundsThatContainTheValue) {
  std::map<std::string, std::size_t> stops;  // per phase
  for (const Case& c : cases) {
    const Network network = random_network(c.architecture, c.seed);
    const std::vector<RationalVector> points = points_in_box(network, c.points, c.seed);
    const std::size_t batch_rank = stacked_jacobian_rank(network, points);
    const std::size_t regions_rank = stacked_block_rank(network, points);
    for (const std::string phase : {"points", "pivots", "regions", "batch"})
      for (std::size_t k = 0; k < 3; ++k) {
        std::atomic<bool> interrupt{false};
        std::size_t calls = 0;
        const BatchDimension batch = batch_dimension(
            network, make_whole_space(network.input_dim), points, place, StopRequest(&interrupt, 0), 1,
            [&](const char* now, std::size_t, std::size_t) {
              if (phase == now && calls++ == k) interrupt = true;
            });
        SCOPED_TRACE("seed " + std::to_string(c.seed) + ", stop in " + phase + " at call " + std::to_string(k));
        EXPECT_LE(batch.batch.lower, batch_rank);
        EXPECT_GE(batch.batch.upper, batch_rank);
        EXPECT_LE(batch.regions.lower, regions_rank);
        EXPECT_GE(batch.regions.upper, regions_rank);
        EXPECT_LE(batch.batch.upper, network.parametric_dimension());
        if (batch.stop_reason == StopReason::none) continue;  // the phase ended before call k
        EXPECT_EQ(batch.stop_reason, StopReason::interrupted);
        ++stops[phase];
        if (phase == "points") {
          EXPECT_LT(batch.points_checked, points.size());
        }
      }
  }
  for (const std::string phase : {"points", "pivots", "regions", "batch"}) EXPECT_GT(stops[phase], 0u) << phase;
}

TEST(BatchDimension, Ramp1dIs11AndAPointOnABendIsNamed) {
  // ramp1d (data/README.md): 5 neurons with distinct bends on the line. One
  // point per interval between the bends -1/2, -1/3, 3/8, 2/3, 25/6 and a
  // second point in each: 12 points, batch value 11 (2 x 5 + 1).
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/ramp1d.json");
  std::vector<RationalVector> points;
  for (const char* text : {"-1", "-2", "-5/12", "-9/20", "0", "1/10", "1/2", "3/5", "1", "4", "5", "10"})
    points.push_back({parse_rational(text)});
  const Domain line = make_whole_space(1);
  EXPECT_EQ(batch_dimension(network, line, points, place, StopRequest()).batch.value(), 11u);
  points.resize(2);  // both in x < -1/2: one region, 2 rows
  const BatchDimension two = batch_dimension(network, line, points, place, StopRequest());
  EXPECT_EQ(two.batch.value(), 2u);
  EXPECT_EQ(two.regions_touched, 1u);
  points.push_back({Rational(3, 8)});  // neuron 1's bend
  try {
    (void)batch_dimension(network, line, points, place, StopRequest());
    FAIL() << "a point on a bent hyperplane was accepted";
  } catch (const input_error& fault) {
    const std::string message = fault.what();
    EXPECT_NE(message.find("point 2"), std::string::npos) << message;
    EXPECT_NE(message.find("neuron 1"), std::string::npos) << message;
  }
}

// A time limit already spent: nothing decided, bounds [0, the scaling bound].
TEST(BatchDimension, ASpentTimeLimitStopsBeforeTheFirstPoint) {
  const Network network = random_network({2, 6, 5, 1}, 1);
  const std::vector<RationalVector> points = points_in_box(network, 20, 1);
  const StopRequest spent(nullptr, 1e-9, StopRequest::Clock::now() - std::chrono::seconds(1));
  const BatchDimension batch = batch_dimension(network, make_whole_space(2), points, place, spent);
  EXPECT_EQ(batch.stop_reason, StopReason::time_limit);
  EXPECT_EQ(batch.points_checked, 0u);
  EXPECT_EQ(batch.batch.lower, 0u);
  EXPECT_EQ(batch.batch.upper, std::min<std::size_t>(scaling_bound(network), 20));  // 20 points, 1 output
  EXPECT_FALSE(batch.batch.value());
}

}  // namespace
}  // namespace pleat
