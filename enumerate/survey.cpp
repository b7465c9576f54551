#include "enumerate/survey.hpp"

#include "enumerate/functional_dimension.hpp"

#include <algorithm>
#include <exception>
#include <mutex>
#include <set>
#include <thread>

namespace pleat {
namespace {

void check_configuration(const SurveyConfiguration& configuration) {
  if (configuration.architecture.size() < 2)
    throw usage_error("survey: the architecture needs an input width and at least one layer");
  if (configuration.domain.dim != configuration.architecture.front())
    throw usage_error("survey: the domain's dimension " + std::to_string(configuration.domain.dim) +
                      " differs from the input width " + std::to_string(configuration.architecture.front()));
}

}  // namespace

std::vector<std::uint64_t> shard_samples(std::uint64_t samples, std::uint64_t index, std::uint64_t count) {
  if (count == 0 || index >= count)
    throw usage_error("shard_samples: shard " + std::to_string(index) + "/" + std::to_string(count) +
                      " needs index < count");
  std::vector<std::uint64_t> chosen;
  for (std::uint64_t i = index; i < samples; i += count) {
    chosen.push_back(i);
    if (i > samples - count) break;  // i + count would wrap or pass the end
  }
  return chosen;
}

Network survey_network(const SurveyConfiguration& configuration, std::uint64_t sample) {
  return random_network(configuration.architecture, configuration.seed, sample, configuration.init,
                        configuration.digits);
}

SurveySample run_survey_sample(const SurveyConfiguration& configuration, std::uint64_t sample,
                               double time_limit_seconds, const std::atomic<bool>* interrupt) {
  check_configuration(configuration);
  const Network network = survey_network(configuration, sample);
  FunctionalDimensionOptions options;
  // One thread per sample: samples run side by side, and a single-threaded
  // walk has no scheduling to vary, so the result is the same on any machine.
  options.walk.threads = 1;
  options.walk.time_limit_seconds = time_limit_seconds;
  options.walk.interrupt = interrupt;
  const FunctionalDimensionResult result = certify_functional_dimension(network, configuration.domain, options);

  SurveySample outcome;
  outcome.sample = sample;
  outcome.functional_dimension = result.functional_dimension;
  outcome.certified = result.certified;
  outcome.lower_bound = result.lower_bound;
  outcome.upper_bound = result.upper_bound;
  outcome.scaling_bound = result.scaling_bound;
  outcome.parametric_dimension = result.parametric_dimension;
  outcome.regions = result.regions_walked;
  outcome.early_stop = result.early_stop;
  outcome.stop_reason = result.stop_reason;
  outcome.seconds = result.seconds;
  return outcome;
}

SurveyRunResult run_survey(const SurveyConfiguration& configuration, const std::vector<std::uint64_t>& samples,
                           const SurveyRunOptions& options) {
  check_configuration(configuration);
  SurveyRunResult run;
  if (samples.empty()) return run;
  unsigned threads = options.threads ? options.threads : std::max(1u, std::thread::hardware_concurrency());
  threads = static_cast<unsigned>(std::min<std::size_t>(threads, samples.size()));

  std::atomic<std::size_t> next{0};
  std::atomic<bool> has_failed{false};
  std::mutex report_mutex;
  std::exception_ptr failure;
  auto is_interrupted = [&] { return options.interrupt && options.interrupt->load(); };

  auto work = [&] {
    while (!has_failed.load() && !is_interrupted()) {
      const std::size_t position = next.fetch_add(1);
      if (position >= samples.size()) return;
      try {
        const SurveySample outcome =
            run_survey_sample(configuration, samples[position], options.time_limit_each, options.interrupt);
        if (outcome.stop_reason == StopReason::interrupted) return;
        const std::lock_guard lock(report_mutex);
        if (options.on_sample) options.on_sample(outcome);
        ++run.finished;
      } catch (...) {
        const std::lock_guard lock(report_mutex);
        if (!failure) failure = std::current_exception();
        has_failed = true;
        return;
      }
    }
  };
  std::vector<std::thread> pool;
  for (unsigned t = 1; t < threads; ++t) pool.emplace_back(work);
  work();
  for (auto& thread : pool) thread.join();
  if (failure) std::rethrow_exception(failure);
  run.is_interrupted = is_interrupted() && run.finished < samples.size();
  return run;
}

SurveySummary summarize_survey(const std::vector<SurveySample>& samples) {
  SurveySummary summary;
  summary.samples = samples.size();
  std::set<std::uint64_t> seen;
  std::set<std::size_t> scaling_bounds;
  Rational sum = 0;
  for (const SurveySample& s : samples) {
    if (!seen.insert(s.sample).second)
      throw usage_error("summarize_survey: sample " + std::to_string(s.sample) + " appears twice");
    scaling_bounds.insert(s.scaling_bound);
    if (!s.certified || !s.functional_dimension) {
      ++summary.uncertified;
      summary.uncertified_samples.push_back(s);
      continue;
    }
    const std::size_t value = *s.functional_dimension;
    ++summary.certified;
    ++summary.histogram[value];
    sum += Rational(static_cast<unsigned long>(value));
    if (value == s.scaling_bound) ++summary.at_scaling_bound;
  }
  std::sort(summary.uncertified_samples.begin(), summary.uncertified_samples.end(),
            [](const SurveySample& a, const SurveySample& b) { return a.sample < b.sample; });
  if (scaling_bounds.size() == 1) summary.scaling_bound = *scaling_bounds.begin();
  if (summary.certified == 0) return summary;

  const Rational count(static_cast<unsigned long>(summary.certified));
  const Rational mean = sum / count;
  summary.mean = mean;
  summary.at_scaling_bound_fraction = Rational(static_cast<unsigned long>(summary.at_scaling_bound)) / count;
  if (summary.certified >= 2) {
    // Exactly sum over the histogram of count * (value - mean)^2, over n - 1.
    Rational squares = 0;
    for (const auto& [value, times] : summary.histogram) {
      const Rational deviation = Rational(static_cast<unsigned long>(value)) - mean;
      squares += Rational(static_cast<unsigned long>(times)) * deviation * deviation;
    }
    summary.variance = Rational(squares / (count - 1));
  }
  std::size_t most = 0;
  for (const auto& [value, times] : summary.histogram) most = std::max(most, times);
  for (const auto& [value, times] : summary.histogram)
    if (times == most) summary.modes.push_back(value);
  return summary;
}

}  // namespace pleat
