// Surveys: the certified functional dimension of many random networks of one
// architecture, and exact summary statistics of the values found.
//
// Sample i of a survey is exactly random_network(architecture, seed, i, init,
// digits) (core/random_network.hpp), certified on the survey's domain by
// certify_functional_dimension with a single-threaded walk; the parallelism is
// across samples, so a sample's result does not depend on how many threads
// ran the survey (apart from its timing). No I/O here: the caller receives
// each finished sample and decides where it goes.
#pragma once

#include "core/network.hpp"
#include "core/random_network.hpp"
#include "core/rational.hpp"
#include "core/stop.hpp"
#include "enumerate/domain.hpp"

#include <atomic>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

struct SurveyConfiguration {
  std::vector<std::size_t> architecture;  // input width first, at least two entries
  Initialization init = Initialization::he;
  int digits = 6;                          // 1 .. 40, as random_network
  std::uint64_t seed = 0;
  std::uint64_t samples = 0;               // sample indices 0 .. samples-1
  Domain domain;                           // domain.dim == architecture[0]
};

// The outcome of one sample. Everything except `seconds` is a function of the
// configuration and the index alone, unless a time limit cut the walk short
// (then the bounds depend on how far it got).
struct SurveySample {
  std::uint64_t sample = 0;
  std::optional<std::size_t> functional_dimension;  // set only when certified
  bool certified = false;
  std::size_t lower_bound = 0;
  std::size_t upper_bound = 0;
  std::size_t scaling_bound = 0;
  std::size_t parametric_dimension = 0;
  std::size_t regions = 0;      // regions walked
  bool early_stop = false;      // the rank met the scaling bound before the walk ended
  StopReason stop_reason = StopReason::none;  // none when the walk ended normally
  double seconds = 0;
};

// The samples of shard `index` of `count`: every i < samples with
// i % count == index, in increasing order. Precondition: index < count
// (usage_error otherwise).
std::vector<std::uint64_t> shard_samples(std::uint64_t samples, std::uint64_t index, std::uint64_t count);

// The network of sample i: random_network(architecture, seed, i, init, digits).
Network survey_network(const SurveyConfiguration& configuration, std::uint64_t sample);

// Certifies one sample with a single-threaded walk. time_limit_seconds 0 means
// none; a sample cut short reports its proved bounds, certified = false.
// Throws usage_error when the configuration breaks its preconditions.
SurveySample run_survey_sample(const SurveyConfiguration& configuration, std::uint64_t sample,
                               double time_limit_seconds = 0,
                               const std::atomic<bool>* interrupt = nullptr);

struct SurveyRunOptions {
  unsigned threads = 0;             // 0: all cores; never more than the samples to run
  double time_limit_each = 0;       // seconds per sample, 0: none
  const std::atomic<bool>* interrupt = nullptr;  // stops the run; samples in flight are dropped
  // Called once per finished sample, in completion order, never concurrently.
  // A sample whose walk was interrupted is not reported (rerunning it gives
  // its real value).
  std::function<void(const SurveySample&)> on_sample;
};

struct SurveyRunResult {
  std::size_t finished = 0;   // samples reported to on_sample
  bool is_interrupted = false;
};

// Runs the given sample indices across threads. An exception thrown for any
// sample (or by on_sample) stops the others from starting new samples and is
// rethrown once every thread has ended.
SurveyRunResult run_survey(const SurveyConfiguration& configuration, const std::vector<std::uint64_t>& samples,
                           const SurveyRunOptions& options);

// ---- Summary -----------------------------------------------------------------

struct SurveySummary {
  std::size_t samples = 0;      // all samples given
  std::size_t certified = 0;
  std::size_t uncertified = 0;  // cut short: bounds only, kept out of the histogram
  std::map<std::size_t, std::size_t> histogram;  // certified value -> count
  std::optional<Rational> mean;      // over certified samples; exact; none when there are none
  std::optional<Rational> variance;  // sum (x - mean)^2 / (n - 1), exact; none when n < 2
  std::vector<std::size_t> modes;    // the most frequent certified values, increasing
  std::size_t at_scaling_bound = 0;  // certified samples whose value equals their scaling bound
  std::optional<Rational> at_scaling_bound_fraction;  // at_scaling_bound / certified, exact
  // The scaling bound when every sample has the same one (the usual case:
  // D minus the number of hidden neurons), else none.
  std::optional<std::size_t> scaling_bound;
  std::vector<SurveySample> uncertified_samples;  // sorted by sample
};

// Exact statistics of the samples (any order). Duplicated sample indices are
// a usage_error.
SurveySummary summarize_survey(const std::vector<SurveySample>& samples);

}  // namespace pleat
