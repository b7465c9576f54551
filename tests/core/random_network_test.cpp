// Reproducible random networks.
#include "core/random_network.hpp"

#include <gtest/gtest.h>

#include <cstdint>
#include <vector>

namespace pleat {
namespace {

// An independent transcription of the header's derivation comment, so that a
// drift between the documentation and the code is caught.
std::uint64_t documented_splitmix64(std::uint64_t& s) {
  s += 0x9E3779B97F4A7C15ULL;
  std::uint64_t z = s;
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

TEST(RandomNetwork, SplitmixMatchesItsPublishedFirstOutput) {
  // splitmix64 seeded with 0 first returns 0xE220A8397B1DCDAF (value from
  // memory of the reference implementation's widely quoted output).
  std::uint64_t s = 0;
  EXPECT_EQ(documented_splitmix64(s), 0xE220A8397B1DCDAFULL);
}

TEST(RandomNetwork, StreamFollowsTheDocumentedDerivation) {
  for (std::uint64_t sample : {0ULL, 1ULL, 12345ULL}) {
    std::uint64_t s = 7;
    s = documented_splitmix64(s) ^ sample;
    std::uint64_t state[4];
    for (auto& word : state) word = documented_splitmix64(s);
    RandomStream stream(7, sample);
    for (int i = 0; i < 100; ++i) {
      const std::uint64_t x = state[1] * 5;
      const std::uint64_t expected = ((x << 7) | (x >> 57)) * 9;
      const std::uint64_t t = state[1] << 17;
      state[2] ^= state[0];
      state[3] ^= state[1];
      state[1] ^= state[2];
      state[0] ^= state[3];
      state[2] ^= t;
      state[3] = (state[3] << 45) | (state[3] >> 19);
      ASSERT_EQ(stream.next_word(), expected) << "word " << i << " of sample " << sample;
    }
  }
}

TEST(RandomNetwork, SameArgumentsGiveTheSameNetwork) {
  const Network a = random_network({2, 8, 8, 1}, 7);
  const Network b = random_network({2, 8, 8, 1}, 7);
  EXPECT_EQ(a, b);
  EXPECT_EQ(a.meta_json, b.meta_json);
}

TEST(RandomNetwork, SamplesAndSeedsDiffer) {
  const Network base = random_network({2, 8, 8, 1}, 7, 0);
  EXPECT_NE(base.layers, random_network({2, 8, 8, 1}, 7, 1).layers);
  EXPECT_NE(base.layers, random_network({2, 8, 8, 1}, 8, 0).layers);
  EXPECT_NE(base.layers, random_network({2, 8, 8, 1}, 7, 0, Initialization::uniform).layers);
}

TEST(RandomNetwork, ShapeAndActivations) {
  const Network network = random_network({3, 5, 4, 2}, 1);
  EXPECT_EQ(network.input_dim, 3u);
  ASSERT_EQ(network.layers.size(), 3u);
  EXPECT_EQ(network.layers[0].weights.rows(), 5u);
  EXPECT_EQ(network.layers[0].weights.cols(), 3u);
  EXPECT_EQ(network.layers[2].bias.size(), 2u);
  EXPECT_EQ(network.layers[0].activation, Activation::relu);
  EXPECT_EQ(network.layers[1].activation, Activation::relu);
  EXPECT_EQ(network.layers[2].activation, Activation::linear);
  EXPECT_NE(network.meta_json.find("\"generator\":\"pleat-random/1\""), std::string::npos);
  EXPECT_NE(network.meta_json.find("\"init\":\"he\""), std::string::npos);
}

// True when |value| = m * 10^e for an integer m with at most `digits` digits.
bool has_at_most_digits(Rational value, int digits) {
  value = abs(value);
  if (value == 0) return true;
  const Rational low = [&] {
    Rational p(1);
    for (int i = 1; i < digits; ++i) p *= 10;
    return p;
  }();
  const Rational high = low * 10;
  while (value < low) value *= 10;
  while (value >= high) value /= 10;
  return value.get_den() == 1;
}

TEST(RandomNetwork, DigitsAreRespected) {
  for (int digits : {1, 3, 6, 12}) {
    const Network network = random_network({2, 6, 3}, 99, 0, Initialization::he, digits);
    bool reached_limit = false;
    for (const Layer& layer : network.layers) {
      for (std::size_t r = 0; r < layer.weights.rows(); ++r)
        for (std::size_t c = 0; c < layer.weights.cols(); ++c) {
          EXPECT_TRUE(has_at_most_digits(layer.weights(r, c), digits)) << layer.weights(r, c);
          reached_limit |= !has_at_most_digits(layer.weights(r, c), digits - 1);
        }
      for (const Rational& b : layer.bias) {
        EXPECT_TRUE(has_at_most_digits(b, digits)) << b;
      }
    }
    if (digits > 1) {
      EXPECT_TRUE(reached_limit) << "no value used all " << digits << " digits";
    }
  }
}

TEST(RandomNetwork, BiasesAreNonzero) {
  // Rounding to significant digits never makes a zero, so only an exactly
  // zero draw could; check the property over many biases for both inits.
  for (Initialization init : {Initialization::he, Initialization::uniform})
    for (std::uint64_t sample = 0; sample < 20; ++sample) {
      const Network network = random_network({2, 16, 16, 1}, 3, sample, init, 2);
      for (const Layer& layer : network.layers)
        for (const Rational& b : layer.bias) {
          EXPECT_NE(b, 0);
        }
    }
}

// Mean and variance of the second layer's weights (fan-in 100).
std::pair<double, double> weight_moments(const Network& network) {
  const Layer& layer = network.layers[1];
  double sum = 0, sum_squares = 0;
  const double count = static_cast<double>(layer.weights.rows() * layer.weights.cols());
  for (std::size_t r = 0; r < layer.weights.rows(); ++r)
    for (std::size_t c = 0; c < layer.weights.cols(); ++c) {
      const double w = to_double(layer.weights(r, c));
      sum += w;
      sum_squares += w * w;
    }
  const double mean = sum / count;
  return {mean, sum_squares / count - mean * mean};
}

TEST(RandomNetwork, HeWeightsHaveTheRequestedVariance) {
  // 10000 draws: the variance estimate's relative standard error is about
  // sqrt(2 / 10000) = 1.4%, so 6% is a four-sigma band.
  const auto [mean, variance] = weight_moments(random_network({1, 100, 100}, 5));
  EXPECT_NEAR(mean, 0.0, 4 * 0.1414 / 100);
  EXPECT_NEAR(variance, 2.0 / 100, 0.06 * 2.0 / 100);
}

TEST(RandomNetwork, UniformWeightsStayInTheirInterval) {
  const Network network = random_network({1, 100, 100}, 5, 0, Initialization::uniform);
  const Layer& layer = network.layers[1];
  for (std::size_t r = 0; r < layer.weights.rows(); ++r)
    for (std::size_t c = 0; c < layer.weights.cols(); ++c) {
      const Rational& w = layer.weights(r, c);
      // |w| <= 1/10 up to the last-digit rounding.
      ASSERT_LE(w * w, Rational(1, 100) * Rational(100002, 100000)) << w;
    }
  // Variance of U(-a, a) is a^2 / 3; standard error about 0.9% here.
  const auto [mean, variance] = weight_moments(network);
  EXPECT_NEAR(mean, 0.0, 4 * 0.0577 / 100);
  EXPECT_NEAR(variance, 1.0 / 300, 0.04 / 300);
}

TEST(RandomNetwork, MisuseIsRejected) {
  EXPECT_THROW(random_network({2}, 1), usage_error);
  EXPECT_THROW(random_network({2, 0, 1}, 1), usage_error);
  EXPECT_THROW(random_network({2, 1}, 1, 0, Initialization::he, 0), usage_error);
  EXPECT_THROW(parse_initialization("glorot"), input_error);
  EXPECT_EQ(parse_initialization("uniform"), Initialization::uniform);
}

}  // namespace
}  // namespace pleat
