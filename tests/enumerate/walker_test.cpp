// The region walker against counts known from outside the project.
#include "enumerate/walker.hpp"

#include "core/errors.hpp"
#include "core/random_network.hpp"
#include "enumerate/pattern_cell.hpp"
#include "tests/support/network_builders.hpp"

#include <gtest/gtest.h>

#include <any>
#include <set>

namespace pleat {
namespace {

using test::make_layer;

// One hidden layer whose hyperplanes are (t, t^2, ..., t^n) . x + 1 = 0 for
// t = 1..m: points on the moment curve, so any n+1 of the augmented normals
// are independent (a Vandermonde determinant) and the arrangement is in
// general position.
Network moment_curve_network(std::size_t n, std::size_t m) {
  std::vector<RationalVector> rows;
  for (std::size_t t = 1; t <= m; ++t) {
    RationalVector row;
    Rational power = 1;
    for (std::size_t i = 0; i < n; ++i) row.push_back(power *= Rational(static_cast<long>(t)));
    rows.push_back(row);
  }
  Network network;
  network.input_dim = n;
  network.layers.push_back(make_layer(rows, RationalVector(m, Rational(1)), Activation::relu));
  network.layers.push_back(make_layer({RationalVector(m, Rational(1))}, {Rational(0)}, Activation::linear));
  return network;
}

std::size_t binomial(std::size_t n, std::size_t k) {
  if (k > n) return 0;
  std::size_t result = 1;
  for (std::size_t i = 1; i <= k; ++i) result = result * (n - k + i) / i;
  return result;
}

WalkSummary walk(const Network& network, const Domain& domain, unsigned threads = 1) {
  WalkOptions options;
  options.threads = threads;
  return walk_regions(network, domain, options);
}

// Zaslavsky's theorem (Buck's count for hyperplanes in general position):
// m hyperplanes in general position in R^n cut it into sum_{i=0}^{n} C(m,i)
// regions, C(m-1,n) of them bounded.
TEST(Walker, GeneralPositionArrangementsMatchZaslavskyCounts) {
  for (std::size_t n : {1u, 2u, 3u}) {
    for (std::size_t m : {1u, 3u, 5u, 7u}) {
      SCOPED_TRACE("n=" + std::to_string(n) + " m=" + std::to_string(m));
      const WalkSummary summary = walk(moment_curve_network(n, m), make_whole_space(n));
      std::size_t expected = 0;
      for (std::size_t i = 0; i <= n; ++i) expected += binomial(m, i);
      EXPECT_EQ(summary.regions, expected);
      EXPECT_EQ(summary.bounded_regions, binomial(m - 1, n));
      EXPECT_EQ(summary.linear_regions, expected);  // neighbours differ by one neuron's nonzero gradient
      EXPECT_TRUE(summary.complete);
      EXPECT_TRUE(summary.certified);
    }
  }
}

// The tent map t(x) = 2 relu(x) - 4 relu(x - 1/2) maps [0,1] onto itself;
// its L-fold composition has 2^L affine pieces on (0,1) (the standard
// depth-separation construction; value from memory, re-derived: each
// composition doubles the number of monotone pieces).
Network tent_network(std::size_t depth) {
  Network network;
  network.input_dim = 1;
  network.layers.push_back(make_layer({{Rational(1)}, {Rational(1)}}, {Rational(0), Rational(-1, 2)},
                                      Activation::relu));
  for (std::size_t k = 1; k < depth; ++k)
    network.layers.push_back(make_layer({{Rational(2), Rational(-4)}, {Rational(2), Rational(-4)}},
                                        {Rational(0), Rational(-1, 2)}, Activation::relu));
  network.layers.push_back(make_layer({{Rational(2), Rational(-4)}}, {Rational(0)}, Activation::linear));
  return network;
}

TEST(Walker, TentMapCompositionHasTwoToTheLPieces) {
  for (std::size_t depth = 1; depth <= 8; ++depth) {
    SCOPED_TRACE("L=" + std::to_string(depth));
    const WalkSummary summary = walk(tent_network(depth), make_box({Rational(0)}, {Rational(1)}));
    EXPECT_EQ(summary.regions, std::size_t{1} << depth);
    EXPECT_EQ(summary.linear_regions, std::size_t{1} << depth);
    EXPECT_EQ(summary.facets, (std::size_t{1} << depth) - 1);
    EXPECT_TRUE(summary.certified);
  }
}

TEST(Walker, OutputIsIdenticalForAnyThreadCount) {
  const Network network = moment_curve_network(2, 9);
  std::vector<std::string> one, two;
  for (auto [threads, sink] : {std::pair{1u, &one}, std::pair{2u, &two}}) {
    WalkOptions options;
    options.threads = threads;
    options.on_region = [&, sink = sink](const Region& region) {
      sink->push_back(std::to_string(region.id) + " " + format_pattern(network, region.pattern));
      return true;
    };
    walk_regions(network, make_whole_space(2), options);
  }
  EXPECT_EQ(one, two);
  EXPECT_EQ(one.size(), 1u + 9u + 36u);
}

// on_region run inside the pool (WalkOptions::on_region_in_pool), with each
// region's prepare_region result, delivers the same regions in the same order
// as on_region on the calling thread, for any thread count; a stop asked by
// on_region, and max_regions, cut the walk at the same region.
TEST(Walker, OnRegionInThePoolDeliversTheSameRegionsInOrder) {
  const Network network = random_network({2, 6, 6, 1}, 7);
  struct Delivered {
    std::vector<std::string> regions;
    WalkSummary summary;
  };
  auto run = [&](unsigned threads, bool in_pool, std::size_t stop_after, std::size_t max_regions) {
    Delivered out;
    WalkOptions options;
    options.threads = threads;
    options.max_regions = max_regions;
    options.on_region_in_pool = in_pool;
    if (in_pool)
      options.prepare_region = [&](const Region& region) -> std::any { return format_pattern(network, region.pattern); };
    options.on_region = [&](const Region& region) {
      std::string line = std::to_string(region.id) + " " + format_pattern(network, region.pattern);
      if (in_pool) {
        const auto* prepared = std::any_cast<std::string>(&region.prepared);
        EXPECT_TRUE(prepared != nullptr && *prepared == format_pattern(network, region.pattern));
      } else {
        EXPECT_FALSE(region.prepared.has_value());
      }
      out.regions.push_back(std::move(line));
      return out.regions.size() != stop_after;
    };
    out.summary = walk_regions(network, make_whole_space(2), options);
    return out;
  };
  for (auto [stop_after, max_regions] : {std::pair<std::size_t, std::size_t>{0, 0}, {17, 0}, {0, 23}}) {
    const Delivered reference = run(1, false, stop_after, max_regions);
    // Cut where asked (the whole walk has more regions than either cut).
    ASSERT_EQ(reference.regions.size(), stop_after ? stop_after : max_regions ? max_regions : reference.summary.regions);
    if (!stop_after && !max_regions) {
      ASSERT_GT(reference.summary.regions, 30u);
    }
    for (unsigned threads : {1u, 2u, 3u}) {
      const Delivered pooled = run(threads, true, stop_after, max_regions);
      EXPECT_EQ(pooled.regions, reference.regions) << threads << " threads";
      EXPECT_EQ(pooled.summary.regions, reference.summary.regions);
      EXPECT_EQ(pooled.summary.stop_reason, reference.summary.stop_reason);
      EXPECT_EQ(pooled.summary.certified, reference.summary.certified);
      EXPECT_EQ(pooled.summary.facets, reference.summary.facets);
      EXPECT_EQ(pooled.summary.patterns, reference.summary.patterns);
    }
  }
}

TEST(Walker, MaxRegionsStopsWithBoundsNotCertified) {
  WalkOptions options;
  options.max_regions = 5;
  const WalkSummary summary = walk_regions(moment_curve_network(2, 6), make_whole_space(2), options);
  EXPECT_EQ(summary.regions, 5u);
  EXPECT_FALSE(summary.complete);
  EXPECT_FALSE(summary.certified);
  EXPECT_EQ(summary.stop_reason, StopReason::max_regions);
}

TEST(Walker, EveryRegionPointHasItsPatternAndFacetsSeeNeighbors) {
  const Network network = moment_curve_network(2, 6);
  std::map<std::string, Region> regions;
  WalkOptions options;
  options.threads = 1;
  options.on_region = [&](const Region& region) {
    regions.emplace(format_pattern(network, region.pattern), region);
    return true;
  };
  walk_regions(network, make_whole_space(2), options);
  for (const auto& [name, region] : regions) {
    // The interior point's own pattern is the region's pattern (exact evaluation).
    auto at_point = region_pattern_at(network, region.interior.point);
    ASSERT_TRUE(at_point.has_value());
    EXPECT_EQ(*at_point, region.pattern);
    for (const auto& facet : region.facets) {
      ASSERT_TRUE(facet.neighbor.has_value());
      const auto& neighbor = regions.at(format_pattern(network, *facet.neighbor));
      // The neighbour lists this region back across one of its facets.
      bool mutual = false;
      for (const auto& back : neighbor.facets) mutual = mutual || (back.neighbor && *back.neighbor == region.pattern);
      EXPECT_TRUE(mutual);
      // The facet point lies on the facet's hyperplane.
      Rational value = facet.offset;
      for (std::size_t i = 0; i < 2; ++i) value += facet.normal[i] * facet.relative_interior.point[i];
      EXPECT_EQ(value, 0);
    }
  }
}

}  // namespace
}  // namespace pleat

