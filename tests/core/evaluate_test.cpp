// Exact and double evaluation, and the affine maps of a pattern.
#include "core/evaluate.hpp"
#include "tests/support/network_builders.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

namespace pleat {
namespace {

using test::layer_from_text;

// 2 -> 3 -> 1: hidden neurons x1, x2, x1 + x2 - 1; output h0 - h1 + 2 h2 + 1/2.
Network small_network() {
  Network network;
  network.input_dim = 2;
  network.layers.push_back(
      layer_from_text({{"1", "0"}, {"0", "1"}, {"1", "1"}}, {"0", "0", "-1"}, Activation::relu));
  network.layers.push_back(layer_from_text({{"1", "-1", "2"}}, {"1/2"}, Activation::linear));
  return network;
}

// A small deterministic generator for test inputs only (not the product's).
struct TestNumbers {
  std::uint64_t state;
  std::uint64_t next() {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return state >> 33;
  }
  // A rational p/q with |p| <= 9, 1 <= q <= 7.
  Rational small_rational() {
    const long p = static_cast<long>(next() % 19) - 9;
    const long q = static_cast<long>(next() % 7) + 1;
    Rational value(p, q);
    value.canonicalize();
    return value;
  }
};

Network random_small_network(const std::vector<std::size_t>& widths, bool output_relu,
                             std::uint64_t seed) {
  TestNumbers numbers{seed};
  Network network;
  network.input_dim = widths[0];
  for (std::size_t k = 1; k < widths.size(); ++k) {
    Layer layer;
    layer.weights = RationalMatrix(widths[k], widths[k - 1]);
    for (std::size_t r = 0; r < widths[k]; ++r)
      for (std::size_t c = 0; c < widths[k - 1]; ++c)
        layer.weights(r, c) = numbers.small_rational();
    for (std::size_t r = 0; r < widths[k]; ++r) layer.bias.push_back(numbers.small_rational());
    const bool is_last = k + 1 == widths.size();
    layer.activation = (!is_last || output_relu) ? Activation::relu : Activation::linear;
    network.layers.push_back(std::move(layer));
  }
  return network;
}

std::string states_text(const ActivationPattern& pattern) {
  std::string text;
  for (NeuronState state : pattern.states) text += "01z="[static_cast<int>(state)];
  return text;
}

TEST(Evaluate, HandComputedPointInsideARegion) {
  const Network network = small_network();
  const Evaluation result = evaluate_exact(network, {Rational(1, 2), Rational(-1, 3)});
  // z1 = (1/2, -1/3, 1/2 - 1/3 - 1 = -5/6); post-activation (1/2, 0, 0); F = 1/2 + 1/2.
  ASSERT_EQ(result.preactivation.size(), 2u);
  EXPECT_EQ(result.preactivation[0], (RationalVector{Rational(1, 2), Rational(-1, 3), Rational(-5, 6)}));
  EXPECT_EQ(result.preactivation[1], (RationalVector{Rational(1)}));
  EXPECT_EQ(result.output, (RationalVector{Rational(1)}));
  EXPECT_EQ(states_text(result.pattern), "100");
}

TEST(Evaluate, ZeroPreactivationIsMarkedAtThePoint) {
  const Network network = small_network();
  // At (1, 0): z1 = (1, 0, 0), so neurons 1 and 2 sit on their hyperplanes.
  const Evaluation result = evaluate_exact(network, {Rational(1), Rational(0)});
  EXPECT_EQ(states_text(result.pattern), "1==");
  EXPECT_EQ(result.output, (RationalVector{Rational(3, 2)}));
}

TEST(Evaluate, WrongPointSizeIsMisuse) {
  EXPECT_THROW(evaluate_exact(small_network(), {Rational(1)}), usage_error);
  EXPECT_THROW(evaluate_double(to_double(small_network()), {1.0, 2.0, 3.0}), usage_error);
}

TEST(Evaluate, IdentityMapIsTheIdentity) {
  const AffineMap map = identity_map(3);
  const RationalVector x{Rational(1, 3), Rational(-2), Rational(5, 7)};
  EXPECT_EQ(map(x), x);
}

TEST(Evaluate, ApplyStatesKeepsOnlyRowsThatAreOn) {
  const Network network = small_network();
  const AffineMap pre = compose_layer(network.layers[0], identity_map(2));
  const std::vector<NeuronState> states{NeuronState::on, NeuronState::zero_on_region,
                                        NeuronState::off};
  const AffineMap post = apply_states(pre, states);
  EXPECT_EQ(post.linear.row(0), pre.linear.row(0));
  EXPECT_EQ(post.linear.row(1), (RationalVector{Rational(0), Rational(0)}));
  EXPECT_EQ(post.offset, (RationalVector{Rational(0), Rational(0), Rational(0)}));
  EXPECT_THROW(apply_states(pre, std::vector<NeuronState>(2, NeuronState::on)), usage_error);
}

TEST(Evaluate, ComposeLayerChecksTheShape) {
  EXPECT_THROW(compose_layer(small_network().layers[1], identity_map(2)), usage_error);
}

TEST(Evaluate, PatternMapsOfTheHandExample) {
  const Network network = small_network();
  const Evaluation at_point = evaluate_exact(network, {Rational(1, 2), Rational(-1, 3)});
  const PatternMaps maps = maps_on_pattern(network, at_point.pattern);
  // On pattern 100, F(x) = x1 + 1/2.
  ASSERT_EQ(maps.output.linear.rows(), 1u);
  EXPECT_EQ(maps.output.linear.row(0), (RationalVector{Rational(1), Rational(0)}));
  EXPECT_EQ(maps.output.offset, (RationalVector{Rational(1, 2)}));
  EXPECT_THROW(maps_on_pattern(network, ActivationPattern{{NeuronState::on}}), usage_error);
}

// The witness: the pattern's affine maps, evaluated at the point itself and
// at other points with the same pattern, reproduce the forward pass exactly.
void expect_maps_reproduce_evaluation(const Network& network, std::uint64_t seed) {
  TestNumbers numbers{seed};
  int checked_other_points = 0;
  for (int trial = 0; trial < 20; ++trial) {
    RationalVector x;
    for (std::size_t i = 0; i < network.input_dim; ++i) x.push_back(numbers.small_rational());
    const Evaluation at_x = evaluate_exact(network, x);
    const PatternMaps maps = maps_on_pattern(network, at_x.pattern);
    ASSERT_EQ(maps.preactivation.size(), network.depth());
    for (std::size_t k = 0; k < network.depth(); ++k)
      EXPECT_EQ(maps.preactivation[k](x), at_x.preactivation[k]) << "layer " << k;
    EXPECT_EQ(maps.output(x), at_x.output);

    // Move towards a random direction until the pattern is the same.
    RationalVector direction;
    for (std::size_t i = 0; i < network.input_dim; ++i)
      direction.push_back(numbers.small_rational());
    Rational step(1, 2);
    for (int halving = 0; halving < 40; ++halving, step /= 2) {
      RationalVector y = x;
      for (std::size_t i = 0; i < y.size(); ++i) y[i] += step * direction[i];
      const Evaluation at_y = evaluate_exact(network, y);
      if (at_y.pattern != at_x.pattern) continue;
      for (std::size_t k = 0; k < network.depth(); ++k)
        EXPECT_EQ(maps.preactivation[k](y), at_y.preactivation[k]) << "layer " << k;
      EXPECT_EQ(maps.output(y), at_y.output);
      ++checked_other_points;
      break;
    }
  }
  EXPECT_GT(checked_other_points, 10);
}

TEST(Evaluate, PatternMapsReproduceTheForwardPass) {
  expect_maps_reproduce_evaluation(random_small_network({2, 4, 3, 2}, false, 11), 5);
  expect_maps_reproduce_evaluation(random_small_network({3, 5, 1}, false, 12), 6);
}

TEST(Evaluate, OutputReluIsPartOfThePattern) {
  const Network network = random_small_network({2, 3, 2}, true, 13);
  const Evaluation result = evaluate_exact(network, {Rational(1, 3), Rational(2)});
  EXPECT_EQ(result.pattern.states.size(), 5u);
  for (std::size_t i = 0; i < 2; ++i) {
    const Rational& z = result.preactivation[1][i];
    EXPECT_EQ(result.output[i], z > 0 ? z : Rational(0));
  }
  expect_maps_reproduce_evaluation(network, 7);
}

TEST(Evaluate, DoublePassAgreesWithTheExactOne) {
  const Network network = random_small_network({2, 4, 3, 2}, false, 14);
  const DoubleNetwork as_double = to_double(network);
  TestNumbers numbers{8};
  for (int trial = 0; trial < 20; ++trial) {
    RationalVector x{numbers.small_rational(), numbers.small_rational()};
    const Evaluation exact = evaluate_exact(network, x);
    const EvaluationDouble approximate =
        evaluate_double(as_double, to_double(x));
    for (std::size_t i = 0; i < exact.output.size(); ++i)
      EXPECT_NEAR(approximate.output[i], to_double(exact.output[i]),
                  1e-12 * (1 + std::abs(to_double(exact.output[i]))));
  }
}

// The fraction-free pattern is evaluate_exact's, '=' included: the hand
// example's point (1, 0) on two hyperplanes, and small-rational points on
// random networks (small numerators and denominators put many points exactly
// on a bent hyperplane, so zeros are exercised, counted below).
TEST(Evaluate, IntegerPatternEqualsTheExactPattern) {
  EXPECT_EQ(states_text(IntegerPatternEvaluator(small_network()).pattern_at({Rational(1), Rational(0)})), "1==");
  std::size_t points_with_zero = 0;
  std::uint64_t seed = 30;
  for (const auto& [widths, output_relu] : std::vector<std::pair<std::vector<std::size_t>, bool>>{
           {{2, 4, 3, 1}, false}, {{2, 3, 3, 2}, true}, {{3, 5, 4, 1}, false}, {{1, 3, 3, 3, 1}, true}}) {
    const Network network = random_small_network(widths, output_relu, seed++);
    const IntegerPatternEvaluator evaluator(network);
    TestNumbers numbers{seed};
    for (int trial = 0; trial < 200; ++trial) {
      RationalVector x(network.input_dim);
      for (Rational& v : x) v = numbers.small_rational();
      const ActivationPattern exact = evaluate_exact(network, x).pattern;
      EXPECT_EQ(states_text(evaluator.pattern_at(x)), states_text(exact));
      points_with_zero += states_text(exact).find('=') != std::string::npos;
    }
  }
  EXPECT_GT(points_with_zero, 20u);
  EXPECT_THROW(IntegerPatternEvaluator(small_network()).pattern_at({Rational(1)}), usage_error);
}

}  // namespace
}  // namespace pleat
