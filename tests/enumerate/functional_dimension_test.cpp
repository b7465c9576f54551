// The certified functional dimension against values derived by hand, and
// against independent recomputations from the walk's own regions (exact
// coefficient blocks of every region, exact Jacobians at interior points).
#include "enumerate/functional_dimension.hpp"

#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/network_io.hpp"
#include "core/random_network.hpp"
#include "core/rank.hpp"
#include "enumerate/detail/point_region.hpp"
#include "enumerate/detail/reach_forecast.hpp"
#include "enumerate/interior_points.hpp"
#include "tests/support/network_builders.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <filesystem>
#include <map>
#include <set>
#include <thread>
#include <string>
#include <vector>

namespace pleat {
namespace {

using test::make_layer;

// F(x) = sum_i v_i relu(w_i x + b_i) + c, optionally followed by a ReLU.
Network shallow_one_input(const RationalVector& w, const RationalVector& b, const RationalVector& v,
                          const Rational& c, bool output_relu = false) {
  std::vector<RationalVector> rows;
  for (const Rational& weight : w) rows.push_back({weight});
  Network network;
  network.input_dim = 1;
  network.layers.push_back(make_layer(rows, b, Activation::relu));
  network.layers.push_back(make_layer({v}, {c}, output_relu ? Activation::relu : Activation::linear));
  network.validate();
  return network;
}

// A generic shallow one-input net: breakpoints t_i = i + 1/2 (distinct,
// nonzero), weights of alternating sign, nonzero outgoing weights and biases.
Network generic_shallow(std::size_t m) {
  RationalVector w, b, v;
  for (std::size_t i = 0; i < m; ++i) {
    const Rational weight(static_cast<long>(i % 2 ? -(2 + static_cast<long>(i)) : 1 + static_cast<long>(i)), 3);
    const Rational breakpoint = Rational(static_cast<long>(i)) + Rational(1, 2);
    w.push_back(weight);
    b.push_back(-weight * breakpoint);
    v.push_back(Rational(static_cast<long>(i % 3 == 2 ? -(i + 2) : i + 1), 2));
  }
  return shallow_one_input(w, b, v, Rational(1, 3));
}

FunctionalDimensionResult certify(const Network& network, const Domain& domain, bool stop_at_scaling_bound,
                                  bool keep_rows = false) {
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.stop_at_scaling_bound = stop_at_scaling_bound;
  options.keep_rows = keep_rows;
  options.keep_kernel = true;
  return certify_functional_dimension(network, domain, options);
}

FunctionalDimensionResult certify_on_whole_space(const Network& network, bool stop_at_scaling_bound = true) {
  return certify(network, make_whole_space(network.input_dim), stop_at_scaling_bound);
}

// Every region of a complete walk (threads 1, whole space).
std::vector<Region> all_regions(const Network& network) {
  std::vector<Region> regions;
  WalkOptions options;
  options.threads = 1;
  options.on_region = [&](const Region& region) {
    regions.push_back(region);
    return true;
  };
  const WalkSummary summary = walk_regions(network, make_whole_space(network.input_dim), options);
  EXPECT_TRUE(summary.complete);
  return regions;
}

RationalMatrix stack(const std::vector<RationalMatrix>& blocks, std::size_t columns) {
  std::size_t total = 0;
  for (const auto& block : blocks) total += block.rows();
  RationalMatrix out(total, columns);
  std::size_t r = 0;
  for (const auto& block : blocks)
    for (std::size_t i = 0; i < block.rows(); ++i, ++r) out.set_row(r, block.row(i));
  return out;
}

std::map<std::string, Rational> named(const Network& network, const RationalVector& vector) {
  std::map<std::string, Rational> out;
  for (std::size_t c = 0; c < vector.size(); ++c)
    if (vector[c] != 0) out[network.parameter_name(c)] = vector[c];
  return out;
}

// Small random networks from the project's reproducible generator.
std::vector<Network> random_networks() {
  return {random_network({2, 4, 3, 1}, 11), random_network({2, 4, 3, 1}, 12), random_network({2, 5, 1}, 13),
          random_network({2, 3, 3, 2}, 14), random_network({3, 4, 3, 1}, 15), random_network({1, 3, 3, 3, 1}, 16)};
}

// ---- Values derived by hand --------------------------------------------------

// One input, one hidden layer of m neurons, linear output:
//   F(x) = sum_i v_i relu(w_i x + b_i) + c,  D = 3m + 1.
// F is continuous piecewise affine with breakpoints t_i = -b_i / w_i and a
// slope change of v_i |w_i| at t_i. With all w_i, v_i nonzero and distinct
// t_i, F is determined by (a) the m breakpoints, (b) the m slope changes and
// (c) one offset (say c): the slope far to the left is not free, it is
// sum_{w_i < 0} v_i w_i = -(sum of the jumps of the neurons with w_i < 0),
// and the signs of the w_i do not change under small perturbations. So the
// functions near F form a (2m+1)-dimensional family, the map theta -> F onto
// it is a submersion (each t_i, jump and c can be moved alone by moving
// b_i, v_i and c), and the functional dimension is 2m + 1. That is also the
// scaling bound D - m (the m scaling directions are independent: each one is
// the only one touching its own w_i), so the value meets it and the walk may
// stop early; the full walk must give the same value.
TEST(FunctionalDimension, OneInputShallowGenericIs2mPlus1) {
  for (std::size_t m = 1; m <= 6; ++m) {
    SCOPED_TRACE("m = " + std::to_string(m));
    const Network network = generic_shallow(m);
    const FunctionalDimensionResult early = certify_on_whole_space(network);
    ASSERT_TRUE(early.certified);
    EXPECT_EQ(early.parametric_dimension, 3 * m + 1);
    EXPECT_EQ(early.scaling_bound, 2 * m + 1);
    EXPECT_EQ(*early.functional_dimension, 2 * m + 1);

    const FunctionalDimensionResult full = certify_on_whole_space(network, false);
    ASSERT_TRUE(full.certified);
    EXPECT_TRUE(full.walk_complete);
    EXPECT_FALSE(full.early_stop);
    EXPECT_EQ(*full.functional_dimension, 2 * m + 1);
    EXPECT_EQ(full.regions_walked, m + 1);  // m distinct breakpoints cut R into m + 1 intervals
    EXPECT_TRUE(full.extra_kernel.empty());
  }
}

// 1 input, 2 hidden neurons, 1 output WITH a ReLU: F = relu(g),
//   g(x) = c + v1 relu(w1 x + b1) + v2 relu(w2 x + b2),  D = 2*2 + 3 = 7.
// The output neuron has no scaling symmetry (it is not followed by a layer),
// only the 2 hidden ones do: scaling bound 7 - 2 = 5, and no case may exceed
// it. Here h1 = relu(x - 1), h2 = relu(-x - 1) (breakpoints +1 and -1).
Network relu_output_network(const Rational& v1, const Rational& v2, const Rational& c) {
  return shallow_one_input({Rational(1), Rational(-1)}, {Rational(-1), Rational(-1)}, {v1, v2}, c, true);
}

TEST(FunctionalDimension, ReluOutputZeroLevelMissesTheGraph) {
  // g = 1 + h1 + h2 >= 1 > 0: the output ReLU is on everywhere, F = g, a
  // generic shallow net with m = 2: 2*2 + 1 = 5 (previous test). 3 regions.
  const FunctionalDimensionResult result =
      certify_on_whole_space(relu_output_network(1, 1, 1), false);
  ASSERT_TRUE(result.certified);
  EXPECT_EQ(result.parametric_dimension, 7u);
  EXPECT_EQ(result.scaling_bound, 5u);
  EXPECT_EQ(*result.functional_dimension, 5u);
  EXPECT_EQ(result.regions_walked, 3u);
}

TEST(FunctionalDimension, ReluOutputZeroLevelCutsOutsideTheBreakpoints) {
  // g = 1 - h1 - h2: 1 on [-1, 1], slope -1 beyond; zero at x = +-2. F is a
  // trapezoid. g > 0 at both of its breakpoints, so F determines every affine
  // piece of g (each piece of g meets the set {g > 0} in an interval), hence g
  // itself: still 5. Regions: cuts at -2, -1, 1, 2 -> 5.
  const FunctionalDimensionResult result =
      certify_on_whole_space(relu_output_network(-1, -1, 1), false);
  ASSERT_TRUE(result.certified);
  EXPECT_EQ(*result.functional_dimension, 5u);
  EXPECT_LE(*result.functional_dimension, result.scaling_bound);
  EXPECT_EQ(result.regions_walked, 5u);
}

TEST(FunctionalDimension, ReluOutputZeroLevelHidesTheMiddle) {
  // g = -3 + h1 + h2: -3 on [-1, 1], F = 0 on [-4, 4], F = x - 4 for x > 4
  // and -x - 4 for x < -4. Only the two outer lines are seen: on x > 4,
  // F = v1 (w1 x + b1) + c with rows d(v1 w1) = e_w1 + e_v1 and
  // d(v1 b1 + c) = e_b1 - e_v1 + e_c; on x < -4 likewise
  // e_w2 - e_v2 and e_b2 - e_v2 + e_c; every other region has F = 0 and zero
  // rows. These 4 rows are independent: value 4 < 5. The extra flat direction
  // (beyond the scaling ones e_w1 - e_b1 - e_v1 and -e_w2 - e_b2 - e_v2) is
  // moving c while both biases follow: e_b1 + e_b2 - e_c (orthogonal to all 4
  // rows, and already free of the scaling pivots W1[0,0], W1[1,0]).
  const Network network = relu_output_network(1, 1, -3);
  const FunctionalDimensionResult result = certify_on_whole_space(network, false);
  ASSERT_TRUE(result.certified);
  EXPECT_EQ(*result.functional_dimension, 4u);
  EXPECT_EQ(result.scaling_bound, 5u);
  EXPECT_EQ(result.regions_walked, 5u);  // cuts at -4, -1, 1, 4
  ASSERT_EQ(result.extra_kernel.size(), 1u);
  const std::map<std::string, Rational> expected{{"b1[0]", 1}, {"b1[1]", 1}, {"b2[0]", -1}};
  EXPECT_EQ(named(network, result.extra_kernel[0].dense()), expected);
  // Not one of the named mechanisms (the hidden neurons are neither dead nor
  // always on, nor copies): the explanation must not pretend otherwise.
  EXPECT_EQ(result.extra_kernel[0].mechanism, Mechanism::none);
}

TEST(FunctionalDimension, ReluOutputNeverPositiveIsZero) {
  // g = -1 - h1 - h2 <= -1: F = 0 everywhere, every row is zero: value 0.
  const FunctionalDimensionResult result =
      certify_on_whole_space(relu_output_network(-1, -1, -1), false);
  ASSERT_TRUE(result.certified);
  EXPECT_EQ(*result.functional_dimension, 0u);
  EXPECT_EQ(result.regions_walked, 3u);
}

// A dead neuron in 1-D: m neurons, neuron `dead` with zero incoming weight
// and bias -2, so its pre-activation is the constant -2: off on all of R.
// Every row has zero entries in its three parameters (dF/dw = v 1[on] x = 0,
// dF/db = v 1[on] = 0, dF/dv = relu(-2) = 0), so the rank is that of the other
// m - 1 generic neurons: 2(m - 1) + 1 (first test). The scaling bound is
// still 2m + 1 (the dead neuron's scaling direction (0, -2, -v) is nonzero),
// so 2 directions beyond the scaling ones: its 3-dimensional parameter
// block minus its scaling direction. Both must be named dead-neuron with
// that neuron.
TEST(FunctionalDimension, DeadNeuronIn1DGives2mMinus1) {
  for (std::size_t m = 2; m <= 5; ++m) {
    for (std::size_t dead : {std::size_t{0}, m - 1}) {
      SCOPED_TRACE("m = " + std::to_string(m) + ", dead neuron " + std::to_string(dead));
      Network network = generic_shallow(m);
      network.layers[0].weights(dead, 0) = 0;
      network.layers[0].bias[dead] = -2;
      const FunctionalDimensionResult result = certify_on_whole_space(network);
      ASSERT_TRUE(result.certified);
      EXPECT_EQ(result.scaling_bound, 2 * m + 1);
      EXPECT_EQ(*result.functional_dimension, 2 * (m - 1) + 1);
      ASSERT_EQ(result.extra_kernel.size(), 2u);
      for (const auto& direction : result.extra_kernel) {
        EXPECT_EQ(direction.mechanism, Mechanism::dead_neuron);
        EXPECT_EQ(direction.neurons, std::vector<std::size_t>{dead});
        // Supported on the dead neuron's own parameters only.
        for (const auto& [name, value] : named(network, direction.dense())) {
          const std::string index = std::to_string(dead);
          EXPECT_TRUE(name == "W1[" + index + ",0]" || name == "b1[" + index + "]" || name == "W2[0," + index + "]")
              << name;
        }
      }
    }
  }
}

// data/degenerate2d.json (2 -> 4 -> 3 -> 1; data/README.md): neurons 1 and 2
// are copies, neuron 5 (second layer, index 1) is dead.
// D = 3*4 + 5*3 + 4*1 = 31; 7 hidden neurons, independent scaling directions
// (each is the only one touching its own first incoming weight): bound 24.
// By hand: the dead neuron's 6 parameters W2[1,0..3], b2[1], W3[0,1] do
// not matter (inputs >= 0, incoming weights < 0, bias -0.5; and a small
// change keeps that so): 6 kernel directions, one of them its scaling
// direction, 5 beyond. The copies have h1 = h2, so layer 2 sees only
// W2[o,1] + W2[o,2]: W2[o,1] - W2[o,2] is flat for o = 0, 1, 2, and o = 1
// (the dead neuron's row) is already counted: 2 more. Remaining live
// parameters: 31 - 6 = 25, minus 6 live scaling directions = 19, minus 2 = 17.
// The copies' incoming weights add nothing flat: their backward signals
// W2[0,i]*1.3*[n4 on] - W2[2,i]*0.7*[n6 on] have ratios -1.5/0.9 and 0.6/0.25
// for i = 1, 2 in regions where only neuron 4 or only neuron 6 is on, and both
// neurons change sign (README), so no fixed combination cancels everywhere.
// The printed basis is the RREF modulo the scaling directions, in parameter
// order; each scaling direction's pivot is its neuron's first incoming weight,
// so no vector below has an entry there.
TEST(FunctionalDimension, Degenerate2dExampleIs17WithSevenNamedDirections) {
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  const FunctionalDimensionResult result = certify_on_whole_space(network);
  ASSERT_TRUE(result.certified);
  EXPECT_FALSE(result.early_stop);  // 17 < 24: the kernel side certifies it
  EXPECT_EQ(result.parametric_dimension, 31u);
  EXPECT_EQ(result.scaling_bound, 24u);
  EXPECT_EQ(*result.functional_dimension, 17u);
  EXPECT_EQ(result.kernel.rows(), 31u - 17u);

  using Named = std::map<std::string, Rational>;
  const std::vector<std::pair<Named, std::string>> expected{
      {{{"W2[0,1]", 1}, {"W2[0,2]", -1}}, "duplicate-neurons"},
      {{{"W2[1,1]", 1}}, "dead-neuron"},
      {{{"W2[1,2]", 1}}, "dead-neuron"},
      {{{"W2[1,3]", 1}}, "dead-neuron"},
      {{{"W2[2,1]", 1}, {"W2[2,2]", -1}}, "duplicate-neurons"},
      {{{"b2[1]", 1}}, "dead-neuron"},
      {{{"W3[0,1]", 1}}, "dead-neuron"},
  };
  ASSERT_EQ(result.extra_kernel.size(), expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) {
    SCOPED_TRACE("extra direction " + std::to_string(i));
    EXPECT_EQ(named(network, result.extra_kernel[i].dense()), expected[i].first);
    EXPECT_EQ(mechanism_word(result.extra_kernel[i].mechanism), expected[i].second);
    const std::vector<std::size_t> neurons =
        expected[i].second == "dead-neuron" ? std::vector<std::size_t>{5} : std::vector<std::size_t>{1, 2};
    EXPECT_EQ(result.extra_kernel[i].neurons, neurons);
  }
  // The directions really are flat: every region's exact rows annihilate them.
  for (const Region& region : all_regions(network)) {
    const RationalMatrix blocks = coefficient_blocks(network, region.pattern);
    for (const auto& direction : result.extra_kernel)
      for (const Rational& entry : product(blocks, direction.dense())) EXPECT_EQ(entry, 0);
  }
}

// ---- Recomputations from the walk ----------------------------------------------

// The raw exact rank of every region's rows, with no clipping: if the code
// took min(rank, bound) anywhere this is where it would show.
TEST(FunctionalDimension, RawRankOfTheFullWalkNeverExceedsTheScalingBound) {
  for (const Network& network : random_networks()) {
    const FunctionalDimensionResult result =
        certify(network, make_whole_space(network.input_dim), false, /*keep_rows=*/true);
    ASSERT_TRUE(result.certified);
    const std::size_t kept_rank = rank_exact(result.rows);
    EXPECT_LE(kept_rank, result.scaling_bound);
    EXPECT_EQ(kept_rank, *result.functional_dimension);

    // Independently: every region's blocks, stacked, from a separate walk.
    std::vector<RationalMatrix> blocks;
    for (const Region& region : all_regions(network))
      if (region.nonsmooth_neurons.empty()) blocks.push_back(coefficient_blocks(network, region.pattern));
    const std::size_t all_rank = rank_exact(stack(blocks, network.parametric_dimension()));
    EXPECT_LE(all_rank, result.scaling_bound);
    EXPECT_EQ(all_rank, *result.functional_dimension);
    EXPECT_EQ(result.regions_walked, blocks.size() + result.nonsmooth_regions.size());
  }
}

// Every contributing region's rows kept (no stop at the scaling bound), on one
// thread: the set-up of the tests of the rows phase below.
FunctionalDimensionOptions every_regions_rows_on_one_thread() {
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.stop_at_scaling_bound = false;
  options.keep_rows = true;
  return options;
}

// A Ctrl-C while the rows are formed (phase "rows", after the value is
// settled) cuts the rows short, not the value: the rows kept are the first
// regions' rows, in order, and the result says they are cut short. Fails if
// the interrupt were ignored there (the rows complete, not flagged) or ended
// the value too.
TEST(FunctionalDimension, AnInterruptWhileTheRowsAreFormedKeepsTheValueAndTheFirstRows) {
  const Network network = random_networks().front();
  const Domain domain = make_whole_space(network.input_dim);
  FunctionalDimensionOptions options = every_regions_rows_on_one_thread();
  const FunctionalDimensionResult whole = certify_functional_dimension(network, domain, options);
  ASSERT_TRUE(whole.certified);
  ASSERT_GE(whole.regions_contributing, 3u);
  EXPECT_FALSE(whole.rows_interrupted);
  EXPECT_EQ(whole.rows_regions, whole.regions_contributing);

  std::atomic<bool> interrupt{false};
  options.walk.interrupt = &interrupt;
  options.on_phase = [&](const CertifyProgress& state) {
    if (std::string(state.phase) == "rows" && state.done == 2) interrupt = true;
  };
  const FunctionalDimensionResult cut = certify_functional_dimension(network, domain, options);
  EXPECT_TRUE(cut.certified);
  EXPECT_EQ(cut.functional_dimension, whole.functional_dimension);
  EXPECT_TRUE(cut.rows_interrupted);
  EXPECT_EQ(cut.rows_regions, 2u);
  EXPECT_EQ(cut.regions_contributing, whole.regions_contributing);
  ASSERT_GT(cut.rows.rows(), 0u);
  ASSERT_LT(cut.rows.rows(), whole.rows.rows());
  for (std::size_t r = 0; r < cut.rows.rows(); ++r)
    for (std::size_t c = 0; c < cut.rows.cols(); ++c) EXPECT_EQ(cut.rows(r, c), whole.rows(r, c));
}

// on_region_rows returning false (certify --rows-out's file failed, a full
// disk say) ends the rows there: no region's rows are formed after it, the
// value and its proof are the same, and the rows are not called interrupted.
// They went on being formed for a file already dropped (time only).
TEST(FunctionalDimension, RowsWantedNoMoreAreNoLongerFormed) {
  const Network network = random_networks().front();
  const Domain domain = make_whole_space(network.input_dim);
  FunctionalDimensionOptions options = every_regions_rows_on_one_thread();
  std::size_t given = 0;
  options.on_region_rows = [&](const RationalMatrix&) { return ++given < 2; };
  std::size_t last_reported = 0;
  options.on_phase = [&](const CertifyProgress& state) {
    if (std::string(state.phase) == "rows") last_reported = state.done;
  };
  const FunctionalDimensionResult result = certify_functional_dimension(network, domain, options);
  ASSERT_GE(result.regions_contributing, 3u);
  EXPECT_EQ(given, 2u);
  EXPECT_EQ(last_reported, 2u);
  EXPECT_EQ(result.rows_regions, 2u);
  EXPECT_FALSE(result.rows_interrupted);
  EXPECT_EQ(result.rows.rows(), 0u);
  options.on_region_rows = {};
  options.on_phase = {};
  const FunctionalDimensionResult whole = certify_functional_dimension(network, domain, options);
  EXPECT_TRUE(result.certified);
  EXPECT_EQ(result.functional_dimension, whole.functional_dimension);
  EXPECT_EQ(result.lower_bound, whole.lower_bound);
  EXPECT_EQ(result.upper_bound, whole.upper_bound);
  EXPECT_EQ(result.regions_contributing, whole.regions_contributing);
}

TEST(FunctionalDimension, EveryScalingDirectionAnnihilatesEveryRegionsRows) {
  for (const Network& network : random_networks()) {
    const RationalMatrix scaling = scaling_directions(network);
    ASSERT_EQ(scaling.rows(), network.hidden_neuron_count());
    for (const Region& region : all_regions(network)) {
      const RationalMatrix blocks = coefficient_blocks(network, region.pattern);
      bool has_nonzero_row = false;
      for (std::size_t r = 0; r < blocks.rows(); ++r)
        for (const Rational& entry : blocks.row(r)) has_nonzero_row = has_nonzero_row || entry != 0;
      EXPECT_TRUE(has_nonzero_row);  // dc/db_last = 1 always: the check is not vacuous
      for (std::size_t s = 0; s < scaling.rows(); ++s)
        for (const Rational& entry : product(blocks, scaling.row(s))) ASSERT_EQ(entry, 0);
    }
  }
}

// n0 + 1 affinely independent points inside the region: its point p and
// p + delta e_i, delta halved until p + delta e_i is strictly inside every
// facet (the region is the intersection of its facets' open half-spaces).
std::vector<RationalVector> interior_points(const Region& region) {
  std::vector<RationalVector> points{region.interior.point};
  for (std::size_t i = 0; i < region.interior.point.size(); ++i) {
    Rational delta(1, 4);
    for (;;) {
      RationalVector q = region.interior.point;
      q[i] += delta;
      bool is_inside = true;
      for (const RegionFacet& facet : region.facets) {
        Rational value = facet.offset;
        for (std::size_t t = 0; t < q.size(); ++t) value += facet.normal[t] * q[t];
        is_inside = is_inside && value > 0;
      }
      if (is_inside) {
        points.push_back(q);
        break;
      }
      delta /= 2;
    }
  }
  return points;
}

TEST(FunctionalDimension, CoefficientBlocksAndInteriorJacobiansGiveIdenticalRanks) {
  for (const Network& network : random_networks()) {
    const std::size_t columns = network.parametric_dimension();
    std::vector<RationalMatrix> all_blocks, all_jacobians;
    for (const Region& region : all_regions(network)) {
      std::vector<RationalMatrix> jacobians;
      for (const RationalVector& x : interior_points(region)) {
        ASSERT_EQ(region_pattern_at(network, x), region.pattern);  // really inside
        jacobians.push_back(parameter_jacobian_exact(network, x));
      }
      const RationalMatrix blocks = coefficient_blocks(network, region.pattern);
      const RationalMatrix stacked = stack(jacobians, columns);
      // Per region: the same row space, not only the same rank.
      EXPECT_EQ(row_space_basis_exact(blocks), row_space_basis_exact(stacked));
      all_blocks.push_back(blocks);
      all_jacobians.push_back(stacked);
    }
    const std::size_t from_blocks = rank_exact(stack(all_blocks, columns));
    EXPECT_EQ(from_blocks, rank_exact(stack(all_jacobians, columns)));
    EXPECT_EQ(from_blocks, *certify_on_whole_space(network, false).functional_dimension);
  }
}

// ---- Runs that stop early ------------------------------------------------------

void expect_uncertified_but_ordered(const FunctionalDimensionResult& result) {
  EXPECT_FALSE(result.certified);
  EXPECT_FALSE(result.functional_dimension.has_value());
  EXPECT_FALSE(result.walk_complete);
  EXPECT_LE(result.lower_bound, result.upper_bound);
  EXPECT_LE(result.upper_bound, result.scaling_bound);
}

TEST(FunctionalDimension, RunCutShortNeverSaysCertified) {
  // fold2d: 84 regions, value 48 (= its scaling bound); ramp1d: 6 regions,
  // value 11, reached only with all 6 (each interval adds 2 rows).
  for (const char* file : {"/data/fold2d.json", "/data/ramp1d.json", "/data/degenerate2d.json"}) {
    SCOPED_TRACE(file);
    const Network network = read_network_file(std::string(PLEAT_SOURCE_DIR) + file);
    const Domain domain = make_whole_space(network.input_dim);
    for (bool stop_at_bound : {false, true}) {
      FunctionalDimensionOptions options;
      options.walk.threads = 1;
      options.stop_at_scaling_bound = stop_at_bound;
      options.points_first = false;  // the walk's own limits are under test here
      options.walk.max_regions = 1;
      const FunctionalDimensionResult one = certify_functional_dimension(network, domain, options);
      expect_uncertified_but_ordered(one);
      EXPECT_EQ(one.walk.stop_reason, StopReason::max_regions);
      EXPECT_LE(one.regions_walked, 1u);
      EXPECT_LE(one.lower_bound, (network.input_dim + 1) * network.output_dim());  // one region's rows

      options.walk.max_regions = 3;
      const FunctionalDimensionResult three = certify_functional_dimension(network, domain, options);
      expect_uncertified_but_ordered(three);
      EXPECT_GE(three.lower_bound, one.lower_bound);

      options.walk.max_regions = 0;
      options.walk.time_limit_seconds = 1e-9;
      const FunctionalDimensionResult timed = certify_functional_dimension(network, domain, options);
      if (timed.walk.stop_reason == StopReason::time_limit) expect_uncertified_but_ordered(timed);
      else EXPECT_TRUE(timed.walk_complete);  // finished before the first check of the clock
    }
  }
}

TEST(FunctionalDimension, Ramp1dIs11) {
  // ramp1d (data/README.md): 5 neurons with distinct bends on the line,
  // nonzero outgoing weights: the generic shallow case, 2*5 + 1 = 11. (Its
  // batch value at points: tests/enumerate/batch_dimension_test.cpp.)
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/ramp1d.json");
  EXPECT_EQ(*certify_on_whole_space(network).functional_dimension, 11u);
}

// ---- The proof after the walk: lifted kernel, exact check, stop requests ----

std::vector<ActivationPattern> smooth_patterns(const Network& network) {
  std::vector<ActivationPattern> patterns;
  for (const Region& region : all_regions(network))
    if (region.nonsmooth_neurons.empty()) patterns.push_back(region.pattern);
  return patterns;
}

// The extra directions lifted from residues equal the ones read off the
// exact kernel of every region's exact rows (kernel_basis_exact, then
// extra_kernel_basis), and the value equals that kernel's complement.
TEST(FunctionalDimension, LiftedExtraDirectionsEqualTheExactKernelsOnes) {
  std::vector<Network> networks = random_networks();
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json"));
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/repeated_rows2d.json"));
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/zero_neuron2d.json"));
  for (const Network& network : networks) {
    const FunctionalDimensionResult result = certify(network, make_whole_space(network.input_dim), false);
    ASSERT_TRUE(result.certified);
    std::vector<RationalMatrix> blocks;
    for (const ActivationPattern& pattern : smooth_patterns(network))
      blocks.push_back(coefficient_blocks(network, pattern));
    const RationalMatrix kernel = kernel_basis_exact(stack(blocks, network.parametric_dimension()));
    const RationalMatrix extra = extra_kernel_basis(kernel, scaling_directions(network));
    EXPECT_EQ(*result.functional_dimension, network.parametric_dimension() - kernel.rows());
    ASSERT_EQ(result.extra_kernel.size(), extra.rows());
    for (std::size_t r = 0; r < extra.rows(); ++r) EXPECT_EQ(result.extra_kernel[r].dense(), extra.row(r));
    EXPECT_EQ(result.kernel.rows(), kernel.rows());
  }
}

// The lift tries the walk's prime alone first: data/degenerate2d.json has
// one-digit decimal weights, so its extra directions' entries are small
// fractions, reconstructed and proved with no further prime ("kernel"
// progress stays at 0). Its weights scaled by 10^-12 put the entries'
// denominators past one prime's reach (2^24 for a row read off one prime):
// those rows are lifted over further primes, or computed from the neurons
// on in every region and the other rows (progress at most 1, no exact
// solve: 2; the further primes alone: kernel_lift_test), and the value, the kernel and the extra directions are those of the
// exact kernel (kernel_basis_exact), with 1 thread and with 2.
TEST(FunctionalDimension, LiftStartsFromTheWalksPrimeAndAddsPrimesOnlyWhenNeeded) {
  auto lift_primes = [](const Network& network, FunctionalDimensionResult& result, unsigned threads = 1) {
    FunctionalDimensionOptions options;
    options.walk.threads = threads;
    options.stop_at_scaling_bound = false;
    options.keep_kernel = true;
    std::size_t primes = 0;
    options.on_phase = [&](const CertifyProgress& progress) {
      if (std::string(progress.phase) == "kernel") primes = std::max(primes, progress.done);
    };
    result = certify_functional_dimension(network, make_whole_space(network.input_dim), options);
    return primes;
  };
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  FunctionalDimensionResult small;
  EXPECT_EQ(lift_primes(network, small), 0u);
  ASSERT_TRUE(small.certified);
  EXPECT_EQ(*small.functional_dimension, 17u);  // derived in Degenerate2dExampleIs17WithSevenNamedDirections

  Network scaled = network;
  const Rational tiny(1, Integer("1000000000000"));
  for (Layer& layer : scaled.layers) {
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < layer.weights.cols(); ++c) layer.weights(r, c) = layer.weights(r, c) * tiny + Rational(1, 7);
  }
  FunctionalDimensionResult large;
  EXPECT_LE(lift_primes(scaled, large), 1u);
  ASSERT_TRUE(large.certified);
  std::vector<RationalMatrix> blocks;
  for (const ActivationPattern& pattern : smooth_patterns(scaled)) blocks.push_back(coefficient_blocks(scaled, pattern));
  const RationalMatrix kernel = kernel_basis_exact(stack(blocks, scaled.parametric_dimension()));
  const RationalMatrix extra = extra_kernel_basis(kernel, scaling_directions(scaled));
  EXPECT_EQ(*large.functional_dimension, scaled.parametric_dimension() - kernel.rows());
  ASSERT_EQ(large.extra_kernel.size(), extra.rows());
  ASSERT_GT(extra.rows(), 0u);
  for (std::size_t r = 0; r < extra.rows(); ++r) EXPECT_EQ(large.extra_kernel[r].dense(), extra.row(r));
  FunctionalDimensionResult two_threads;
  EXPECT_LE(lift_primes(scaled, two_threads, 2), 1u);
  EXPECT_EQ(two_threads.kernel, large.kernel);
  EXPECT_EQ(two_threads.functional_dimension, large.functional_dimension);

