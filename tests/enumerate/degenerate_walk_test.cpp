// The region walker on hand-built degenerate networks (tests/data/*.json).
// Every expected count below was worked out by hand from the network's
// formula (the derivation is in the comment beside it) and, independently,
// re-derived by the exact brute force of tests/reference/walk_reference.py,
// which decides every sign pattern with Python fractions and no lp/ code
// (tests/reference/walk_degenerate_test.py runs it on the same files).
#include "core/network_io.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <map>
#include <set>
#include <string>
#include <vector>

namespace pleat {
namespace {

struct WalkResult {
  WalkSummary summary;
  std::vector<Region> regions;
  std::set<std::string> patterns;
  Network network;
};

Network read_data(const std::string& name) {
  return read_network_file(std::string(PLEAT_SOURCE_DIR) + "/tests/data/" + name);
}

WalkResult walk_file(const std::string& name, const Domain* domain = nullptr) {
  WalkResult result;
  result.network = read_data(name);
  WalkOptions options;
  options.threads = 1;
  options.on_region = [&](const Region& region) {
    result.regions.push_back(region);
    result.patterns.insert(format_pattern(result.network, region.pattern));
    return true;
  };
  result.summary = walk_regions(result.network, domain ? *domain : make_whole_space(result.network.input_dim), options);
  return result;
}

// The set of neuron lists over all interior facets lying on the line normal.x + offset = 0
// (either orientation).
std::set<std::vector<std::size_t>> neurons_on_line(const WalkResult& result, const RationalVector& normal,
                                                   const Rational& offset) {
  std::set<std::vector<std::size_t>> lists;
  for (const auto& region : result.regions)
    for (const auto& facet : region.facets) {
      bool same = true, opposite = true;
      for (std::size_t i = 0; i < normal.size(); ++i) {
        same = same && facet.normal[i] == normal[i];
        opposite = opposite && facet.normal[i] == -normal[i];
      }
      same = same && facet.offset == offset;
      opposite = opposite && facet.offset == -offset;
      if (same || opposite) lists.insert(facet.neurons);
    }
  return lists;
}

void expect_complete(const WalkResult& result) {
  EXPECT_TRUE(result.summary.complete);
  EXPECT_TRUE(result.summary.certified);
  EXPECT_EQ(result.summary.regions, result.regions.size());
  EXPECT_EQ(result.patterns.size(), result.regions.size());  // each region once
}

// Neurons 0, 1 (identical rows x) and 2 (row -2x) all bend on x = 0; neuron 3
// on y = 0. Two distinct lines through the origin: the 4 quadrants, none
// bounded, 4 half-axes as facets. Neurons 0 and 1 always agree, 2 is opposite.
TEST(DegenerateWalk, CoincidentHyperplanesCountOnce) {
  const WalkResult result = walk_file("coincident2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"1101", "1100", "0011", "0010"}));
  EXPECT_EQ(result.summary.bounded_regions, 0u);
  EXPECT_EQ(result.summary.facets, 4u);
  EXPECT_EQ(neurons_on_line(result, {Rational(1), Rational(0)}, Rational(0)),
            (std::set<std::vector<std::size_t>>{{0, 1, 2}}));
  EXPECT_EQ(neurons_on_line(result, {Rational(0), Rational(1)}, Rational(0)),
            (std::set<std::vector<std::size_t>>{{3}}));
}

// The same network on the box (0,1) x (-1,1): x = 0 is the box's left side, so
// only y = 0 splits it: 2 regions, both touching the boundary, 1 facet.
TEST(DegenerateWalk, HyperplaneOnTheDomainBoundary) {
  const Domain box = make_box({Rational(0), Rational(-1)}, {Rational(1), Rational(1)});
  const WalkResult result = walk_file("coincident2d.json", &box);
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"1101", "1100"}));
  EXPECT_EQ(result.summary.facets, 1u);
  for (const auto& region : result.regions) {
    EXPECT_TRUE(region.touches_domain_boundary);
    for (const auto& facet : region.facets) {
      if (facet.normal[0] != 0) {
        EXPECT_FALSE(facet.neighbor.has_value());  // x = 0 and x = 1 are box sides
      }
    }
  }
}