namespace pleat {
namespace {

// Four lines through the origin: x = 0, y = 0, x = y, x = -y (eight sectors).
Network star_network() {
  Network network;
  network.input_dim = 2;
  network.layers.push_back(make_layer({{Rational(1), Rational(0)},
                                       {Rational(0), Rational(1)},
                                       {Rational(1), Rational(-1)},
                                       {Rational(1), Rational(1)}},
                                      RationalVector(4, Rational(0)), Activation::relu));
  network.layers.push_back(make_layer({RationalVector(4, Rational(1))}, {Rational(0)}, Activation::linear));
  return network;
}

// The centre of a tiny box lies on every line; the start point must be found
// inside the box whatever its size (it used to step out by 1/8 and give up).
TEST(Walker, TinyBoxCentredOnManyHyperplanesFindsEverySector) {
  for (const char* half_width : {"1/10000", "1/1000000000000000000000000000000"}) {
    SCOPED_TRACE(half_width);
    const Rational h(half_width);
    const WalkSummary summary = walk(star_network(), make_box({-h, -h}, {h, h}));
    EXPECT_TRUE(summary.certified);
    EXPECT_EQ(summary.regions, 8u);
  }
}

// The walk starts in the region of the first point tried that is off every
// bent hyperplane (decided in integers first): its exact pattern there. With a
// dead neuron (zero weights and bias) every point has a zero there, and the
// start takes the exact maps' path, which marks that neuron 'z' (a pattern
// with a zero at the point would not be a region). Fails if the integer path
// returned another pattern than region_pattern_at, or kept the zero.
TEST(Walker, StartPatternIsTheExactPatternOfTheFirstPointOffTheHyperplanes) {
  for (std::uint64_t seed : {1u, 2u, 3u}) {
    const Network network = random_network({2, 15, 15, 15, 1}, seed);  // biases nonzero: the origin is in a region
    const std::optional<ActivationPattern> at_centre = region_pattern_at(network, {Rational(0), Rational(0)});
    ASSERT_TRUE(at_centre.has_value());
    EXPECT_EQ(walk_start_pattern(network, make_whole_space(2)), *at_centre) << seed;
  }
  Network dead;
  dead.input_dim = 2;
  dead.layers.push_back(make_layer({{Rational(1), Rational(0)},
                                    {Rational(0), Rational(1)},
                                    {Rational(1), Rational(-1)},
                                    {Rational(1), Rational(1)},
                                    {Rational(0), Rational(0)}},  // neuron 4: zero weights, zero bias
                                   RationalVector(5, Rational(0)), Activation::relu));
  dead.layers.push_back(make_layer({RationalVector(5, Rational(1))}, {Rational(0)}, Activation::linear));
  const ActivationPattern start = walk_start_pattern(dead, make_whole_space(2));
  ASSERT_EQ(start.states.size(), 5u);
  EXPECT_EQ(start.states[4], NeuronState::zero_on_region);
  for (std::size_t i = 0; i < 4; ++i) EXPECT_NE(start.states[i], NeuronState::zero_at_point) << i;
  EXPECT_EQ(walk(dead, make_whole_space(2)).regions, 8u);
}

// A worker that processed no region (more threads than the walk ever had
// regions to share) counts no queries: the counts are those of one thread.
TEST(Walker, MoreThreadsThanRegionsCountTheSameQueries) {
  Network one_neuron;
  one_neuron.input_dim = 2;
  one_neuron.layers.push_back(make_layer({{Rational(1), Rational(2)}}, {Rational(1)}, Activation::relu));
  one_neuron.layers.push_back(make_layer({{Rational(1)}}, {Rational(0)}, Activation::linear));
  for (bool in_pool : {false, true}) {
    SCOPED_TRACE(in_pool);
    std::vector<WalkSummary> summaries;
    for (unsigned threads : {1u, 4u}) {
      WalkOptions options;
      options.threads = threads;
      if (in_pool) {
        options.on_region_in_pool = true;
        options.on_region = [](const Region&) { return true; };
      }
      summaries.push_back(walk_regions(one_neuron, make_whole_space(2), options));
    }
    EXPECT_EQ(summaries[0].regions, 2u);
    EXPECT_EQ(summaries[1].regions, 2u);
    EXPECT_EQ(summaries[0].counts.lp_queries, summaries[1].counts.lp_queries);
    EXPECT_EQ(summaries[0].counts.filter_settled, summaries[1].counts.filter_settled);
    EXPECT_EQ(summaries[0].counts.exact_fallbacks, summaries[1].counts.exact_fallbacks);
  }
}

// An interrupt that is already set is seen inside the first region's exact
// work (the start point search polls it): no region is reported.
TEST(Walker, InterruptSetBeforeTheWalkStopsBeforeTheFirstRegion) {
  std::atomic<bool> interrupt{true};
  WalkOptions options;
  options.threads = 1;
  options.interrupt = &interrupt;
  std::size_t delivered = 0;
  options.on_region = [&](const Region&) { return ++delivered, true; };
  const WalkSummary summary = walk_regions(moment_curve_network(2, 6), make_whole_space(2), options);
  EXPECT_EQ(summary.stop_reason, StopReason::interrupted);
  EXPECT_EQ(summary.regions, 0u);
  EXPECT_EQ(delivered, 0u);
  EXPECT_FALSE(summary.complete);
  EXPECT_FALSE(summary.certified);
}

}  // namespace
}  // namespace pleat

namespace pleat {
namespace {

// More than 16 neurons vanishing transversally at one crossing point is a
// documented limit, reported as such (limit_error), not as an internal error.
TEST(Walker, TooManyTransversalNeuronsAtACrossingIsALimitError) {
  std::vector<RationalVector> rows;
  for (long j = 1; j <= 17; ++j) rows.push_back({Rational(j), Rational(1)});  // 17 lines through the origin
  Network network;
  network.input_dim = 2;
  network.layers.push_back(make_layer(rows, RationalVector(17, Rational(0)), Activation::relu));
  network.layers.push_back(make_layer({RationalVector(17, Rational(1))}, {Rational(0)}, Activation::linear));
  ActivationPattern near;
  near.states.assign(17, NeuronState::off);
  const RationalVector origin{Rational(0), Rational(0)}, direction{Rational(-1), Rational(0)},
      normal{Rational(1), Rational(0)};
  try {
    patterns_across(network, near, origin, direction, normal);
    FAIL() << "no limit_error";
  } catch (const limit_error& error) {
    EXPECT_NE(std::string(error.what()).find("at most 16"), std::string::npos) << error.what();
  }
}

}  // namespace
}  // namespace pleat