  // Scaled by 10^-40 (the kept rows' integer systems then need three
  // further primes before they are solved exactly, when lifted:
  // kernel_lift_test): the same exact kernel's extra directions, with 1
  // thread and with 2.
  Network tinier = network;
  const Rational tiniest(1, Integer("10000000000000000000000000000000000000000"));
  for (Layer& layer : tinier.layers)
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < layer.weights.cols(); ++c)
        layer.weights(r, c) = layer.weights(r, c) * tiniest + Rational(1, 7);
  blocks.clear();
  for (const ActivationPattern& pattern : smooth_patterns(tinier)) blocks.push_back(coefficient_blocks(tinier, pattern));
  const RationalMatrix tinier_extra = extra_kernel_basis(kernel_basis_exact(stack(blocks, tinier.parametric_dimension())),
                                                         scaling_directions(tinier));
  ASSERT_GT(tinier_extra.rows(), 0u);
  for (unsigned threads : {1u, 2u}) {
    FunctionalDimensionResult lifted;
    EXPECT_LE(lift_primes(tinier, lifted, threads), 1u);  // no exact solve of all rows
    ASSERT_TRUE(lifted.certified);
    ASSERT_EQ(lifted.extra_kernel.size(), tinier_extra.rows());
    for (std::size_t r = 0; r < tinier_extra.rows(); ++r) EXPECT_EQ(lifted.extra_kernel[r].dense(), tinier_extra.row(r));
  }
}

