// The sampled estimate moved out of the command line (enumerate/sampled_estimate):
// its documented properties, checked on small networks of our own.
#include "enumerate/sampled_estimate.hpp"

#include "core/network_io.hpp"
#include "core/rational.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <string>

namespace pleat {
namespace {

// y = relu(x1) + relu(x2) - relu(x1 + x2 - 1): 2 inputs, 3 hidden neurons, D = 13.
Network small_network() {
  return parse_network(R"({"format": "pleat-network/1", "input_dim": 2, "layers": [
    {"weights": [["1", "0"], ["0", "1"], ["1", "1"]], "bias": ["0", "0", "-1"]},
    {"weights": [["1", "1", "-1"]], "bias": ["0"], "activation": "linear"}]})");
}

SampleOptions options_for(std::uint64_t batch) {
  SampleOptions options;
  options.batch = batch;
  options.seed = 11;
  options.walk.threads = 1;
  return options;
}

TEST(SampledEstimate, TheFirstPointsOfALargerBatchAreTheSmallerBatch) {
  const Network network = small_network();
  const SampleResult few = run_sampled_estimate(network, options_for(4));
  const SampleResult many = run_sampled_estimate(network, options_for(9));
  ASSERT_EQ(few.points.size(), 4u);
  ASSERT_EQ(many.points.size(), 9u);
  for (std::size_t i = 0; i < few.points.size(); ++i) EXPECT_EQ(few.points[i], many.points[i]) << "point " << i;
}

TEST(SampledEstimate, BoxPointsLieStrictlyInsideTheBoxAndFloat32PointsAreFloats) {
  SampleOptions options = options_for(30);
  options.dist = box_distribution({Rational(-1, 3), Rational(0)}, {Rational(1, 7), Rational(1, 1000)}, "dist");
  options.is_float32 = true;
  const SampleResult result = run_sampled_estimate(small_network(), options);
  for (const RationalVector& point : result.points)
    for (std::size_t i = 0; i < 2; ++i) {
      EXPECT_LT(options.dist.lower[i], point[i]);
      EXPECT_LT(point[i], options.dist.upper[i]);
      const float rounded = static_cast<float>(to_double(point[i]));
      EXPECT_EQ(rational_from_double(static_cast<double>(rounded)), point[i]);  // a float32 value
    }
}

// The message of the input_error a sample with this box and type throws ("" when none).
std::string box_error(const Rational& lower, const Rational& upper, bool is_float32) {
  SampleOptions options = options_for(3);
  options.dist = box_distribution({Rational(0), lower}, {Rational(1), upper}, "--dist");
  options.is_float32 = is_float32;
  try {
    (void)run_sampled_estimate(small_network(), options);
  } catch (const input_error& error) {
    return error.what();
  }
  return "";
}

// A box axis with no double strictly inside drew forever (the points are
// drawn until one lies inside), one beyond the range drew infinities
// ("not a finite number", naming nothing): both refused, naming the axis.
TEST(SampledEstimate, ABoxNoPointCanBeDrawnFromIsRefused) {
  const Rational tiny(mpq_class("1/100000000000000000000"));  // 10^-20: 1 + 10^-20 rounds to 1
  EXPECT_EQ(box_error(Rational(1), Rational(1) + tiny, false),
            "--dist: axis 1: the interval (1, 100000000000000000001/100000000000000000000) is too narrow to draw "
            "float64 points strictly inside it");
  EXPECT_EQ(box_error(Rational(1), Rational(1) + Rational(1, 1000000000), true),
            "--dist: axis 1: the interval (1, 1000000001/1000000000) is too narrow to draw float32 points strictly "
            "inside it");
  const Rational huge(mpq_class("1" + std::string(400, '0')));  // 10^400, beyond double
  EXPECT_EQ(box_error(Rational(0), huge, false).rfind(
                "--dist: axis 1: the interval (0, about 1.00000e+400 (an integer of 401 digits)) reaches", 0),
            0u);
  EXPECT_NE(box_error(Rational(0), huge, false).find("reaches beyond the float64 range"), std::string::npos);
  EXPECT_NE(box_error(Rational(0), Rational(1000000) * Rational(1000000) * Rational(1000000) * Rational(1000000) *
                                       Rational(1000000) * Rational(1000000) * Rational(1000000),
                      true)
                .find("reaches beyond the float32 range"),
            std::string::npos);  // 10^42 > float32's largest, about 3.4 * 10^38
  EXPECT_EQ(box_error(Rational(1), Rational(1) + Rational(1, 1000000000), false), "");  // float64 has room there
}

TEST(SampledEstimate, ARankAboveTheProvedUpperBoundIsImpossible) {
  const SampleResult result = run_sampled_estimate(small_network(), options_for(40));
  ASSERT_TRUE(result.certified.certified);
  EXPECT_LE(result.rank.customary, result.certified.upper_bound);
  EXPECT_EQ(sample_verdict(result.certified.upper_bound + 1, result.certified), Verdict::impossible);
  EXPECT_EQ(sample_verdict(*result.certified.functional_dimension, result.certified), Verdict::consistent);
  EXPECT_EQ(sample_verdict(0, result.certified), Verdict::too_low);
}

TEST(SampledEstimate, AnInterruptBeforeTheFirstPointReportsNothingDrawn) {
  std::atomic<bool> interrupt{true};
  SampleOptions options = options_for(5);
  options.walk.interrupt = &interrupt;
  const SampleResult result = run_sampled_estimate(small_network(), options);
  EXPECT_TRUE(result.interrupted_while_sampling);
  EXPECT_EQ(result.drawn, 0u);
  EXPECT_TRUE(result.points.empty());
}

TEST(SampledEstimate, BatchSizeAndBoxErrorsNameTheField) {
  const Network network = small_network();
  EXPECT_NO_THROW(check_batch_size(1000, network, "batch"));
  try {
    check_batch_size(10000000, network, "batch");  // 13 entries per point: 1.3e8 > 2.5e7
    FAIL() << "no error";
  } catch (const input_error& error) {
    EXPECT_EQ(std::string(error.what()).rfind("batch: ", 0), 0u) << error.what();
  }
  try {
    (void)box_distribution({Rational(0), Rational(1)}, {Rational(1), Rational(1)}, "--dist");
    FAIL() << "no error";
  } catch (const input_error& error) {
    EXPECT_EQ(std::string(error.what()), "--dist: axis 1: LO must be below HI");
  }
}

}  // namespace
}  // namespace pleat
