// Surveys: exact summary statistics checked by hand, shards, thread-count
// independence, and the one-hidden-layer 1-D case where the value is known.
#include "enumerate/survey.hpp"

#include "enumerate/functional_dimension.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <map>
#include <set>
#include <stdexcept>

namespace pleat {
namespace {

SurveySample certified_sample(std::uint64_t index, std::size_t value, std::size_t scaling_bound) {
  SurveySample s;
  s.sample = index;
  s.functional_dimension = value;
  s.certified = true;
  s.lower_bound = s.upper_bound = value;
  s.scaling_bound = scaling_bound;
  return s;
}

SurveySample cut_sample(std::uint64_t index, std::size_t lower, std::size_t upper, std::size_t scaling_bound) {
  SurveySample s;
  s.sample = index;
  s.lower_bound = lower;
  s.upper_bound = upper;
  s.scaling_bound = scaling_bound;
  s.stop_reason = StopReason::time_limit;
  return s;
}

// Values 3, 5, 5, 6 (and one sample cut short), worked by hand:
//   mean = 19/4; deviations -7/4, 1/4, 1/4, 5/4; squares 49/16 + 1/16 + 1/16 + 25/16
//   = 76/16 = 19/4; variance = (19/4) / (4 - 1) = 19/12.
TEST(SurveySummary, MeanAndVarianceAreExactRationalsWorkedByHand) {
  const std::vector<SurveySample> samples{certified_sample(4, 5, 6), certified_sample(0, 3, 6),
                                          cut_sample(2, 4, 6, 6), certified_sample(1, 6, 6),
                                          certified_sample(3, 5, 6)};
  const SurveySummary summary = summarize_survey(samples);
  EXPECT_EQ(summary.samples, 5u);
  EXPECT_EQ(summary.certified, 4u);
  EXPECT_EQ(summary.uncertified, 1u);
  ASSERT_TRUE(summary.mean && summary.variance);
  EXPECT_EQ(*summary.mean, Rational(19, 4));
  EXPECT_EQ(*summary.variance, Rational(19, 12));
  EXPECT_EQ(format_rational(*summary.variance), "19/12");
  EXPECT_EQ(summary.histogram, (std::map<std::size_t, std::size_t>{{3, 1}, {5, 2}, {6, 1}}));
  EXPECT_EQ(summary.modes, std::vector<std::size_t>{5});
  EXPECT_EQ(summary.at_scaling_bound, 1u);
  EXPECT_EQ(*summary.at_scaling_bound_fraction, Rational(1, 4));
  ASSERT_TRUE(summary.scaling_bound);
  EXPECT_EQ(*summary.scaling_bound, 6u);
  ASSERT_EQ(summary.uncertified_samples.size(), 1u);
  EXPECT_EQ(summary.uncertified_samples[0].sample, 2u);
  EXPECT_EQ(summary.uncertified_samples[0].lower_bound, 4u);
}

// The variance formula against the textbook one-pass form
// (sum x^2 - n mean^2) / (n - 1), in exact arithmetic, on 100 values.
TEST(SurveySummary, VarianceAgreesWithTheSumOfSquaresForm) {
  std::vector<SurveySample> samples;
  Rational sum = 0, squares = 0;
  for (std::uint64_t i = 0; i < 100; ++i) {
    const std::size_t value = 40 + (i * i * 7 + 3 * i) % 13;
    samples.push_back(certified_sample(i, value, 52));
    sum += Rational(static_cast<long>(value));
    squares += Rational(static_cast<long>(value * value));
  }
  const SurveySummary summary = summarize_survey(samples);
  const Rational mean = sum / 100;
  EXPECT_EQ(*summary.mean, mean);
  EXPECT_EQ(*summary.variance, Rational((squares - 100 * mean * mean) / 99));
}

TEST(SurveySummary, ModesTiesAndSmallCases) {
  const SurveySummary tied =
      summarize_survey({certified_sample(0, 7, 9), certified_sample(1, 9, 9), certified_sample(2, 7, 9),
                        certified_sample(3, 9, 9)});
  EXPECT_EQ(tied.modes, (std::vector<std::size_t>{7, 9}));
  EXPECT_EQ(*tied.variance, Rational(4, 3));  // deviations +-1, four of them: 4 / 3

  const SurveySummary one = summarize_survey({certified_sample(0, 7, 9)});
  EXPECT_EQ(*one.mean, Rational(7));
  EXPECT_FALSE(one.variance);  // n - 1 = 0

  const SurveySummary none = summarize_survey({cut_sample(0, 3, 9, 9)});
  EXPECT_FALSE(none.mean);
  EXPECT_TRUE(none.modes.empty());
  EXPECT_EQ(none.uncertified, 1u);

  const SurveySummary mixed_bounds = summarize_survey({certified_sample(0, 7, 9), certified_sample(1, 7, 8)});
  EXPECT_FALSE(mixed_bounds.scaling_bound);
  EXPECT_THROW(summarize_survey({certified_sample(0, 7, 9), certified_sample(0, 7, 9)}), usage_error);
}

TEST(SurveyShards, ShardsPartitionTheSamples) {
  EXPECT_EQ(shard_samples(10, 1, 3), (std::vector<std::uint64_t>{1, 4, 7}));
  EXPECT_EQ(shard_samples(2, 2, 3), std::vector<std::uint64_t>{});
  std::vector<std::uint64_t> all;
  for (std::uint64_t index = 0; index < 4; ++index)
    for (std::uint64_t i : shard_samples(11, index, 4)) all.push_back(i);
  std::sort(all.begin(), all.end());
  std::vector<std::uint64_t> expected(11);
  for (std::uint64_t i = 0; i < 11; ++i) expected[i] = i;
  EXPECT_EQ(all, expected);
  EXPECT_THROW(shard_samples(10, 3, 3), usage_error);
  EXPECT_THROW(shard_samples(10, 0, 0), usage_error);
  // Near the top of the range: no wrap-around.
  const std::uint64_t top = ~std::uint64_t{0};
  EXPECT_EQ(shard_samples(top, 0, top - 1), (std::vector<std::uint64_t>{0, top - 1}));
}

SurveyConfiguration small_configuration(std::vector<std::size_t> architecture, std::uint64_t samples,
                                        std::uint64_t seed) {
  SurveyConfiguration configuration;
  configuration.domain = make_whole_space(architecture.front());
  configuration.architecture = std::move(architecture);
  configuration.samples = samples;
  configuration.seed = seed;
  return configuration;
}

std::map<std::uint64_t, SurveySample> run_all(const SurveyConfiguration& configuration, unsigned threads) {
  std::map<std::uint64_t, SurveySample> found;
  SurveyRunOptions options;
  options.threads = threads;
  options.on_sample = [&](const SurveySample& s) { EXPECT_TRUE(found.emplace(s.sample, s).second); };
  std::vector<std::uint64_t> samples(configuration.samples);
  for (std::uint64_t i = 0; i < configuration.samples; ++i) samples[i] = i;
  const SurveyRunResult run = run_survey(configuration, samples, options);
  EXPECT_EQ(run.finished, configuration.samples);
  EXPECT_FALSE(run.is_interrupted);
  return found;
}

// Everything but the timing agrees at 1 and 2 threads, and each sample equals
// an independent certification of random_network(arch, seed, i) done with a
// 2-thread walk (a different schedule inside the walker).
TEST(SurveyRun, SameValuesForAnyThreadCountAndEqualToCertifyingEachNetwork) {
  const SurveyConfiguration configuration = small_configuration({2, 3, 3, 1}, 6, 11);
  const auto one = run_all(configuration, 1);
  const auto two = run_all(configuration, 2);
  ASSERT_EQ(one.size(), 6u);
  ASSERT_EQ(two.size(), 6u);
  for (const auto& [index, s] : one) {
    const SurveySample& t = two.at(index);
    EXPECT_EQ(s.functional_dimension, t.functional_dimension);
    EXPECT_EQ(s.lower_bound, t.lower_bound);
    EXPECT_EQ(s.upper_bound, t.upper_bound);
    EXPECT_EQ(s.regions, t.regions);
    EXPECT_EQ(s.early_stop, t.early_stop);
    EXPECT_EQ(s.scaling_bound, t.scaling_bound);

    FunctionalDimensionOptions options;
    options.walk.threads = 2;
    const auto direct =
        certify_functional_dimension(random_network({2, 3, 3, 1}, 11, index), make_whole_space(2), options);
    EXPECT_TRUE(direct.certified);
    EXPECT_TRUE(s.certified);
    EXPECT_EQ(s.functional_dimension, direct.functional_dimension) << "sample " << index;
    EXPECT_EQ(s.scaling_bound, direct.scaling_bound);
    EXPECT_EQ(s.parametric_dimension, 25u);  // (2+1)3 + (3+1)3 + (3+1)1 = 9 + 12 + 4
  }
}

// One hidden layer of m neurons, 1 input, 1 output, on R:
//   f(x) = c + sum_j v_j relu(w_j x + b_j).
// Upper bound: neuron j enters f only through a_j = v_j |w_j| and its
// breakpoint t_j = -b_j / w_j (v relu(w x + b) = v |w| relu(sign(w) (x - t))),
// so at most 2m + 1 directions (with c) change f: the scaling bound
// D - m = (3m + 1) - m, since each neuron's scaling direction (w_j, b_j, -v_j)
// is nonzero (b_j != 0) and they sit in disjoint coordinates.
// Lower bound: the derivatives in a_j, t_j and c are relu(+-(x - t_j)),
// a_j * step(+-(x - t_j)) and 1. If a combination vanished on R, its jump at
// t_j (only the j-th step jumps there, since the t_j are distinct) forces the
// step's coefficient times a_j to 0, so (a_j != 0) the coefficient is 0; then
// its kink at t_j forces the ramp's to 0; then the constant's. So when every
// w_j != 0, every v_j != 0, every b_j != 0 and the t_j are distinct, the
// functional dimension on R is exactly 2m + 1.
TEST(SurveyRun, OneHiddenLayerOnTheLineIsAlwaysAtTheScalingBound) {
  for (std::size_t m : {1u, 3u, 6u}) {
    SCOPED_TRACE("m=" + std::to_string(m));
    const SurveyConfiguration configuration = small_configuration({1, m, 1}, 12, 5);
    for (std::uint64_t i = 0; i < configuration.samples; ++i) {
      // The conditions of the argument above, checked exactly on each sample.
      const Network network = survey_network(configuration, i);
      std::set<Rational> breakpoints;
      for (std::size_t j = 0; j < m; ++j) {
        const Rational w = network.layers[0].weights(j, 0), b = network.layers[0].bias[j];
        const Rational v = network.layers[1].weights(0, j);
        ASSERT_NE(w, 0);
        ASSERT_NE(b, 0);
        ASSERT_NE(v, 0);
        breakpoints.insert(Rational(-b / w));
      }
      ASSERT_EQ(breakpoints.size(), m) << "sample " << i << " has repeated breakpoints";
    }
    const auto samples = run_all(configuration, 2);
    for (const auto& [index, s] : samples) {
      EXPECT_TRUE(s.certified) << "sample " << index;
      EXPECT_EQ(s.scaling_bound, 2 * m + 1);
      EXPECT_EQ(s.functional_dimension, 2 * m + 1) << "sample " << index;
    }
    std::vector<SurveySample> list;
    for (const auto& [index, s] : samples) list.push_back(s);
    const SurveySummary summary = summarize_survey(list);
    EXPECT_EQ(*summary.at_scaling_bound_fraction, Rational(1));
    EXPECT_EQ(*summary.variance, Rational(0));
  }
}

TEST(SurveyRun, InterruptReportsNothingAndFailuresPropagate) {
  const SurveyConfiguration configuration = small_configuration({1, 3, 1}, 4, 1);
  const std::atomic<bool> stop{true};
  SurveyRunOptions options;
  options.threads = 2;
  options.interrupt = &stop;
  std::size_t reported = 0;
  options.on_sample = [&](const SurveySample&) { ++reported; };
  const SurveyRunResult run = run_survey(configuration, {0, 1, 2, 3}, options);
  EXPECT_TRUE(run.is_interrupted);
  EXPECT_EQ(run.finished, 0u);
  EXPECT_EQ(reported, 0u);

  SurveyRunOptions failing;
  failing.threads = 2;
  failing.on_sample = [](const SurveySample&) { throw std::runtime_error("disk full"); };
  EXPECT_THROW(run_survey(configuration, {0, 1, 2, 3}, failing), std::runtime_error);

  SurveyConfiguration wrong = configuration;
  wrong.domain = make_whole_space(2);
  EXPECT_THROW(run_survey(wrong, {0}, SurveyRunOptions{}), usage_error);
}

}  // namespace
}  // namespace pleat