// The multi-modular check accepts the proved kernel and rejects it after any
// one entry is changed (every entry of every extra direction, and a zero
// entry made nonzero), naming a region whose rows it fails.
TEST(FunctionalDimension, CheckRejectsAKernelVectorAlteredInOneEntry) {
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  const FunctionalDimensionResult result = certify(network, make_whole_space(2), false);
  ASSERT_TRUE(result.certified);
  const std::vector<ActivationPattern> patterns = smooth_patterns(network);
  EXPECT_FALSE(first_region_not_annihilated(network, result.kernel, patterns).has_value());
  std::size_t altered = 0;
  for (std::size_t r = result.kernel.rows() - result.extra_kernel.size(); r < result.kernel.rows(); ++r)
    for (std::size_t c = 0; c < result.kernel.cols(); ++c) {
      if (result.kernel(r, c) == 0 && c % 5 != 0) continue;
      RationalMatrix wrong = result.kernel;
      wrong(r, c) += Rational(1, 1000003);
      const auto rejected = first_region_not_annihilated(network, wrong, patterns, 2);
      // A parameter no region's rows depend on (a dead neuron's) stays flat.
      bool column_matters = false;
      for (const ActivationPattern& pattern : patterns) {
        const RationalMatrix blocks = coefficient_blocks(network, pattern);
        for (std::size_t i = 0; i < blocks.rows(); ++i) column_matters = column_matters || blocks(i, c) != 0;
      }
      EXPECT_EQ(rejected.has_value(), column_matters) << "row " << r << " column " << c;
      if (rejected) {
        const RationalVector image = product(coefficient_blocks(network, patterns[*rejected]), wrong.row(r));
        bool is_nonzero = false;
        for (const Rational& v : image) is_nonzero = is_nonzero || v != 0;
        EXPECT_TRUE(is_nonzero) << "the named region must really fail";
        ++altered;
      }
    }
  EXPECT_GT(altered, 10u);
}