// Four parallel lines x = 1, -1, 0, 2 (mixed orientations) cut R^2 into 5
// strips, y = 0 halves each: 10 regions, none bounded. Facets: each vertical
// line is halved by y = 0 (4 x 2 = 8), y = 0 is cut into 5 pieces: 13.
TEST(DegenerateWalk, ParallelHyperplanesMakeStrips) {
  const WalkResult result = walk_file("parallel2d.json");
  expect_complete(result);
  EXPECT_EQ(result.summary.regions, 10u);
  EXPECT_EQ(result.summary.bounded_regions, 0u);
  EXPECT_EQ(result.summary.facets, 13u);
  EXPECT_EQ(result.summary.linear_regions, 10u);  // neighbours differ by one neuron's nonzero output weight
}

// Neuron 2 is the constant -1 and neuron 3 = -relu(x) - relu(y) - 1 <= -1:
// both '0' everywhere. Neuron 4 = relu(x) + relu(y) - 1 splits quadrant (+,+)
// at x + y = 1 (one bounded triangle), (+,-) at x = 1, (-,+) at y = 1, and is
// the constant -1 on (-,-): 4 + 3 = 7 regions, 1 bounded. Vertices (0,0),
// (1,0), (0,1); edges 3 on each axis, 3 on neuron 4's bend: 9 facets (Euler for
// the plane, V - E + F = 3 - 9 + 7 = 1). The output relu(x)+relu(y)-1 clipped
// at 0 is the constant 0 on 4 connected regions: 1 + 3 linear regions.
TEST(DegenerateWalk, DeadNeuronsNeverSplit) {
  const WalkResult result = walk_file("dead2d.json");
  expect_complete(result);
  EXPECT_EQ(result.summary.regions, 7u);
  EXPECT_EQ(result.summary.bounded_regions, 1u);
  EXPECT_EQ(result.summary.facets, 9u);
  EXPECT_EQ(result.summary.linear_regions, 4u);
  for (const auto& region : result.regions) {
    EXPECT_EQ(region.pattern.states[2], NeuronState::off);
    EXPECT_EQ(region.pattern.states[3], NeuronState::off);
  }
}

