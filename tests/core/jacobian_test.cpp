// Parameter Jacobians and coefficient blocks, each checked against an
// independent computation: F on a fixed pattern is affine in every single
// parameter (each parameter sits in one layer, and with the pattern fixed
// the network is linear in each layer's weights and bias), so the exact
// difference quotient of maps_on_pattern's (A, c) along one parameter is
// that parameter's column of the blocks, for any step.
#include "core/jacobian.hpp"

#include "core/evaluate.hpp"
#include "core/rank.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <algorithm>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

namespace pleat {
namespace {

Rational small_rational(std::mt19937_64& random) {
  std::uniform_int_distribution<int> numerator(-9, 9);
  std::uniform_int_distribution<int> denominator(1, 7);
  const int d = denominator(random);  // drawn first: a call's argument order is unspecified
  Rational value(numerator(random), d);
  value.canonicalize();
  return value;
}

// widths = {n0, n1, ..., nd}; generic small rationals (nonzero biases so the
// hyperplanes are in general position with high probability).
Network random_small_network(const std::vector<std::size_t>& widths, bool output_relu,
                             std::uint64_t seed) {
  std::mt19937_64 random(seed);
  Network network;
  network.input_dim = widths[0];
  for (std::size_t k = 1; k < widths.size(); ++k) {
    Layer layer;
    layer.weights = RationalMatrix(widths[k], widths[k - 1]);
    for (std::size_t r = 0; r < widths[k]; ++r)
      for (std::size_t c = 0; c < widths[k - 1]; ++c) layer.weights(r, c) = small_rational(random);
    for (std::size_t r = 0; r < widths[k]; ++r) {
      Rational b = small_rational(random);
      if (b == 0) b = Rational(1, 2);
      layer.bias.push_back(b);
    }
    const bool is_last = k + 1 == widths.size();
    layer.activation = is_last && !output_relu ? Activation::linear : Activation::relu;
    network.layers.push_back(std::move(layer));
  }
  network.validate();
  return network;
}

// A random pattern over {0, 1} (realised or not: the algebra holds for any).
ActivationPattern random_pattern(const Network& network, std::mt19937_64& random,
                                 bool with_zero_states = false) {
  ActivationPattern pattern;
  for (std::size_t i = 0; i < network.relu_neuron_count(); ++i) {
    const auto draw = random() % (with_zero_states ? 3 : 2);
    pattern.states.push_back(draw == 0   ? NeuronState::off
                             : draw == 1 ? NeuronState::on
                                         : NeuronState::zero_on_region);
  }
  return pattern;
}

Rational& parameter(Network& network, std::size_t index) {
  for (std::size_t k = 0; k < network.depth(); ++k) {
    Layer& layer = network.layers[k];
    const std::size_t weight_count = layer.width() * layer.fan_in();
    if (index < weight_count) return layer.weights(index / layer.fan_in(), index % layer.fan_in());
    index -= weight_count;
    if (index < layer.width()) return layer.bias[index];
    index -= layer.width();
  }
  throw usage_error("parameter: index out of range");
}

// The blocks by exact difference quotients of maps_on_pattern (see the top).
RationalMatrix blocks_by_difference_quotients(const Network& network, const ActivationPattern& pattern) {
  const std::size_t n0 = network.input_dim;
  const std::size_t nd = network.output_dim();
  const std::size_t dimension = network.parametric_dimension();
  const AffineMap base = maps_on_pattern(network, pattern).output;
  const Rational step(3, 7);
  RationalMatrix blocks(nd * (n0 + 1), dimension);
  for (std::size_t p = 0; p < dimension; ++p) {
    Network moved = network;
    parameter(moved, p) += step;
    const AffineMap shifted = maps_on_pattern(moved, pattern).output;
    for (std::size_t o = 0; o < nd; ++o) {
      blocks(o * (n0 + 1), p) = (shifted.offset[o] - base.offset[o]) / step;
      for (std::size_t t = 0; t < n0; ++t)
        blocks(o * (n0 + 1) + 1 + t, p) = (shifted.linear(o, t) - base.linear(o, t)) / step;
    }
  }
  return blocks;
}

// J(x) by exact difference quotients of the output on x's pattern (step 1).
RationalMatrix jacobian_by_difference_quotients(const Network& network, const ActivationPattern& pattern,
                                                const RationalVector& x) {
  const RationalVector value = maps_on_pattern(network, pattern).output(x);
  RationalMatrix jacobian(network.output_dim(), network.parametric_dimension());
  for (std::size_t p = 0; p < network.parametric_dimension(); ++p) {
    Network moved = network;
    parameter(moved, p) += 1;
    const RationalVector shifted = maps_on_pattern(moved, pattern).output(x);
    for (std::size_t o = 0; o < network.output_dim(); ++o) jacobian(o, p) = shifted[o] - value[o];
  }
  return jacobian;
}

bool has_point_zero(const ActivationPattern& pattern) {
  for (NeuronState state : pattern.states)
    if (state == NeuronState::zero_at_point) return true;
  return false;
}

// n0 + 1 affinely independent points strictly inside one region: a random
// rational x0 with no zero pre-activation, and x0 + h e_t with h halved until
// every point has x0's pattern (x0 is interior, so this ends).
std::vector<RationalVector> points_in_one_region(const Network& network, std::mt19937_64& random,
                                                 ActivationPattern& pattern) {
  RationalVector x0;
  do {
    x0.clear();
    for (std::size_t t = 0; t < network.input_dim; ++t) x0.push_back(small_rational(random));
    pattern = evaluate_exact(network, x0).pattern;
  } while (has_point_zero(pattern));
  std::vector<RationalVector> points{x0};
  for (std::size_t t = 0; t < network.input_dim; ++t) {
    Rational h(1);
    RationalVector x = x0;
    for (x[t] = x0[t] + h; evaluate_exact(network, x).pattern != pattern; x[t] = x0[t] + h) h /= 2;
    points.push_back(x);
  }
  return points;
}

RationalMatrix stack(const std::vector<RationalMatrix>& parts) {
  std::size_t rows = 0;
  for (const auto& part : parts) rows += part.rows();
  RationalMatrix out(rows, parts.at(0).cols());
  std::size_t r = 0;
  for (const auto& part : parts)
    for (std::size_t i = 0; i < part.rows(); ++i, ++r) out.set_row(r, part.row(i));
  return out;
}

struct Shape {
  std::vector<std::size_t> widths;
  bool output_relu;
};
const std::vector<Shape> shapes = {
    {{2, 3, 1}, false}, {{2, 4, 3, 2}, false}, {{3, 3, 3, 1}, false},
    {{1, 2, 1}, true},  {{2, 3, 2}, true},     {{1, 3, 2, 2}, false},
};

TEST(CoefficientBlocks, EqualExactDifferenceQuotientsOfThePatternMaps) {
  std::mt19937_64 random(1);
  for (std::size_t s = 0; s < shapes.size(); ++s) {
    const Network network = random_small_network(shapes[s].widths, shapes[s].output_relu, 100 + s);
    for (int trial = 0; trial < 3; ++trial) {
      const ActivationPattern pattern = random_pattern(network, random, trial == 2);
      const RationalMatrix blocks = coefficient_blocks(network, pattern);
      ASSERT_EQ(blocks.rows(), network.output_dim() * (network.input_dim + 1));
      ASSERT_EQ(blocks.cols(), network.parametric_dimension());
      EXPECT_EQ(blocks, blocks_by_difference_quotients(network, pattern)) << "shape " << s;
    }
  }
}

TEST(CoefficientBlocks, RowIndicesFollowTheDocumentedLayout) {
  const Network network = random_small_network({3, 2, 2}, false, 5);
  EXPECT_EQ(coefficient_row_of_offset(network, 1), 4u);
  EXPECT_EQ(coefficient_row_of_slope(network, 1, 2), 7u);
  EXPECT_THROW(coefficient_row_of_slope(network, 2, 0), usage_error);
}

// The test: the blocks of a region and the Jacobians at n0 + 1
// affinely independent interior points span the same row space (identical
// canonical bases, hence identical ranks).
TEST(CoefficientBlocks, SpanTheSameSpaceAsJacobiansAtInteriorPoints) {
  std::mt19937_64 random(2);
  for (std::size_t s = 0; s < shapes.size(); ++s) {
    const Network network = random_small_network(shapes[s].widths, shapes[s].output_relu, 200 + s);
    std::size_t largest_rank = 0;
    for (int trial = 0; trial < 4; ++trial) {
      ActivationPattern pattern;
      const auto points = points_in_one_region(network, random, pattern);
      std::vector<RationalMatrix> jacobians;
      for (const auto& x : points) {
        jacobians.push_back(jacobian_by_difference_quotients(network, pattern, x));
        ASSERT_EQ(parameter_jacobian_exact(network, x), jacobians.back()) << "shape " << s;
      }
      const RationalMatrix stacked = stack(jacobians);
      const RationalMatrix blocks = coefficient_blocks(network, pattern);
      EXPECT_EQ(rank_exact(stacked), rank_exact(blocks)) << "shape " << s;
      largest_rank = std::max(largest_rank, rank_exact(blocks));
      EXPECT_EQ(row_space_basis_exact(stacked), row_space_basis_exact(blocks)) << "shape " << s;
      // And each Jacobian is the documented combination of block rows.
      const std::size_t n0 = network.input_dim;
      for (std::size_t o = 0; o < network.output_dim(); ++o)
        for (std::size_t c = 0; c < blocks.cols(); ++c) {
          Rational expected = blocks(coefficient_row_of_offset(network, o), c);
          for (std::size_t t = 0; t < n0; ++t)
            expected += points[1][t] * blocks(coefficient_row_of_slope(network, o, t), c);
          ASSERT_EQ(jacobians[1](o, c), expected);
        }
    }
    // Not only dead regions: the comparison saw rows (the ReLU-output shape
    // {1, 2, 1} may land where its output is off).
    if (s != 3) {
      EXPECT_GE(largest_rank, 2u) << "shape " << s;
    }
  }
}

TEST(ParameterJacobian, PointOnABentHyperplaneIsAnInputErrorNamingTheNeuron) {
  // Hidden neurons x, x - 1; output their sum. At x = 1 neuron 1 is 0.
  Network network;
  network.input_dim = 1;
  Layer hidden;
  hidden.weights = RationalMatrix(2, 1);
  hidden.weights(0, 0) = 1;
  hidden.weights(1, 0) = 1;
  hidden.bias = {0, -1};
  Layer output;
  output.weights = RationalMatrix(1, 2);
  output.weights(0, 0) = 1;
  output.weights(0, 1) = 1;
  output.bias = {0};
  output.activation = Activation::linear;
  network.layers = {hidden, output};
  try {
    parameter_jacobian_exact(network, {Rational(1)});
    FAIL() << "expected input_error";
  } catch (const input_error& error) {
    EXPECT_NE(std::string(error.what()).find("neuron 1"), std::string::npos) << error.what();
  }
  EXPECT_THROW(parameter_jacobian_exact(network, {Rational(1), Rational(2)}), usage_error);
  EXPECT_NO_THROW(parameter_jacobian_exact(network, {Rational(1, 2)}));
}

TEST(ParameterJacobian, DoubleAgreesWithExactAtInteriorPoints) {
  std::mt19937_64 random(4);
  for (std::size_t s = 0; s < shapes.size(); ++s) {
    const Network network = random_small_network(shapes[s].widths, shapes[s].output_relu, 400 + s);
    const DoubleNetwork rounded = to_double(network);
    ActivationPattern pattern;
    const RationalVector x = points_in_one_region(network, random, pattern)[0];
    const RationalMatrix exact = parameter_jacobian_exact(network, x);
    const DoubleMatrix approximate = parameter_jacobian_double(rounded, to_double(x));
    ASSERT_EQ(approximate.rows(), exact.rows());
    ASSERT_EQ(approximate.cols(), exact.cols());
    for (std::size_t r = 0; r < exact.rows(); ++r)
      for (std::size_t c = 0; c < exact.cols(); ++c) {
        const double expected = to_double(exact(r, c));
        EXPECT_NEAR(approximate(r, c), expected, 1e-9 * (1 + std::fabs(expected)));
      }
  }
}

TEST(CoefficientBlocksMod, EqualTheExactBlocksReducedModP) {
  std::mt19937_64 random(6);
  for (std::size_t s = 0; s < shapes.size(); ++s) {
    const Network network = random_small_network(shapes[s].widths, shapes[s].output_relu, 600 + s);
    for (std::uint64_t p : {primary_prime(), screening_prime(), std::uint64_t{101}}) {
      const auto modular = reduce_modulo(network, p);
      ASSERT_TRUE(modular.has_value());  // denominators are at most 7
      for (int trial = 0; trial < 3; ++trial) {
        const ActivationPattern pattern = random_pattern(network, random, trial == 2);
        const auto expected = reduce_modulo(coefficient_blocks(network, pattern), p);
        ASSERT_TRUE(expected.has_value());
        EXPECT_EQ(coefficient_blocks_mod(*modular, pattern), *expected) << "shape " << s;
      }
    }
  }
}

TEST(CoefficientBlocksMod, ReportsADenominatorDivisibleByThePrime) {
  Network network = random_small_network({2, 2, 1}, false, 8);
  network.layers[0].bias[1] = Rational(1, 7);
  EXPECT_FALSE(reduce_modulo(network, 7).has_value());
  const ModularNetwork chosen = reduce_modulo_some_prime(network, 7);
  EXPECT_EQ(chosen.prime, 11u);  // 7 divides a denominator; 11 is the next prime
  EXPECT_EQ((chosen.bias[0][1] * 7) % 11, 1u);
  EXPECT_THROW(reduce_modulo(network, 1), usage_error);
}

// Every scaling direction annihilates every block row exactly, on any
// pattern (including 'z' states), and every Jacobian row.
TEST(ScalingDirections, AnnihilateEveryBlockRow) {
  std::mt19937_64 random(10);
  for (std::size_t s = 0; s < shapes.size(); ++s) {
    const Network network = random_small_network(shapes[s].widths, shapes[s].output_relu, 700 + s);
    const RationalMatrix directions = scaling_directions(network);
    ASSERT_EQ(directions.rows(), network.hidden_neuron_count());
    for (int trial = 0; trial < 4; ++trial) {
      const RationalMatrix blocks = coefficient_blocks(network, random_pattern(network, random, trial > 1));
      for (std::size_t v = 0; v < directions.rows(); ++v) {
        const RationalVector image = product(blocks, directions.row(v));
        for (std::size_t r = 0; r < image.size(); ++r)
          ASSERT_EQ(image[r], 0) << "shape " << s << " direction " << v << " row " << r;
      }
    }
    // Generic parameters: the directions are independent.
    EXPECT_EQ(scaling_bound(network), network.parametric_dimension() - network.hidden_neuron_count());
  }
}

TEST(ScalingDirections, HandWorkedSmallNetwork) {
  // 1 -> 1 -> 1: h = relu(2x + 3), F = 5h + 7. theta = (W1, b1, W2, b2).
  Network network;
  network.input_dim = 1;
  Layer hidden;
  hidden.weights = RationalMatrix(1, 1);
  hidden.weights(0, 0) = 2;
  hidden.bias = {3};
  Layer output;
  output.weights = RationalMatrix(1, 1);
  output.weights(0, 0) = 5;
  output.bias = {7};
  output.activation = Activation::linear;
  network.layers = {hidden, output};
  const RationalMatrix directions = scaling_directions(network);
  ASSERT_EQ(directions.rows(), 1u);
  EXPECT_EQ(directions.row(0), (RationalVector{2, 3, -5, 0}));
  // On pattern "1": F = 10x + 15 + 7; dc = (0, 5, 3, 1), dA = (5, 0, 2, 0) by hand.
  const RationalMatrix blocks = coefficient_blocks(network, ActivationPattern{{NeuronState::on}});
  EXPECT_EQ(blocks.row(0), (RationalVector{0, 5, 3, 1}));
  EXPECT_EQ(blocks.row(1), (RationalVector{5, 0, 2, 0}));
  EXPECT_EQ(scaling_bound(network), 3u);
}

// scaling_structure reads the rank and pivots off the zero pattern; here it
// is compared with exact elimination on the dense directions, on networks
// with many zero parameters (so that components without the ground vertex,
// zero columns and cycles all occur): the rank against rank_exact, the pivot
// columns against those of the reduced row-echelon form, the independent
// neurons against a greedy exact choice in row order.
TEST(ScalingStructure, MatchesExactEliminationOnSparseNetworks) {
  std::mt19937_64 random(31);
  std::size_t short_of_full_rank = 0;
  for (int trial = 0; trial < 60; ++trial) {
    const std::vector<std::vector<std::size_t>> architectures = {
        {2, 3, 1}, {1, 3, 3, 1}, {2, 2, 2, 2, 2}, {3, 4, 2, 2}, {2, 3, 3, 1}};
    Network network = random_small_network(architectures[trial % 5], trial % 3 == 0, 1300 + trial);
    std::bernoulli_distribution is_zeroed(trial < 30 ? 0.5 : 0.7);
    for (Layer& layer : network.layers) {
      for (std::size_t r = 0; r < layer.weights.rows(); ++r)
        for (std::size_t c = 0; c < layer.weights.cols(); ++c)
          if (is_zeroed(random)) layer.weights(r, c) = 0;
      for (Rational& b : layer.bias)
        if (is_zeroed(random)) b = 0;
    }
    const RationalMatrix directions = scaling_directions(network);
    const ScalingStructure structure = scaling_structure(network);
    const std::size_t rank = rank_exact(directions);
    ASSERT_EQ(structure.rank, rank) << "trial " << trial;
    EXPECT_EQ(scaling_bound(network), network.parametric_dimension() - rank);
    short_of_full_rank += rank < network.hidden_neuron_count();

    const RationalMatrix echelon = row_space_basis_exact(directions);
    std::vector<std::size_t> pivots;
    for (std::size_t r = 0; r < echelon.rows(); ++r) {
      std::size_t c = 0;
      while (echelon(r, c) == 0) ++c;
      pivots.push_back(c);
    }
    EXPECT_EQ(structure.pivot_columns, pivots) << "trial " << trial;

    std::vector<std::size_t> greedy;
    for (std::size_t n = 0; n < directions.rows(); ++n) {
      std::vector<std::size_t> candidate = greedy;
      candidate.push_back(n);
      if (rank_exact(scaling_directions(network, candidate)) == candidate.size()) greedy = candidate;
    }
    EXPECT_EQ(structure.independent_neurons, greedy) << "trial " << trial;

    // The block the header calls nonsingular.
    const RationalMatrix rows = scaling_directions(network, structure.independent_neurons);
    RationalMatrix block(rows.rows(), structure.pivot_columns.size());
    for (std::size_t r = 0; r < rows.rows(); ++r)
      for (std::size_t c = 0; c < structure.pivot_columns.size(); ++c) block(r, c) = rows(r, structure.pivot_columns[c]);
    EXPECT_EQ(rank_exact(block), structure.rank) << "trial " << trial;
  }
  EXPECT_GT(short_of_full_rank, 10u);  // the sparse draws do reach the degenerate cases
}

// A chain of hidden neurons joined only to each other (no biases, no input
// or output weights on them) is one component without the ground vertex:
// its directions satisfy one relation, their sum (each weight appears with
// + in one direction and - in the next). Worked by hand.
TEST(ScalingStructure, FloatingChainLosesOneRank) {
  Network network;
  network.input_dim = 1;
  for (int k = 0; k < 4; ++k) {
    Layer layer;
    layer.weights = RationalMatrix(1, 1);
    layer.weights(0, 0) = k == 0 || k == 3 ? 0 : k + 1;
    layer.bias = {0};
    layer.activation = k == 3 ? Activation::linear : Activation::relu;
    network.layers.push_back(std::move(layer));
  }
  const ScalingStructure structure = scaling_structure(network);
  EXPECT_EQ(structure.rank, 2u);  // 3 hidden neurons, one relation
  EXPECT_EQ(structure.independent_neurons, (std::vector<std::size_t>{0, 1}));
  EXPECT_EQ(structure.pivot_columns, (std::vector<std::size_t>{2, 4}));  // W2[0,0], W3[0,0]
  EXPECT_EQ(scaling_bound(network), network.parametric_dimension() - 2);
  EXPECT_THROW(scaling_directions(network, {3}), usage_error);
}

// One input, m hidden neurons, one linear output, generic: the union of the
// blocks of all m + 1 regions has rank 2m + 1. Derivation: F is continuous
// piecewise linear with m breakpoints; a function of that form is fixed by
// the m breakpoints, the m slope changes and one value (the offset on a
// region), 2m + 1 numbers, and the map from theta onto them is submersive at
// generic theta. That equals the scaling bound D - m = (3m + 1) - m.
// With one neuron off on all of R (zero weight, negative bias) it drops to
// 2(m - 1) + 1: that neuron's parameters stop mattering.
std::size_t one_input_rank(const Network& network) {
  // Region points: between and beyond the sorted breakpoints -b_i / w_i.
  std::vector<Rational> breakpoints;
  const Layer& hidden = network.layers[0];
  for (std::size_t i = 0; i < hidden.width(); ++i)
    if (hidden.weights(i, 0) != 0) breakpoints.push_back(-hidden.bias[i] / hidden.weights(i, 0));
  std::sort(breakpoints.begin(), breakpoints.end());
  // No breakpoint (every neuron flat in x): one region, any point.
  std::vector<Rational> points{breakpoints.empty() ? Rational(0) : breakpoints.front() - 1};
  if (!breakpoints.empty()) points.push_back(breakpoints.back() + 1);
  for (std::size_t i = 0; i + 1 < breakpoints.size(); ++i)
    points.push_back((breakpoints[i] + breakpoints[i + 1]) / 2);
  std::vector<RationalMatrix> blocks;
  for (const Rational& x : points) {
    const ActivationPattern pattern = evaluate_exact(network, {x}).pattern;
    EXPECT_FALSE(has_point_zero(pattern));
    blocks.push_back(coefficient_blocks(network, pattern));
  }
  return rank_exact(stack(blocks));
}

TEST(CoefficientBlocks, OneInputShallowNetworkReaches2mPlus1) {
  for (std::size_t m = 1; m <= 5; ++m) {
    const Network network = random_small_network({1, m, 1}, false, 900 + m);
    EXPECT_EQ(one_input_rank(network), 2 * m + 1) << "m = " << m;
    EXPECT_EQ(scaling_bound(network), 2 * m + 1);
  }
}

TEST(CoefficientBlocks, OneInputShallowNetworkWithADeadNeuron) {
  for (std::size_t m = 2; m <= 5; ++m) {
    Network network = random_small_network({1, m, 1}, false, 950 + m);
    network.layers[0].weights(0, 0) = 0;  // neuron 0: z = -2 < 0 everywhere
    network.layers[0].bias[0] = -2;
    EXPECT_EQ(one_input_rank(network), 2 * (m - 1) + 1) << "m = " << m;
  }
}

// 1 -> 2 -> 1 -> 1. Hidden a = relu(x), b = relu(-x); c = relu(a + 0): for
// x < 0, a is off, so c's pre-activation is identically 0 ('z'). Its backward
// signal is the output weight u on c.
Network network_with_a_zero_neuron(const Rational& u) {
  Network network;
  network.input_dim = 1;
  Layer first;
  first.weights = RationalMatrix(2, 1);
  first.weights(0, 0) = 1;
  first.weights(1, 0) = -1;
  first.bias = {0, 0};
  Layer second;
  second.weights = RationalMatrix(1, 2);
  second.weights(0, 0) = 1;
  second.bias = {0};
  Layer output;
  output.weights = RationalMatrix(1, 1);
  output.weights(0, 0) = u;
  output.bias = {1};
  output.activation = Activation::linear;
  network.layers = {first, second, output};
  return network;
}

TEST(NonsmoothNeurons, ZeroNeuronWithNonzeroSignalIsNamed) {
  const ActivationPattern pattern{{NeuronState::off, NeuronState::on, NeuronState::zero_on_region}};
  EXPECT_EQ(nonsmooth_neurons(network_with_a_zero_neuron(3), pattern), (std::vector<std::size_t>{2}));
  // Zero outgoing weight: the signal is 0, the region is smooth, and its rows
  // are 0 in neuron 2's incoming columns (W2[0,0], W2[0,1], b2[0]: 4, 5, 6).
  const Network silent = network_with_a_zero_neuron(0);
  EXPECT_TRUE(nonsmooth_neurons(silent, pattern).empty());
  const RationalMatrix blocks = coefficient_blocks(silent, pattern);
  for (std::size_t r = 0; r < blocks.rows(); ++r)
    for (std::size_t c : {4, 5, 6}) EXPECT_EQ(blocks(r, c), 0);
  // No 'z' state: nothing to report.
  const ActivationPattern smooth{{NeuronState::on, NeuronState::off, NeuronState::on}};
  EXPECT_TRUE(nonsmooth_neurons(network_with_a_zero_neuron(3), smooth).empty());
}

TEST(NonsmoothNeurons, SignalIsTakenThroughThePattern) {
  // A 'z' first-layer neuron whose only path to the output runs through an
  // off neuron has zero signal; through an on neuron, nonzero.
  Network network = random_small_network({2, 2, 2, 1}, false, 31);
  network.layers[1].weights(0, 0) = 1;
  network.layers[1].weights(1, 0) = 0;  // neuron 0 feeds only neuron 2
  ActivationPattern through_off{{NeuronState::zero_on_region, NeuronState::on, NeuronState::off, NeuronState::on}};
  EXPECT_TRUE(nonsmooth_neurons(network, through_off).empty());
  ActivationPattern through_on{{NeuronState::zero_on_region, NeuronState::on, NeuronState::on, NeuronState::off}};
  const auto expected = network.layers[2].weights(0, 0) != 0 ? std::vector<std::size_t>{0}
                                                              : std::vector<std::size_t>{};
  EXPECT_EQ(nonsmooth_neurons(network, through_on), expected);
  // An output neuron under a ReLU in state 'z' always reaches the output.
  const Network relu_output = random_small_network({1, 2, 1}, true, 32);
  ActivationPattern output_zero{{NeuronState::on, NeuronState::on, NeuronState::zero_on_region}};
  EXPECT_EQ(nonsmooth_neurons(relu_output, output_zero), (std::vector<std::size_t>{2}));
}

TEST(CoefficientBlocks, RejectsMalformedPatterns) {
  const Network network = random_small_network({2, 2, 1}, false, 3);
  EXPECT_THROW(coefficient_blocks(network, ActivationPattern{{NeuronState::on}}), usage_error);
  EXPECT_THROW(coefficient_blocks(network, ActivationPattern{{NeuronState::on, NeuronState::zero_at_point}}),
               usage_error);
  EXPECT_THROW(nonsmooth_neurons(network, ActivationPattern{{NeuronState::on}}), usage_error);
}

// tests/data/zero_signal1d.json, built here: neuron 2 = relu(relu(x)) is
// identically zero for x < 0 and has outgoing weight 0, so that region is
// smooth. The Jacobian at x = -1 by hand (F = w3[0,1] (w2[1,1] relu(-x + 1) +
// b2[1]) + b3 there): dF/dW1[1,0] = w3[0,1] w2[1,1] x = -1, dF/db1[1] = 1,
// dF/dW2[1,1] = relu(2) = 2, dF/db2[1] = 1, dF/dW3[0,1] = 2, dF/db3 = 1.
TEST(ParameterJacobian, SmoothRegionWithAnIdenticallyZeroNeuron) {
  Network network;
  network.input_dim = 1;
  Layer first, second, output;
  first.weights = RationalMatrix(2, 1);
  first.weights(0, 0) = 1;
  first.weights(1, 0) = -1;
  first.bias = {0, 1};
  second.weights = RationalMatrix(2, 2);
  second.weights(0, 0) = 1;
  second.weights(1, 0) = 1;
  second.weights(1, 1) = 1;
  second.bias = {0, 0};
  output.weights = RationalMatrix(1, 2);
  output.weights(0, 1) = 1;
  output.bias = {0};
  output.activation = Activation::linear;
  network.layers = {first, second, output};

  const ActivationPattern around = pattern_around_point(network, {Rational(-1)});
  EXPECT_EQ(format_pattern(network, around), "01|z1");
  EXPECT_EQ(format_pattern(network, evaluate_exact(network, {Rational(-1)}).pattern), "01|=1");
  const RationalMatrix jacobian = parameter_jacobian_exact(network, {Rational(-1)});
  const std::vector<int> by_hand = {0, -1, 0, 1, 0, 0, 0, 2, 0, 1, 0, 2, 1};
  ASSERT_EQ(jacobian.cols(), by_hand.size());
  for (std::size_t c = 0; c < by_hand.size(); ++c) EXPECT_EQ(jacobian(0, c), by_hand[c]) << "column " << c;

  // With an outgoing weight on neuron 2 its backward signal is nonzero: no smooth point.
  network.layers[2].weights(0, 0) = 1;
  try {
    parameter_jacobian_exact(network, {Rational(-1)});
    FAIL() << "expected input_error";
  } catch (const input_error& error) {
    EXPECT_NE(std::string(error.what()).find("neuron 2"), std::string::npos) << error.what();
  }
  // A true crossing stays '=': x = 0 is neuron 0's bent point.
  EXPECT_EQ(format_pattern(network, pattern_around_point(network, {Rational(0)})), "=1|=1");
}

}  // namespace
}  // namespace pleat