// The rows are reduced in the walk's pool (WalkOptions::on_region_in_pool)
// and formed by the reduction or by the workers: the kept rows, their witnesses and the region
// where an early stop falls must not depend on the thread count either. Nor
// may the phase after the walk, which splits its work by thread too (E's
// image's product by row blocks, primes in batches, exact solves by row
// group, the check by region, naming in chunks); random 2,5,5,5,1 seed 2
// lifts a group of 21 unknowns by the exact (p-adic) solve; random
// 2,15,15,15,1 seed 1 reads 122 extra directions off the walk's basis with
// a product split into row blocks (40 and more rows), lifts 13 groups
// exactly, largest first, and checks vectors over five primes; random
// 2,15,15,15,15,1 seed 1 lifts two dense rows together by one p-adic solve
// of 138 unknowns (two right-hand sides) and checks over fifteen primes.
TEST(FunctionalDimension, SameResultForAnyThreadCount) {
  std::size_t early_stops = 0;
  for (const Network& network : {random_network({2, 5, 5, 1}, 21), random_network({3, 4, 4, 1}, 22),
                                 random_network({2, 6, 6, 6, 1}, 23), random_network({2, 5, 5, 5, 1}, 2),
                                 random_network({2, 15, 15, 15, 1}, 1), random_network({2, 15, 15, 15, 15, 1}, 1),
                                 read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json")}) {
    for (const bool stop_at_scaling_bound : {false, true}) {
      // is_background_dropped: no row is reduced during the walk, so once 64
      // regions wait (on the 2,15,15,15,1 networks' walks here), the walk's
      // threads form the rows of those processed after (prepare_region); the
      // reduction after the walk forms the others'.
      auto run = [&](unsigned threads, bool is_background_dropped = false) {
        FunctionalDimensionOptions options;
        options.walk.threads = threads;
        options.stop_at_scaling_bound = stop_at_scaling_bound;
        options.points_first = false;  // stopping at the bound: inside the walk
        options.keep_kernel = true;
        if (is_background_dropped)
          options.walker = [](const Network& n, const Domain& d, const WalkOptions& o) {
            WalkOptions without = o;
            without.background = {};
            return walk_regions(n, d, without);
          };
        return certify_functional_dimension(network, make_whole_space(network.input_dim), options);
      };
      const auto a = run(1);
      early_stops += a.early_stop;
      for (const auto& [threads, is_background_dropped] :
           std::vector<std::pair<unsigned, bool>>{{2, false}, {3, false}, {2, true}}) {
        const auto b = run(threads, is_background_dropped);
        EXPECT_EQ(a.functional_dimension, b.functional_dimension);
        EXPECT_EQ(a.lower_bound, b.lower_bound);
        EXPECT_EQ(a.regions_walked, b.regions_walked);
        EXPECT_EQ(a.early_stop, b.early_stop);
        EXPECT_EQ(a.regions_contributing, b.regions_contributing);
        EXPECT_EQ(a.witness_points, b.witness_points);
        EXPECT_EQ(a.kernel, b.kernel);
        ASSERT_EQ(a.extra_kernel.size(), b.extra_kernel.size());
        for (std::size_t i = 0; i < a.extra_kernel.size(); ++i) {
          EXPECT_EQ(a.extra_kernel[i].dense(), b.extra_kernel[i].dense());
          EXPECT_EQ(a.extra_kernel[i].mechanism, b.extra_kernel[i].mechanism);
          EXPECT_EQ(a.extra_kernel[i].neurons, b.extra_kernel[i].neurons);
        }
      }
    }
  }
  EXPECT_GE(early_stops, 1u);  // a walk really stopped where the rank met the bound
}

// The rows are reduced behind the walk's delivery (detail::RowBacklog), so a
// walk may deliver regions past the one whose rows meet the scaling bound.
// The result must still be that of a walk stopped at that region: the first
// n regions in walk order (an independent count: every region's rows
// modulo the same prime added in order) and only their nonsmooth and
// bounded regions, for any thread count, and when every region was
// delivered before any row was reduced (a walker without background work).
TEST(FunctionalDimension, EarlyStopIsAtTheFirstRegionWhoseRowsMeetTheBound) {
  std::size_t early_stops = 0;
  for (const Network& network : {random_network({2, 5, 5, 1}, 21), random_network({3, 4, 4, 1}, 22),
                                 random_network({2, 8, 1}, 3), random_network({2, 12, 1}, 4),
                                 read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json")}) {
    const Domain domain = make_whole_space(network.input_dim);
    std::vector<Region> regions;  // in walk order
    WalkOptions walk;
    walk.threads = 1;
    walk.on_region = [&](const Region& region) {
      regions.push_back(region);
      return true;
    };
    ASSERT_TRUE(walk_regions(network, domain, walk).complete);
    const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
    ModularRowBasis basis(modular.prime, network.parametric_dimension());
    const std::size_t bound = network.parametric_dimension() - scaling_structure(network).rank;
    std::size_t first = 0, bounded = 0, nonsmooth = 0;
    while (first < regions.size() && basis.rank() < bound) {
      const Region& region = regions[first++];
      bounded += region.bounded;
      if (!region.nonsmooth_neurons.empty()) {
        ++nonsmooth;
        continue;
      }
      const ModularMatrix rows = coefficient_blocks_mod(modular, region.pattern);
      for (std::size_t r = 0; r < rows.rows(); ++r) basis.add_row_screened(rows.row(r));
    }
    if (basis.rank() < bound) continue;  // no early stop on this network
    ++early_stops;
    EXPECT_LT(first, regions.size());  // regions after the stop exist: a walk may deliver them
    auto run = [&](unsigned threads, bool is_background_dropped) {
      FunctionalDimensionOptions options;
      options.walk.threads = threads;
      options.points_first = false;
      if (is_background_dropped)
        options.walker = [](const Network& n, const Domain& d, const WalkOptions& o) {
          WalkOptions without = o;
          without.background = {};
          return walk_regions(n, d, without);
        };
      return certify_functional_dimension(network, domain, options);
    };
    for (const auto& [threads, is_background_dropped] :
         std::vector<std::pair<unsigned, bool>>{{1, false}, {2, false}, {3, false}, {2, true}}) {
      const FunctionalDimensionResult result = run(threads, is_background_dropped);
      const std::string where = std::to_string(threads) + (is_background_dropped ? " threads, no background" : " threads");
      EXPECT_TRUE(result.early_stop) << where;
      EXPECT_TRUE(result.certified) << where;
      EXPECT_EQ(result.regions_walked, first) << where;
      EXPECT_EQ(result.walk.regions, first) << where;
      EXPECT_EQ(result.walk.bounded_regions, bounded) << where;
      EXPECT_EQ(result.nonsmooth_regions.size(), nonsmooth) << where;
      for (std::size_t i = 0, k = 0; i < first; ++i) {
        if (!regions[i].nonsmooth_neurons.empty() && k < result.nonsmooth_regions.size()) {
          EXPECT_EQ(result.nonsmooth_regions[k++].first, regions[i].pattern) << where;
        }
      }
      EXPECT_FALSE(result.walk_complete) << where;
      EXPECT_FALSE(result.walk.complete) << where;
      EXPECT_EQ(result.stop_reason, StopReason::none) << where;
    }
  }
  EXPECT_GE(early_stops, 2u);
}

// A stop request that arrives after the walk (here: raised by the first
// progress report of the kernel phase) is obeyed: bounds, never certified.
TEST(FunctionalDimension, InterruptAfterTheWalkGivesBoundsOnly) {
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  std::atomic<bool> interrupt{false};
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.walk.interrupt = &interrupt;
  options.stop_at_scaling_bound = false;
  std::set<std::string> phases;
  options.on_phase = [&](const CertifyProgress& progress) {
    phases.insert(progress.phase);
    interrupt = true;
  };
  const FunctionalDimensionResult result = certify_functional_dimension(network, make_whole_space(2), options);
  EXPECT_TRUE(result.walk_complete);
  EXPECT_TRUE(phases.contains("kernel"));
  EXPECT_FALSE(result.certified);
  EXPECT_FALSE(result.functional_dimension.has_value());
  EXPECT_EQ(result.stop_reason, StopReason::interrupted);
  EXPECT_LE(result.lower_bound, 17u);  // the value, derived above
  EXPECT_GE(result.upper_bound, 17u);
  EXPECT_TRUE(result.extra_kernel.empty());
}

// The time limit covers every phase: one that passes during the region
// check (the progress callback sleeps past it) stops the run with bounds.
TEST(FunctionalDimension, TimeLimitDuringTheCheckGivesBoundsOnly) {
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.walk.time_limit_seconds = 0.3;
  options.stop_at_scaling_bound = false;
  bool slept = false;
  options.on_phase = [&](const CertifyProgress& progress) {
    if (std::string(progress.phase) == "check" && !slept) {
      std::this_thread::sleep_for(std::chrono::milliseconds(400));
      slept = true;
    }
  };
  const FunctionalDimensionResult result = certify_functional_dimension(network, make_whole_space(2), options);
  ASSERT_TRUE(slept);
  EXPECT_TRUE(result.walk_complete);
  EXPECT_FALSE(result.certified);
  EXPECT_EQ(result.stop_reason, StopReason::time_limit);
  EXPECT_LE(result.lower_bound, 17u);
  EXPECT_GE(result.upper_bound, 17u);
}

// A stop while the proved extra directions are being named (after the bounds
// are set) leaves bounds that meet and certified = false: what survey and
// track lines of such a run hold, which their readers must take back.
TEST(FunctionalDimension, StopWhileNamingLeavesMeetingBoundsUncertified) {
  const Network network = random_network({2, 15, 15, 15, 1}, 1);  // 122 extra directions: two chunks
  std::atomic<bool> interrupt{false};
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.walk.interrupt = &interrupt;
  options.stop_at_scaling_bound = false;
  options.on_phase = [&](const CertifyProgress& progress) {
    if (std::string(progress.phase) == "naming") interrupt = true;
  };
  const FunctionalDimensionResult result = certify_functional_dimension(network, make_whole_space(2), options);
  EXPECT_TRUE(result.walk_complete);
  EXPECT_EQ(result.stop_reason, StopReason::interrupted);
  EXPECT_FALSE(result.certified);
  EXPECT_EQ(result.lower_bound, result.upper_bound);
  EXPECT_EQ(result.lower_bound, 374u);  // pleat certify --arch 2,15,15,15,1 --seed 1, run whole
}

// ---- Certified from points, without a walk -----------------------------------

FunctionalDimensionResult certify_with(const Network& network, const Domain& domain, bool points_first,
                                       bool stop_at_scaling_bound, unsigned threads = 1) {
  FunctionalDimensionOptions options;
  options.walk.threads = threads;
  options.points_first = points_first;
  options.stop_at_scaling_bound = stop_at_scaling_bound;
  return certify_functional_dimension(network, domain, options);
}

// The witnesses are the evidence: each lies strictly inside the domain and on
// no bent hyperplane, and the exact rank of their regions' rows (recomputed
// here with exact elimination, not the modular rank certify used) is the value.
void expect_witnesses_prove(const Network& network, const Domain& domain, const FunctionalDimensionResult& result) {
  std::vector<RationalMatrix> blocks;
  for (const RationalVector& point : result.witness_points) {
    for (const auto& side : domain.constraints) {
      Rational value = side.offset;
      for (std::size_t i = 0; i < point.size(); ++i) value += side.normal[i] * point[i];
      EXPECT_GT(value, 0) << "a witness outside the domain";
    }
    const ActivationPattern pattern = pattern_around_point(network, point);
    for (NeuronState state : pattern.states) ASSERT_NE(state, NeuronState::zero_at_point);
    ASSERT_TRUE(nonsmooth_neurons(network, pattern).empty());
    blocks.push_back(coefficient_blocks(network, pattern));
  }
  EXPECT_EQ(rank_exact(stack(blocks, network.parametric_dimension())), *result.functional_dimension);
}

// The no-walk path and the full walk give the same value on every network in
// tests/data and data/ (those at the scaling bound certified from points, the
// others by the walk after the points stall), on R^n and on a box.
TEST(CertifyFromPoints, SameValueAsTheFullWalkOnEveryDataNetwork) {
  std::size_t by_points = 0, networks = 0;
  for (const char* folder : {PLEAT_SOURCE_DIR "/tests/data", PLEAT_SOURCE_DIR "/data"}) {
    for (const auto& entry : std::filesystem::directory_iterator(folder)) {
      if (entry.path().extension() != ".json") continue;
      const Network network = read_network_file(entry.path().string());
      for (const Domain& domain : {make_whole_space(network.input_dim),
                                   make_box(RationalVector(network.input_dim, Rational(-2)),
                                            RationalVector(network.input_dim, Rational(3)))}) {
        const auto fast = certify_with(network, domain, true, true);
        const auto full = certify_with(network, domain, false, false);
        ASSERT_TRUE(full.certified) << entry.path();
        ASSERT_TRUE(fast.certified) << entry.path();
        EXPECT_EQ(fast.functional_dimension, full.functional_dimension) << entry.path() << " " << domain.describe();
        if (fast.certified_by_points) {
          ++by_points;
          EXPECT_EQ(fast.regions_walked, 0u);
          EXPECT_EQ(*fast.functional_dimension, fast.scaling_bound);
          expect_witnesses_prove(network, domain, fast);
        }
        ++networks;
      }
    }
  }
  EXPECT_GT(networks, 30u);
  EXPECT_GT(by_points, 5u);  // the path is really taken
}

TEST(CertifyFromPoints, SameValueAsTheFullWalkOn50RandomSmallNetworks) {
  const std::vector<std::vector<std::size_t>> architectures = {{2, 3, 1}, {2, 4, 1}, {1, 3, 3, 1}, {2, 3, 2, 1}, {3, 3, 1}};
  std::size_t by_points = 0, below_bound = 0;
  for (std::uint64_t seed = 1; seed <= 50; ++seed) {
    const Network network = random_network(architectures[seed % architectures.size()], 500 + seed);
    const Domain domain = make_whole_space(network.input_dim);
    const auto fast = certify_with(network, domain, true, true);
    const auto full = certify_with(network, domain, false, false);
    ASSERT_TRUE(fast.certified && full.certified) << "seed " << seed;
    EXPECT_EQ(fast.functional_dimension, full.functional_dimension) << "seed " << seed;
    by_points += fast.certified_by_points;
    below_bound += *full.functional_dimension < full.scaling_bound;
    if (fast.certified_by_points) expect_witnesses_prove(network, domain, fast);
  }
  EXPECT_GT(by_points, 10u);
  EXPECT_GT(below_bound, 0u);  // the fallback to the walk is exercised too
}

// Networks at the scaling bound in far or thin regions: samples 11, 15, 19
// and 26 of `pleat random --arch 2,5,5,5,1 --seed 1` have the full walk's value
// equal to the scaling bound 66, yet random points alone stall before it (the
// walk then had to run: 9 to 140 regions). Sweeping lines through every piece
// they cross certifies each of them from points, with witnesses that prove it.
// (Without giving up early: on a plane, samples 15 and 19 give up after two
// batches of points, 45 45 and 34 38 of 66, and are walked instead.)
TEST(CertifyFromPoints, LinesCertifyNetworksAtTheBoundThatRandomPointsMiss) {
  for (std::uint64_t sample : {11u, 15u, 19u, 26u}) {
    const Network network = random_network({2, 5, 5, 5, 1}, 1, sample);
    const Domain domain = make_whole_space(2);
    const auto full = certify_with(network, domain, false, false);
    ASSERT_TRUE(full.certified);
    ASSERT_EQ(*full.functional_dimension, full.scaling_bound) << "sample " << sample;
    FunctionalDimensionOptions points_only;
    points_only.walk.threads = 1;
    points_only.sweep_lines = false;
    const auto without_lines = certify_functional_dimension(network, domain, points_only);
    EXPECT_FALSE(without_lines.certified_by_points) << "sample " << sample;
    EXPECT_EQ(without_lines.functional_dimension, full.functional_dimension);
    FunctionalDimensionOptions patient;
    patient.walk.threads = 1;
    patient.give_up_early = false;
    const auto with_lines = certify_functional_dimension(network, domain, patient);
    ASSERT_TRUE(with_lines.certified_by_points) << "sample " << sample;
    EXPECT_EQ(with_lines.regions_walked, 0u);
    EXPECT_EQ(with_lines.functional_dimension, full.functional_dimension);
    expect_witnesses_prove(network, domain, with_lines);
  }
}

// Below the scaling bound (17 < 24, derived above) the points stall and the
// walk certifies the value; the rows the points found are kept.
TEST(CertifyFromPoints, FallsBackToTheWalkBelowTheScalingBound) {
  const Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  const auto result = certify_with(network, make_whole_space(2), true, true);
  ASSERT_TRUE(result.certified);
  EXPECT_FALSE(result.certified_by_points);
  EXPECT_EQ(*result.functional_dimension, 17u);
  EXPECT_GT(result.points_drawn, 0u);
  EXPECT_TRUE(result.walk_complete);
}

// Giving up early (give_up_early): on a network far below its bound (`pleat
// random --arch 2,15,15,15,1 --seed 1`: 374 < 496) the points and lines end
// well before their stalls would end them, with the same value; on one at
// its bound whose last rows come slowly (`--arch 6,20,10,1 --seed 1`: 331,
// the rank within 1 of it for hundreds of points) they do not give up, and
// the value is still certified from points (a walk there takes minutes).
TEST(CertifyFromPoints, GivesUpEarlyFarBelowTheBoundOnly) {
  const Network below = random_network({2, 15, 15, 15, 1}, 1);
  const Domain plane = make_whole_space(2);
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.walk.time_limit_seconds = 120;
  const auto early = certify_functional_dimension(below, plane, options);
  options.give_up_early = false;
  const auto patient = certify_functional_dimension(below, plane, options);
  ASSERT_TRUE(early.certified && patient.certified);
  EXPECT_EQ(*early.functional_dimension, 374u);
  EXPECT_EQ(early.functional_dimension, patient.functional_dimension);
  EXPECT_LT(early.points_drawn, patient.points_drawn * 2 / 3);
  // On a plane the first two batches of 32 points are judged before any of
  // their rows is eliminated: their new regions have 90 and then 57 rows, 496
  // to reach, so the points end there, none of their rows kept (the first
  // witness is a walked region's, not the first point as without giving up),
  // and no line is swept (both would add every row the walk adds). Without
  // that, the rank's rise would have ended them after the same two batches
  // (90 138), and over two batches against the two before after the sixth
  // (90 138 185 223 260 277).
  EXPECT_EQ(early.points_drawn, 2u * 32u);
  const RationalVector first_point = InteriorPointSource(plane, options.points_seed).next();
  ASSERT_FALSE(early.witness_points.empty());
  EXPECT_NE(early.witness_points.front(), first_point);
  EXPECT_EQ(patient.witness_points.front(), first_point);

  const Network at = random_network({6, 20, 10, 1}, 1);
  options.give_up_early = true;
  const auto result = certify_functional_dimension(at, make_whole_space(6), options);
  ASSERT_TRUE(result.certified);
  EXPECT_TRUE(result.certified_by_points);
  EXPECT_EQ(*result.functional_dimension, result.scaling_bound);
  EXPECT_EQ(result.scaling_bound, 331u);
}

// On a plane the forecast from one batch's rise still keeps a network whose
// rank keeps rising to its bound (`--arch 2,100,1 --seed 1`: 96 189 285 301,
// its walk 4436 regions): certified from points, no walk.
TEST(CertifyFromPoints, OnAPlaneKeepsPointsThatRiseToTheBound) {
  const Network network = random_network({2, 100, 1}, 1);
  const auto result = certify_with(network, make_whole_space(2), true, true);
  ASSERT_TRUE(result.certified);
  EXPECT_TRUE(result.certified_by_points);
  EXPECT_EQ(result.regions_walked, 0u);
  EXPECT_EQ(*result.functional_dimension, result.scaling_bound);
  EXPECT_EQ(result.scaling_bound, 301u);
}

// On a plane the points stop when finishing on them is forecast dearer than
// the walk (detail::PlanarPointsCost): below their bound, 2,8,8,1 sample 19
// (88 < 89) drew 524 points and swept lines over nearly every region its walk
// then visited again, 2,10,10,10,1 sample 26 (226 < 231) 809, and
// 2,15,15,15,1 sample 2 (461 < 496) eliminated six batches; now 128, 224 and
// the first two batches, none eliminated (finishing was forecast at more than
// the 270 regions their landings suggest). The value is the full walk's.
// Networks at their bound whose walk is dear keep their points (data/fold2d
// 140 points; OnAPlaneKeepsPointsThatRiseToTheBound).
TEST(CertifyFromPoints, OnAPlaneStopsWhenFinishingOnPointsCostsMoreThanTheWalk) {
  struct Case {
    std::vector<std::size_t> widths;
    std::uint64_t sample;
    std::size_t most_points;
  };
  for (const Case& c : {Case{{2, 8, 8, 1}, 19, 128}, Case{{2, 10, 10, 10, 1}, 26, 224}, Case{{2, 15, 15, 15, 1}, 2, 64}}) {
    const Network network = random_network(c.widths, 1, c.sample);
    const Domain plane = make_whole_space(2);
    const auto fast = certify_with(network, plane, true, true);
    const auto full = certify_with(network, plane, false, false);
    ASSERT_TRUE(fast.certified && full.certified) << c.sample;
    EXPECT_EQ(fast.functional_dimension, full.functional_dimension) << c.sample;
    EXPECT_LT(*fast.functional_dimension, fast.scaling_bound) << c.sample;
    EXPECT_LE(fast.points_drawn, c.most_points) << c.sample;
  }
  const Network fold = read_network_file(PLEAT_SOURCE_DIR "/data/fold2d.json");
  const auto at = certify_with(fold, make_whole_space(2), true, true);
  EXPECT_TRUE(at.certified_by_points);
  EXPECT_EQ(at.regions_walked, 0u);
}

TEST(ReachForecast, RegionsEstimateAndThePlanarCostRule) {
  // Equal areas: 100 regions and 200 points find 100 (1 - e^-2) = 86.5 of them.
  EXPECT_NEAR(detail::regions_estimate(200, 86), 99.0, 2.0);
  EXPECT_EQ(detail::regions_estimate(64, 64), 64.0 * 64.0);  // every point in its own region
  EXPECT_GE(detail::regions_estimate(64, 10), 10.0);
  // Rank 290 of 301 in 401 columns, a row every 2 points: about 27 regions
  // to finish, against a walk of 1000 (go on) or 10 (give up).
  EXPECT_FALSE(detail::points_dearer_than_walk(290, 301, 401, 2, 1000));
  EXPECT_TRUE(detail::points_dearer_than_walk(290, 301, 401, 2, 10));
  EXPECT_FALSE(detail::points_dearer_than_walk(301, 301, 401, 2, 0.5));  // at the bound: nothing left
  // After each batch: judged from the second on, at the last two batches' rise.
  detail::PlanarPointsCost cost(89, 105, 32);
  EXPECT_FALSE(cost.dearer_than_walk(32, 62, 23, 0));
  EXPECT_FALSE(cost.dearer_than_walk(64, 76, 36, 0));   // 76 rows in 64 points: about 10 regions to finish, 50 estimated
  EXPECT_FALSE(cost.dearer_than_walk(96, 76, 46, 32));  // 14 rows in the last 64 points: about 35 of 57
  // No rise in the last two batches: a row per 96 points (64 since the last
  // rise and a batch), 13 missing: over 600 regions, against about 58.
  EXPECT_TRUE(cost.dearer_than_walk(128, 76, 52, 64));
}

// On a plane a neuron past the first hidden layer that has one state at all
// of the first two batches' 64 points proposes a value below the bound: the
// walk runs at once, none of their rows eliminated (the first witness is a
// walked region's, not the first point's) and their regions' rows handed to
// it. `pleat random --arch 2,10,10,10,1 --seed 1 --sample 2` (190 < 231)
// eliminated three batches before (96 points), samples 0 and 4 of 2,5,5,5,1
// (51 and 50 < 66) two. The value is the full walk's. Sample 1 (at its bound
// 66, every such neuron turning among the points) is certified from points.
TEST(CertifyFromPoints, OnAPlaneAStableDeeperNeuronSendsThePointsToTheWalk) {
  const Domain plane = make_whole_space(2);
  const RationalVector first_point = InteriorPointSource(plane, FunctionalDimensionOptions().points_seed).next();
  struct Case {
    std::vector<std::size_t> widths;
    std::uint64_t sample;
  };
  for (const Case& c : {Case{{2, 10, 10, 10, 1}, 2}, Case{{2, 5, 5, 5, 1}, 0}, Case{{2, 5, 5, 5, 1}, 4}}) {
    const Network network = random_network(c.widths, 1, c.sample);
    const auto fast = certify_with(network, plane, true, true);
    const auto full = certify_with(network, plane, false, false);
    ASSERT_TRUE(fast.certified && full.certified) << c.sample;
    EXPECT_EQ(fast.functional_dimension, full.functional_dimension) << c.sample;
    EXPECT_LT(*fast.functional_dimension, fast.scaling_bound) << c.sample;
    EXPECT_EQ(fast.points_drawn, 64u) << c.sample;
    ASSERT_FALSE(fast.witness_points.empty());
    EXPECT_NE(fast.witness_points.front(), first_point) << c.sample;
  }
  const auto at = certify_with(random_network({2, 5, 5, 5, 1}, 1, 1), plane, true, true);
  EXPECT_TRUE(at.certified_by_points);
  EXPECT_EQ(*at.functional_dimension, 66u);
}

// A neuron past the first hidden layer with one state at every smooth point
// of the first two batches proposes a value below the bound
// (detail::deeper_neuron_stable_at); here neurons 0 and 1 form the first
// layer, 2 and 3 the second.
TEST(ReachForecast, AStableDeeperNeuronProposesAValueBelowTheBound) {
  using detail::PointRegion;
  using detail::PointVerdict;
  using S = NeuronState;
  auto at = [](std::vector<S> states, PointVerdict verdict = PointVerdict::smooth) {
    return PointRegion{verdict, ActivationPattern{std::move(states)}};
  };
  const std::vector<PointRegion> turning = {at({S::on, S::off, S::on, S::off}), at({S::off, S::off, S::off, S::on})};
  EXPECT_FALSE(detail::deeper_neuron_stable_at({turning}, 2));  // neuron 1, off at both, is in the first layer
  const std::vector<PointRegion> stable = {at({S::on, S::off, S::on, S::off}), at({S::off, S::on, S::on, S::on})};
  EXPECT_TRUE(detail::deeper_neuron_stable_at({stable}, 2));  // neuron 2 on at both
  EXPECT_FALSE(detail::deeper_neuron_stable_at({stable}, 4));  // no neuron past the first layer
  // Over both batches; a point on a bent hyperplane or in a region without smooth points does not count.
  const std::vector<PointRegion> off = {at({S::on, S::on, S::off, S::on})};
  EXPECT_FALSE(detail::deeper_neuron_stable_at({stable, off}, 2));
  const std::vector<PointRegion> not_counted = {at({S::on, S::on, S::off, S::on}, PointVerdict::on_bent_hyperplane),
                                                at({S::on, S::on, S::off, S::on}, PointVerdict::not_smooth)};
  EXPECT_TRUE(detail::deeper_neuron_stable_at({stable, not_counted}, 2));
  // Identically zero ('z') at every point: neither on nor off.
  const std::vector<PointRegion> zero = {at({S::on, S::off, S::zero_on_region, S::off}),
                                         at({S::off, S::on, S::zero_on_region, S::on})};
  EXPECT_FALSE(detail::deeper_neuron_stable_at({zero}, 2));
}

TEST(CertifyFromPoints, SameResultForAnyThreadCount) {
  for (const Network& network : {random_network({2, 5, 5, 1}, 21), random_network({3, 4, 4, 1}, 22),
                                 random_network({2, 6, 1}, 23), random_network({2, 5, 5, 5, 1}, 1, 15)}) {
    const Domain domain = make_whole_space(network.input_dim);
    const auto one = certify_with(network, domain, true, true, 1);
    const auto two = certify_with(network, domain, true, true, 2);
    EXPECT_EQ(one.functional_dimension, two.functional_dimension);
    EXPECT_EQ(one.certified_by_points, two.certified_by_points);
    EXPECT_EQ(one.points_drawn, two.points_drawn);
    EXPECT_EQ(one.witness_points, two.witness_points);
    EXPECT_EQ(one.lower_bound, two.lower_bound);
  }
}

// A stop request before the points reach the bound gives bounds, no walk.
TEST(CertifyFromPoints, InterruptDuringThePointsGivesBoundsOnly) {
  const Network network = random_network({2, 6, 6, 1}, 24);
  std::atomic<bool> interrupt{false};
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.walk.interrupt = &interrupt;
  options.on_phase = [&](const CertifyProgress& progress) {
    if (std::string(progress.phase) == "points") interrupt = true;
  };
  const auto result = certify_functional_dimension(network, make_whole_space(2), options);
  EXPECT_FALSE(result.certified);
  EXPECT_EQ(result.stop_reason, StopReason::interrupted);
  EXPECT_EQ(result.regions_walked, 0u);
  EXPECT_LE(result.lower_bound, result.upper_bound);
}

}  // namespace
}  // namespace pleat