// Neuron 2 is the constant 2 and neuron 3 = relu(x) + relu(y) + 1 >= 1: both
// '1' everywhere, so only the axes split: 4 quadrants, 4 facets; the output
// relu(x) + relu(y) + 1 has a different gradient on each: 4 linear regions.
TEST(DegenerateWalk, AlwaysActiveNeuronsNeverSplit) {
  const WalkResult result = walk_file("always_active2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"111|1", "101|1", "011|1", "001|1"}));
  EXPECT_EQ(result.summary.facets, 4u);
  EXPECT_EQ(result.summary.linear_regions, 4u);
  EXPECT_EQ(result.summary.regions_per_layer, (std::vector<std::size_t>{4, 4, 4}));
}

// Neuron 3 = relu(x) - relu(-x) = x bends exactly on x = 0, the hyperplane of
// neurons 0 and 1; neuron 4 = |x| - 1 bends on x = +-1. Strips x < -1, -1 < x
// < 0, 0 < x < 1, x > 1, halved by y = 0: 8 regions, 3 x 2 + 4 = 10 facets.
// Output relu(x) + relu(|x| - 1) is -x-1, 0, x, 2x-1 on the strips: 4 linear
// regions. The facets on x = 0 carry neurons 0, 1 and 3.
TEST(DegenerateWalk, SecondLayerBendOnAFirstLayerHyperplane) {
  const WalkResult result = walk_file("bent_coincident2d.json");
  expect_complete(result);
  EXPECT_EQ(result.summary.regions, 8u);
  EXPECT_EQ(result.summary.facets, 10u);
  EXPECT_EQ(result.summary.linear_regions, 4u);
  EXPECT_EQ(neurons_on_line(result, {Rational(1), Rational(0)}, Rational(0)),
            (std::set<std::vector<std::size_t>>{{0, 1, 3}}));
}

// Neuron 3 = relu(y) - relu(-y) + relu(x) = y + relu(x): on x < 0 its bend is
// y = 0 (the line of neurons 1 and 2), on x > 0 it is y = -x. Quadrants by the
// first layer (4), only (+,-) split by neuron 3: 5 regions, 5 facets (two
// half-axes each, plus the diagonal ray). Output relu(y + relu(x)): x + y on
// (+,+) and upper (+,-) (adjacent: merged), 0 on lower (+,-) and (-,-)
// (adjacent: merged), y on (-,+): 3 linear regions. Facets on y = 0 carry
// neurons {1,2,3} where x < 0 and {1,2} where x > 0.
TEST(DegenerateWalk, SecondLayerBendAlongAFirstLayerHyperplaneOnOneSide) {
  const WalkResult result = walk_file("half_coincident2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"110|1", "101|1", "101|0", "010|1", "001|0"}));
  EXPECT_EQ(result.summary.facets, 5u);
  EXPECT_EQ(result.summary.linear_regions, 3u);
  EXPECT_EQ(neurons_on_line(result, {Rational(0), Rational(1)}, Rational(0)),
            (std::set<std::vector<std::size_t>>{{1, 2, 3}, {1, 2}}));
}

// Neurons 2 and 3 both equal relu(x) (bias 0): identically zero where x < 0
// ('z'), positive where x > 0. Quadrants: 4 regions. Neuron 2 reaches the
// output (weight 1), neuron 3 does not (weight 0), so the two x < 0 regions
// are non-smooth naming neuron 2 only (spec, pattern notation). Output relu(x):
// 2 linear regions.
TEST(DegenerateWalk, AllZeroNeuronGivesZStatesAndTheNonSmoothFlag) {
  const WalkResult result = walk_file("zero_neuron2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"11|11", "10|11", "01|zz", "00|zz"}));
  EXPECT_EQ(result.summary.linear_regions, 2u);
  std::map<std::string, std::vector<std::size_t>> nonsmooth;
  for (const auto& [pattern, neurons] : result.summary.nonsmooth_regions)
    nonsmooth[format_pattern(result.network, pattern)] = neurons;
  EXPECT_EQ(nonsmooth, (std::map<std::string, std::vector<std::size_t>>{{"01|zz", {2}}, {"00|zz", {2}}}));
  for (const auto& region : result.regions) {
    const bool is_left = region.pattern.states[0] == NeuronState::off;
    EXPECT_EQ(region.nonsmooth_neurons, is_left ? std::vector<std::size_t>{2} : std::vector<std::size_t>{});
  }
}

// Neuron 2 = relu(x) - relu(y): x - y on (+,+) (split on the diagonal), x > 0
// on (+,-), -y < 0 on (-,+), identically 0 on (-,-) ('z', non-smooth: output
// weight 1). 5 regions; facets: 2 half-axes each + the diagonal ray = 5.
TEST(DegenerateWalk, ZeroOnAQuadrantNextToTransversalBends) {
  const WalkResult result = walk_file("zero_quadrant2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"11|1", "11|0", "10|1", "01|0", "00|z"}));
  EXPECT_EQ(result.summary.facets, 5u);
  ASSERT_EQ(result.summary.nonsmooth_regions.size(), 1u);
  EXPECT_EQ(format_pattern(result.network, result.summary.nonsmooth_regions[0].first), "00|z");
  EXPECT_EQ(result.summary.nonsmooth_regions[0].second, std::vector<std::size_t>{2});
}

// Neuron 1 has zero weights and bias: 'z' on all of R, with output weight 3,
// so both regions of neuron 0 (x < 1/2, x > 1/2) are non-smooth.
TEST(DegenerateWalk, FirstLayerZeroRowIsZEverywhere) {
  const WalkResult result = walk_file("zero_row1d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"0z", "1z"}));
  EXPECT_EQ(result.summary.facets, 1u);
  EXPECT_EQ(result.summary.nonsmooth_regions.size(), 2u);
}

// relu(relu(x) + relu(y) - 1) with the output ReLU in the pattern: the same
// arrangement as dead2d's neuron 4: 7 regions, 1 bounded, 9 facets, 4 linear
// regions; prefixes per layer: 4 quadrants, then 7.
TEST(DegenerateWalk, ReluOnTheOutputLayerSplitsRegions) {
  const WalkResult result = walk_file("output_relu2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"11|1", "11|0", "10|1", "10|0", "01|1", "01|0", "00|0"}));
  EXPECT_EQ(result.summary.bounded_regions, 1u);
  EXPECT_EQ(result.summary.facets, 9u);
  EXPECT_EQ(result.summary.linear_regions, 4u);
  EXPECT_EQ(result.summary.regions_per_layer, (std::vector<std::size_t>{4, 7}));
}

// Four lines through the origin (x, y, x + y, x - y): 8 sectors, 8 rays.
TEST(DegenerateWalk, ConcurrentHyperplanes) {
  const WalkResult result = walk_file("concurrent2d.json");
  expect_complete(result);
  EXPECT_EQ(result.summary.regions, 8u);
  EXPECT_EQ(result.summary.bounded_regions, 0u);
  EXPECT_EQ(result.summary.facets, 8u);
}

// x = 0, x + 1e-20 (y + 1) = 0 and y = 0: three lines in general position
// (Zaslavsky: 1 + 3 + 3 = 7 regions, C(2,2) = 1 bounded: a triangle of width
// 1e-20), 9 facets. The missing sign pattern is 101: x > 0 and y > 0 force
// x + 1e-20 (y + 1) > 0.
TEST(DegenerateWalk, NearlyParallelHyperplanesAreExact) {
  const WalkResult result = walk_file("sliver2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"000", "001", "010", "011", "100", "110", "111"}));
  EXPECT_EQ(result.summary.bounded_regions, 1u);
  EXPECT_EQ(result.summary.facets, 9u);
}

// Regression (found by fuzzing small-integer networks against the brute
// force): GLPK used to abort here ("Assertion failed: k1 < k2", bflib/sgf.c)
// in lp::Oracle::classify_facets, fixed by running the LP queries on one
// representative per class of positive multiples (commit 48b235f). The region
// 0 < x < 1 has neuron 0's row x > 0 four times (neurons 0, 2, 3, 4) and
// 1 - x > 0 twice (neurons 5, 6).
// Expected, by hand: strips x < 0, 0 < x < 1, x > 1 halved by y = -1: 6
// regions; neurons 2-4 are 'z' on x < 0 (no path to the output: smooth),
// neuron 6 = relu(1 - relu(x)) is 'z' on x > 1 (output weight 1: non-smooth);
// output 1, 1 - x, 0 on the strips: 3 linear regions.
TEST(DegenerateWalk, RepeatedRowsWithZStates) {
  const WalkResult result = walk_file("repeated_rows2d.json");
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"01|zzz1|1", "00|zzz1|1", "11|1111|1", "10|1111|1",
                                                    "11|1110|z", "10|1110|z"}));
  EXPECT_EQ(result.summary.nonsmooth_regions.size(), 2u);
  EXPECT_EQ(result.summary.linear_regions, 3u);
}

// Regression, the smallest reproducer of the same GLPK abort: five identical
// neurons relu(y) on the box (-1,1)^2 (R^2 and four copies were always fine).
// Expected, by hand: y = 0 splits the box into 2 regions, 11111 and 00000,
// with 1 interior facet carrying neurons 0-4.
TEST(DegenerateWalk, FiveCoincidentRowsOnABox) {
  const Domain box = make_box({Rational(-1), Rational(-1)}, {Rational(1), Rational(1)});
  const WalkResult result = walk_file("five_coincident2d.json", &box);
  expect_complete(result);
  EXPECT_EQ(result.patterns, (std::set<std::string>{"11111", "00000"}));
  EXPECT_EQ(result.summary.facets, 1u);
  EXPECT_EQ(neurons_on_line(result, {Rational(0), Rational(1)}, Rational(0)),
            (std::set<std::vector<std::size_t>>{{0, 1, 2, 3, 4}}));
}

}  // namespace
}  // namespace pleat
