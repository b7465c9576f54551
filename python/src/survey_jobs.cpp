#include "survey_jobs.hpp"

#include "convert.hpp"
#include "run_job.hpp"

#include "cli/common.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/formats/survey_file.hpp"
#include "core/errors.hpp"
#include "core/random_network.hpp"
#include "enumerate/survey.hpp"

#include <pybind11/stl.h>

#include <algorithm>
#include <set>

namespace pleat::python {
namespace {

py::dict sample_dict(const SurveySample& sample) {
  py::dict out;
  out["sample"] = sample.sample;
  out["functional_dimension"] = optional_value(sample.functional_dimension);
  out["certified"] = sample.certified;
  out["lower_bound"] = sample.lower_bound;
  out["upper_bound"] = sample.upper_bound;
  out["scaling_bound"] = sample.scaling_bound;
  out["parametric_dimension"] = sample.parametric_dimension;
  out["regions"] = sample.regions;
  out["early_stop"] = sample.early_stop;
  out["stop_reason"] = optional_text(to_string(sample.stop_reason));
  out["seconds"] = sample.seconds;
  return out;
}

py::object optional_fraction(const std::optional<Rational>& value) {
  return value ? fraction(*value) : py::object(py::none());
}

py::dict survey_dict(const SurveyConfiguration& configuration, std::vector<SurveySample> samples,
                     const cli::Json& header) {
  std::sort(samples.begin(), samples.end(), [](const auto& a, const auto& b) { return a.sample < b.sample; });
  const SurveySummary summary = summarize_survey(samples);
  py::dict out;
  out["header"] = header.dump();
  out["arch"] = configuration.architecture;
  out["domain"] = configuration.domain.describe();
  py::list sample_list;
  for (const auto& sample : samples) sample_list.append(sample_dict(sample));
  out["samples"] = sample_list;
  out["samples_total"] = configuration.samples;
  out["certified"] = summary.certified;
  out["uncertified"] = summary.uncertified;
  py::dict histogram;
  for (const auto& [value, count] : summary.histogram) histogram[py::cast(value)] = count;
  out["histogram"] = histogram;
  out["mean"] = optional_fraction(summary.mean);
  out["variance"] = optional_fraction(summary.variance);
  out["modes"] = summary.modes;
  out["at_scaling_bound"] = summary.at_scaling_bound;
  out["at_scaling_bound_fraction"] = optional_fraction(summary.at_scaling_bound_fraction);
  out["scaling_bound"] = optional_value(summary.scaling_bound);
  return out;
}

// What random_network requires of its arguments, as the survey's and
// Network.random's messages say it.
void check_random_arguments(const std::vector<std::size_t>& architecture, std::uint64_t digits) {
  if (architecture.size() < 2) throw input_error("arch: give the input width and at least one layer, e.g. 2,5,5,1");
  for (std::size_t width : architecture)
    if (width == 0) throw input_error("arch: every width must be positive");
  cli::check_parameter_count(architecture, "arch");
  if (digits < 1 || digits > 40) throw input_error("digits: expected 1 to 40, got " + std::to_string(digits));
}

}  // namespace

std::shared_ptr<Network> random_network_of(const std::vector<std::size_t>& architecture, std::uint64_t seed,
                                           std::uint64_t sample, const std::string& init, std::uint64_t digits) {
  check_random_arguments(architecture, digits);
  return std::make_shared<Network>(
      random_network(architecture, seed, sample, parse_initialization(init), static_cast<int>(digits)));
}

py::dict survey(const std::vector<std::size_t>& architecture, std::uint64_t samples, std::uint64_t seed,
                const std::string& init, std::uint64_t digits, const py::object& domain_spec, unsigned threads,
                double time_limit_each, const std::string& output, const std::string& shard_text) {
  check_random_arguments(architecture, digits);
  if (samples == 0) throw input_error("samples: give the number of samples (at least 1)");
  if (samples > 1000000000) throw input_error("samples: at most 1000000000");
  SurveyConfiguration configuration;
  configuration.architecture = architecture;
  configuration.init = parse_initialization(init);
  configuration.digits = static_cast<int>(digits);
  configuration.seed = seed;
  configuration.samples = samples;
  configuration.domain = domain_argument(domain_spec, architecture.front());
  const cli::ShardSet shard = cli::parse_shard(shard_text, "shard");
  if (shard.indices.size() != 1) throw input_error("shard: give one shard I/M");
  const cli::Json header = cli::survey_header_json(configuration, shard);

  // Resume exactly as `pleat survey -o FILE` does: keep the file's samples,
  // run the rest of the shard, append each finished one as a whole line.
  cli::SurveyResume resume = cli::resume_survey_file(output, header);
  std::vector<SurveySample> found = std::move(resume.samples);
  std::set<std::uint64_t> done;
  for (const SurveySample& s : found) done.insert(s.sample);
  std::vector<std::uint64_t> todo;
  for (std::uint64_t i : shard_samples(configuration.samples, shard.indices.front(), shard.count))
    if (!done.count(i)) todo.push_back(i);
  std::unique_ptr<cli::SurveyWriter> writer;
  if (!output.empty()) writer = std::make_unique<cli::SurveyWriter>(output, resume.keep_bytes, header);

  std::atomic<bool> interrupt{false};
  const SurveyRunResult run = run_without_gil(
      [&] {
        SurveyRunOptions options;
        options.threads = threads;
        options.time_limit_each = time_limit_each;
        options.interrupt = &interrupt;
        options.on_sample = [&](const SurveySample& sample) {
          if (writer) writer->write(cli::sample_json(sample));
          found.push_back(sample);
        };
        return run_survey(configuration, todo, options);
      },
      interrupt);
  py::dict out = survey_dict(configuration, std::move(found), header);
  out["path"] = optional_text(output);
  out["resumed"] = done.size();
  out["interrupted"] = run.is_interrupted;
  out["dropped_partial_line"] = resume.dropped_partial_line;
  return out;
}

py::dict read_survey(const std::string& path) {
  cli::SurveyFile file = cli::read_survey_file(path);
  cli::require_survey_header(file, path);
  const SurveyConfiguration configuration = cli::configuration_from_header(file.header, path + ":1");
  py::dict out = survey_dict(configuration, std::move(file.samples), file.header);
  out["path"] = path;
  out["resumed"] = 0;
  out["interrupted"] = false;
  out["dropped_partial_line"] = file.has_partial_line;
  return out;
}

}  // namespace pleat::python
