// pleat survey: the certified functional dimension of many random networks of
// one or more architectures; resumable, split into tasks for job arrays, with exact summaries.
//   pleat survey --arch ... --samples N --seed S -o FILE   run (or resume)
//   pleat survey summary FILE...                           re-read files
//   pleat survey plot FILE --out hist.svg|hist.csv         draw the histogram
//   pleat survey merge A B ... -o ALL                      join the tasks' files
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/process_group.hpp"
#include "cli/progress.hpp"
#include "cli/signals.hpp"
#include "cli/formats/survey_file.hpp"
#include "cli/survey_report.hpp"
#include "cli/commands/survey_job.hpp"

#include <algorithm>
#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <iomanip>
#include <iostream>
#include <memory>
#include <optional>
#include <set>
#include <sstream>
#include <thread>

namespace pleat::cli {
namespace {

struct SurveyArguments {
  std::vector<std::string> architectures;
  std::uint64_t samples = 0;
  std::optional<std::uint64_t> seed;
  std::string init = "he";
  std::uint64_t digits = 6;
  DomainOptions domain;
  std::uint64_t threads = 0;
  double time_limit_each = 0;
  std::optional<std::uint64_t> task_index;
  std::optional<std::uint64_t> task_count;
  std::string legacy_part_text;  // the former I/M spelling, still read, no longer documented
  std::string output;
  bool json = false;
  bool quiet = false;
  // summary / plot / merge
  CLI::App* summary_command = nullptr;
  CLI::App* plot_command = nullptr;
  CLI::App* merge_command = nullptr;
  std::vector<std::string> inputs;
  std::string plot_path;
  std::string merge_path;
};

constexpr const char* survey_help =
    "Sample i of a survey is the network 'pleat random --arch A --seed S --sample i' (same\n"
    "--init and --digits); each is certified on the domain and written as one JSON line\n"
    "as soon as it finishes, after a header line with the configuration. Samples run in\n"
    "parallel, one per thread; every value is the same for any --threads.\n"
    "Rerunning the same command resumes: samples already in the file are skipped, and a\n"
    "line cut short by a killed run is rewritten. For a cluster job array, --task-index K\n"
    "--task-count N runs only the samples i with i % N == K (in a Slurm array job both are\n"
    "read from SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN and SLURM_ARRAY_TASK_COUNT when\n"
    "not given; --task-count 1 runs the whole survey); 'merge' joins the tasks' files.\n"
    "With --arch given several times, each architecture gets its own file: -o FILE with\n"
    "'{arch}' in it has that replaced by the widths (2-5-5-1), otherwise the widths are\n"
    "inserted before the extension (survey.jsonl -> survey.2-5-5-1.jsonl).\n"
    "Samples cut short by --time-limit-each are kept as bounds, out of the histogram\n"
    "(a rerun keeps them too: remove their lines from the file to run them again).\n"
    "Unless -q, a run first times one sample per thread of each architecture (kept, not\n"
    "rerun) and prints the projected CPU time of every sample still to run; the progress\n"
    "line then gives samples/s.\n"
    "\nExamples:\n"
    "  pleat survey --arch 2,5,5,5,1 --samples 200 --seed 1 -o survey.jsonl\n"
    "  pleat survey --arch 1,4,1 --arch 1,8,1 --samples 50 --seed 3 -o 'grid-{arch}.jsonl'\n"
    "  pleat survey --arch 2,10,10,1 --samples 1000 --seed 1 --task-index 3 --task-count 8 -o part3.jsonl\n"
    "  mpirun -n 8 pleat survey --arch 2,10,10,1 --samples 1000 --seed 1 --threads 1 -o survey.jsonl\n"
    "      # the samples split across 8 processes, rank 0 writing (MPI builds)\n"
    "  pleat survey merge part*.jsonl -o survey.jsonl\n"
    "  pleat survey summary survey.jsonl --json\n"
    "  pleat survey plot survey.jsonl --out hist.svg";

std::string output_path_for(const std::string& output, const std::vector<std::size_t>& architecture,
                            bool is_grid) {
  const std::string widths = architecture_text(architecture, '-');
  const std::size_t placeholder = output.find("{arch}");
  if (placeholder != std::string::npos) return std::string(output).replace(placeholder, 6, widths);
  if (!is_grid) return output;
  const std::filesystem::path path(output);
  return (path.parent_path() / (path.stem().string() + "." + widths + path.extension().string())).string();
}

std::string format_rate(double rate) {
  std::ostringstream out;
  out << std::setprecision(3) << rate;
  return out.str();
}

std::string format_duration(double seconds) {
  if (seconds < 10) return format_rate(seconds) + " s";  // 3 significant digits
  if (seconds < 90) return std::to_string(static_cast<long>(seconds + 0.5)) + " s";
  if (seconds < 5400) return std::to_string(static_cast<long>(seconds / 60 + 0.5)) + " min";
  if (seconds < 2 * 86400) return std::to_string(static_cast<long>(seconds / 3600 + 0.5)) + " h";
  return std::to_string(static_cast<long>(seconds / 86400 + 0.5)) + " days";
}


SurveyConfiguration configuration_for(const SurveyArguments& arguments, const std::string& architecture_option) {
  SurveyConfiguration configuration;
  configuration.architecture = parse_width_list(architecture_option, "--arch");
  check_parameter_count(configuration.architecture, "--arch");
  if (configuration.architecture.size() < 2)
    throw input_error("--arch: give the input width and at least one layer, e.g. 2,5,5,1");
  if (arguments.digits < 1 || arguments.digits > 40)
    throw input_error("--digits: expected 1 to 40, got " + std::to_string(arguments.digits));
  configuration.init = parse_initialization(arguments.init);
  configuration.digits = static_cast<int>(arguments.digits);
  configuration.seed = *arguments.seed;
  configuration.samples = arguments.samples;
  configuration.domain = make_domain(arguments.domain, configuration.architecture.front());
  return configuration;
}

// The samples of this task not yet in the survey file (read only), increasing.
std::vector<std::uint64_t> pending_samples(const SurveyConfiguration& configuration, const ShardSet& shard,
                                           const std::string& path) {
  std::set<std::uint64_t> done;
  for (const SurveySample& s : resume_survey_file(path, survey_header_json(configuration, shard)).samples)
    done.insert(s.sample);
  std::vector<std::uint64_t> todo;
  for (std::uint64_t index : shard.indices)
    for (std::uint64_t i : shard_samples(configuration.samples, index, shard.count))
      if (!done.count(i)) todo.push_back(i);
  std::sort(todo.begin(), todo.end());
  return todo;
}

// Samples already computed for the projection at the start of a run (each
// architecture's first pending samples), written by run_one before the rest.
using ProbedSamples = std::vector<SurveySample>;

// A survey file tried before any sample runs: one of another survey, or a
// path that cannot be written, was found only at its architecture's turn,
// after the architectures before it (and the projection's samples) had run.
// An existing file is opened for appending, which changes nothing.
void refuse_unusable_survey_file(const SurveyConfiguration& configuration, const ShardSet& shard,
                                 const std::string& path) {
  if (path.empty() || path == "-") return;
  (void)resume_survey_file(path, survey_header_json(configuration, shard));
  if (std::filesystem::exists(path)) OutputFile(path, OutputFile::Mode::append).close();
  else refuse_unwritable_output(path);
}

// Runs (or resumes) one architecture's survey; returns what its file holds.
SurveyRecord run_one(const SurveyArguments& arguments, const SurveyConfiguration& configuration,
                     const ShardSet& shard, const std::string& path, const std::string& label,
                     const InterruptGuard& interrupt, ProgressLine& progress, bool& is_interrupted,
                     const ProbedSamples& probed) {
  SurveyRecord record;
  record.header = survey_header_json(configuration, shard);
  record.source = path;

  // In an MPI job rank 0 alone reads and writes the file.
  WalkTransport* group = process_group();
  const bool is_leader = !group || group->rank() == 0;
  SurveyResume resume = resume_survey_file(is_leader ? path : "", record.header);
  const std::uintmax_t keep_bytes = resume.keep_bytes;
  record.samples = std::move(resume.samples);
  if (resume.dropped_partial_line)
    std::cerr << "pleat: " << path << ": dropped a last line cut short by an earlier run\n";
  std::set<std::uint64_t> done;
  for (const SurveySample& s : record.samples) done.insert(s.sample);
  std::vector<std::uint64_t> todo;
  for (std::uint64_t index : shard.indices)
    for (std::uint64_t i : shard_samples(configuration.samples, index, shard.count))
      if (!done.count(i)) todo.push_back(i);
  std::sort(todo.begin(), todo.end());

  std::unique_ptr<SurveyWriter> writer;
  if (!path.empty() && is_leader) writer = std::make_unique<SurveyWriter>(path, keep_bytes, record.header);
  if (!done.empty() && !arguments.quiet) {
    // Samples an earlier run cut short stay bounds (the file keeps them): say
    // so, since a rerun with a longer limit does not retry them.
    const auto cut = std::count_if(record.samples.begin(), record.samples.end(),
                                   [](const SurveySample& s) { return !s.functional_dimension; });
    std::cerr << "pleat: " << path << ": resuming, " << count_of(done.size(), "sample") << " already there"
              << (cut ? " (" + std::to_string(cut) + " of them cut short by a time limit, kept as bounds)" : "") << ", "
              << todo.size() << " to run\n";
  }

  // Probe samples (computed before this survey's turn) are written first;
  // the rate counts only the samples run here.
  std::vector<const SurveySample*> from_probe;
  for (const SurveySample& sample : probed)
    if (std::binary_search(todo.begin(), todo.end(), sample.sample)) from_probe.push_back(&sample);
  const std::size_t total_todo = todo.size();
  const auto started = std::chrono::steady_clock::now();
  std::size_t finished = 0;
  double cpu_seconds = 0;  // samples run one per thread: their wall times add up to CPU time
  SurveyRunOptions options;
  options.threads = static_cast<unsigned>(arguments.threads);
  options.time_limit_each = arguments.time_limit_each;
  options.interrupt = &interrupt.flag();
  options.on_sample = [&](const SurveySample& sample) {
    if (writer) writer->write(sample_json(sample));
    record.samples.push_back(sample);
    ++finished;
    cpu_seconds += sample.seconds;
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    const std::size_t run_here = finished - std::min(finished, from_probe.size());
    const double cpu_per_sample = cpu_seconds / static_cast<double>(finished);
    std::string text = label + std::to_string(done.size() + finished) + "/" +
                       std::to_string(done.size() + total_todo) + " samples";
    if (run_here > 0) {
      const double rate = static_cast<double>(run_here) / std::max(elapsed, 1e-9);
      text += ", " + format_rate(rate) + "/s, ETA " + format_duration(static_cast<double>(total_todo - finished) / rate);
    }
    progress.update(text + ", projected CPU " +
                    format_duration(cpu_per_sample * static_cast<double>(done.size() + total_todo)) +
                    " for all samples");
  };
  for (const SurveySample* sample : from_probe) options.on_sample(*sample);
  std::erase_if(todo, [&](std::uint64_t i) {
    return std::any_of(from_probe.begin(), from_probe.end(), [&](const SurveySample* s) { return s->sample == i; });
  });
  const SurveyRunResult result =
      group ? run_survey_in_job(configuration, share_of_samples(*group, todo), options, group->size(), is_leader)
            : run_survey(configuration, todo, options);
  is_interrupted = result.is_interrupted;
  return record;
}

// One survey's summary, or one row per survey of a grid; JSON or text.
void print_report(const std::vector<SurveyRecord>& records, const std::vector<SurveySummary>& summaries,
                  bool is_json) {
  if (is_json) {
    if (records.size() == 1) {
      std::cout << json_text(summary_to_json(records[0], summaries[0]));
    } else {
      Json grid{{"format", "pleat-survey-grid/1"}, {"surveys", Json::array()}};
      for (std::size_t k = 0; k < records.size(); ++k) grid["surveys"].push_back(summary_to_json(records[k], summaries[k]));
      std::cout << json_text(grid);
    }
  } else if (records.size() == 1) {
    print_summary(records[0], summaries[0], std::cout);
  } else {
    print_grid(records, summaries, std::cout);
  }
}

std::optional<std::uint64_t> environment_number(const char* name) {
  const char* text = std::getenv(name);
  if (!text || !*text) return std::nullopt;
  return parse_unsigned(text, name);
}

// The part of the survey this run does: task K of N (the samples i with
// i % N == K) from --task-index/--task-count, else from a Slurm array job's
// variables, else the whole survey.
ShardSet selected_task(const SurveyArguments& arguments) {
  if (!arguments.legacy_part_text.empty()) {
    const ShardSet part = parse_shard(arguments.legacy_part_text, "--shard");
    if (part.indices.size() != 1) throw input_error("--shard: give one part I/M");
    return part;
  }
  std::string index_source = "--task-index";
  std::optional<std::uint64_t> count = arguments.task_count;
  std::optional<std::uint64_t> index = arguments.task_index;
  if (!count) count = environment_number("SLURM_ARRAY_TASK_COUNT");
  if (!index && count && *count > 1) {
    if (const auto id = environment_number("SLURM_ARRAY_TASK_ID")) {
      const std::uint64_t first = environment_number("SLURM_ARRAY_TASK_MIN").value_or(0);
      if (*id < first) throw input_error("SLURM_ARRAY_TASK_ID " + std::to_string(*id) + " is below SLURM_ARRAY_TASK_MIN");
      index = *id - first;
      index_source = "SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN";
    }
  }
  if (!count) count = 1;
  if (*count == 0) throw input_error("--task-count: give the number of tasks (at least 1)");
  if (*count == 1) return ShardSet{};
  if (!index)
    throw input_error("--task-count " + std::to_string(*count) +
                      ": give --task-index K (0 <= K < N), or run in a Slurm array job");
  if (*index >= *count)
    throw input_error(index_source + " is " + std::to_string(*index) + ", not below the task count " +
                      std::to_string(*count) + " (tasks are numbered from 0; a Slurm array with a step is not supported)");
  ShardSet part;
  part.indices = {*index};
  part.count = *count;
  return part;
}

// At the start of a run: each architecture's first pending samples (one
// per thread), run now and written later by run_one, give its CPU seconds
// per sample; times the samples still to run, summed over the grid, that is
// the projected CPU time of the whole run, printed on standard error. A
// projection, not a bound: samples of one architecture vary in cost.
std::vector<ProbedSamples> probe_and_project(const SurveyArguments& arguments,
                                             const std::vector<SurveyConfiguration>& configurations,
                                             const ShardSet& shard, const std::vector<std::string>& paths,
                                             const InterruptGuard& interrupt, ProgressLine& progress) {
  std::vector<ProbedSamples> probed(configurations.size());
  const unsigned threads = arguments.threads ? static_cast<unsigned>(arguments.threads)
                                             : std::max(1u, std::thread::hardware_concurrency());
  double projected = 0;
  std::size_t pending_total = 0;
  std::string detail;
  for (std::size_t k = 0; k < configurations.size(); ++k) {
    const std::vector<std::uint64_t> todo = pending_samples(configurations[k], shard, paths[k]);
    if (todo.empty()) continue;
    const std::vector<std::uint64_t> first(todo.begin(), todo.begin() + std::min<std::size_t>(threads, todo.size()));
    progress.update("survey " + architecture_text(configurations[k].architecture) + ": timing " +
                    std::to_string(first.size()) + " sample(s) for the projection");
    SurveyRunOptions options;
    options.threads = threads;
    options.time_limit_each = arguments.time_limit_each;
    options.interrupt = &interrupt.flag();
    options.on_sample = [&](const SurveySample& sample) { probed[k].push_back(sample); };
    if (run_survey(configurations[k], first, options).is_interrupted || probed[k].empty()) return probed;
    double seconds = 0;
    for (const SurveySample& sample : probed[k]) seconds += sample.seconds;
    const double per_sample = seconds / static_cast<double>(probed[k].size());
    projected += per_sample * static_cast<double>(todo.size());
    pending_total += todo.size();
    detail += (detail.empty() ? "" : ", ") + architecture_text(configurations[k].architecture) + " " +
              format_duration(per_sample) + " per sample";
  }
  progress.finish();
  if (pending_total > 0)
    std::cerr << "pleat survey: projected CPU time " << format_duration(projected) << " for "
              << count_of(pending_total, "sample") << " (" << detail << "; timed on " << threads << " thread" << (threads == 1 ? "" : "s") << ")\n";
  return probed;
}

int run_survey_command(const SurveyArguments& arguments) {
  const InterruptGuard early_interrupt;  // before reading: a Ctrl-C while reading stops cleanly too (signals.hpp)
  if (arguments.architectures.empty()) throw input_error("--arch is required (e.g. --arch 2,5,5,5,1)");
  if (!arguments.seed) throw input_error("--seed is required");
  if (arguments.samples == 0) throw input_error("--samples: give the number of samples (at least 1)");
  // The samples still to run are listed in memory; a billion is far beyond any survey that finishes.
  if (arguments.samples > 1000000000) throw input_error("--samples: at most 1000000000");
  const ShardSet shard = selected_task(arguments);
  const bool is_grid = arguments.architectures.size() > 1;
  if (is_grid && arguments.output == "-") throw input_error("-o: a grid of architectures needs file names");

  // Check every architecture and file name before running anything.
  std::vector<SurveyConfiguration> configurations;
  std::vector<std::string> paths;
  for (const std::string& option : arguments.architectures) {
    configurations.push_back(configuration_for(arguments, option));
    paths.push_back(arguments.output.empty() ? "" : output_path_for(arguments.output, configurations.back().architecture, is_grid));
  }
  for (std::size_t k = 0; k < paths.size(); ++k)
    for (std::size_t j = 0; j < k; ++j)
      if (!paths[k].empty() && paths[k] == paths[j])
        throw input_error("--arch: " + arguments.architectures[k] + " is given twice");
  if (!is_follower_process())  // rank 0 writes the files
    for (std::size_t k = 0; k < paths.size(); ++k) refuse_unusable_survey_file(configurations[k], shard, paths[k]);

  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  // In an MPI job rank 0 alone times the first samples (it prints the projection).
  const std::vector<ProbedSamples> probed =
      arguments.quiet || is_follower_process()
          ? std::vector<ProbedSamples>(configurations.size())
          : probe_and_project(arguments, configurations, shard, paths, interrupt, progress);
  std::vector<SurveyRecord> records;
  bool is_interrupted = false;
  for (std::size_t k = 0; k < configurations.size() && !is_interrupted; ++k) {
    const std::string label = "survey " + architecture_text(configurations[k].architecture) +
                              (is_grid ? " [" + std::to_string(k + 1) + "/" + std::to_string(configurations.size()) + "]" : "") +
                              ": ";
    records.push_back(
        run_one(arguments, configurations[k], shard, paths[k], label, interrupt, progress, is_interrupted, probed[k]));
    // In an MPI job every rank goes on to the next architecture, or none.
    if (WalkTransport* group = process_group()) is_interrupted = group->maximum({is_interrupted ? 1u : 0u})[0] != 0;
  }
  progress.finish();

  std::vector<SurveySummary> summaries;
  for (const SurveyRecord& record : records) summaries.push_back(summarize_survey(record.samples));
  print_report(records, summaries, arguments.json);
  if (is_interrupted) {
    std::cerr << "pleat: interrupted; the finished samples are saved. Run the same command again to resume.\n";
    return 130;
  }
  return 0;
}

SurveyRecord load_record(const std::string& path) {
  SurveyFile file = read_survey_file(path);
  require_survey_header(file, path);
  if (file.has_partial_line)
    std::cerr << "pleat: " << path << ": ignoring a last line cut short (rerun the survey to complete it)\n";
  return SurveyRecord{std::move(file.header), std::move(file.samples), path};
}

int run_summary(const SurveyArguments& arguments) {
  std::vector<SurveyRecord> records;
  std::vector<SurveySummary> summaries;
  for (const std::string& path : arguments.inputs) {
    records.push_back(load_record(path));
    summaries.push_back(summarize_survey(records.back().samples));
  }
  print_report(records, summaries, arguments.json);
  return 0;
}

int run_plot(const SurveyArguments& arguments) {
  note_input_file(arguments.inputs.front(), "survey file");
  const SurveyRecord record = load_record(arguments.inputs.front());
  const SurveySummary summary = summarize_survey(record.samples);
  const std::string extension = std::filesystem::path(arguments.plot_path).extension().string();
  if (extension == ".svg")
    write_output(arguments.plot_path, histogram_svg(record, summary));
  else if (extension == ".csv")
    write_output(arguments.plot_path, histogram_csv(summary));
  else
    throw input_error("--out: expected a file ending in .svg or .csv, got '" + arguments.plot_path + "'");
  return 0;
}

// Shards of one survey: equal headers apart from the shard, the same number
// of shards, no shard twice and no sample twice.
// -o naming one of the inputs would truncate it before (or while) it is read.
void refuse_output_among_inputs(const std::string& output, const std::vector<std::string>& inputs) {
  std::error_code error;
  for (const std::string& input : inputs)
    if (output == input || std::filesystem::equivalent(output, input, error))
      throw input_error("-o: " + output + " is one of the files to merge; write the merged file elsewhere");
}

int run_merge(const SurveyArguments& arguments) {
  if (arguments.merge_path != "-") refuse_output_among_inputs(arguments.merge_path, arguments.inputs);
  std::vector<SurveyRecord> records;
  for (const std::string& path : arguments.inputs) records.push_back(load_record(path));
  const SurveyRecord& first = records.front();
  const ShardSet first_shard = shard_from_header(first.header, first.source);
  ShardSet merged;
  merged.count = first_shard.count;
  merged.indices.clear();
  std::vector<SurveySample> samples;
  std::set<std::uint64_t> seen;
  for (const SurveyRecord& record : records) {
    const std::string difference = header_difference(first.header, record.header);
    if (!difference.empty())
      throw input_error(record.source + " and " + first.source + " are tasks of different surveys ('" +
                        difference + "' is " + record.header[difference].dump() + " and " +
                        first.header[difference].dump() + ")");
    const ShardSet shard = shard_from_header(record.header, record.source);
    if (shard.count != merged.count)
      throw input_error(record.source + " splits the survey into " + std::to_string(shard.count) + " tasks, " +
                        first.source + " into " + std::to_string(merged.count) + "; they cannot be merged");
    for (std::uint64_t index : shard.indices) {
      if (std::find(merged.indices.begin(), merged.indices.end(), index) != merged.indices.end())
        throw input_error(record.source + ": task " + std::to_string(index) + " of " + std::to_string(shard.count) +
                          " is also in an earlier file (overlapping tasks)");
      merged.indices.push_back(index);
    }
    for (const SurveySample& sample : record.samples) {
      if (!seen.insert(sample.sample).second)
        throw input_error(record.source + ": sample " + std::to_string(sample.sample) + " is also in an earlier file");
      samples.push_back(sample);
    }
  }
  std::sort(merged.indices.begin(), merged.indices.end());
  if (merged.indices.size() == merged.count) merged = ShardSet{};
  std::sort(samples.begin(), samples.end(),
            [](const SurveySample& a, const SurveySample& b) { return a.sample < b.sample; });
  Json header = first.header;
  header["shard"] = format_shard(merged);
  std::string text = json_text(header, false);
  for (const SurveySample& sample : samples) text += json_text(sample_json(sample), false);
  // Atomically: an existing file is replaced whole or left as it was.
  if (arguments.merge_path == "-") write_output("", text);
  else write_file_atomically(arguments.merge_path, text);

  SurveyRecord result{header, samples, arguments.merge_path};
  const std::uint64_t missing = missing_samples(result);
  if (!arguments.quiet)
    // "4 of 6 samples, the whole survey (2 not run yet)": it read "4 samples,
    // the whole survey, 2 samples still missing", as if the survey were whole.
    std::cerr << "merged " << count_of(records.size(), "file") << ": "
              << (missing ? std::to_string(samples.size()) + " of " + count_of(samples.size() + missing, "sample")
                          : count_of(samples.size(), "sample"))
              << ", " << describe_tasks(merged) << (missing ? " (" + std::to_string(missing) + " not run yet)" : "")
              << "\n";
  return 0;
}

int run_selected(const SurveyArguments& arguments) {
  // In an MPI job only the survey itself runs across the processes.
  const bool is_survey_run = !arguments.summary_command->parsed() && !arguments.plot_command->parsed() &&
                             !arguments.merge_command->parsed();
  if (is_follower_process() && !is_survey_run) return 0;
  if (arguments.summary_command->parsed()) return run_summary(arguments);
  if (arguments.plot_command->parsed()) return run_plot(arguments);
  if (arguments.merge_command->parsed()) return run_merge(arguments);
  return run_survey_command(arguments);
}

}  // namespace

void register_survey(CommandTable& commands) {
  auto arguments = std::make_shared<SurveyArguments>();
  CLI::App& command = commands.add(
      "survey", "Certified functional dimension of many random networks: histogram, mean, variance",
      survey_help, [arguments] { return run_selected(*arguments); });
  command.add_option("--arch", arguments->architectures,
                     "Layer widths, input first (repeat for a grid of architectures)")
      ->allow_extra_args(false)
      ->type_name("WIDTHS");
  add_unsigned_option(command, "--samples", arguments->samples, "Number of samples (networks 0 .. N-1)");
  command
      .add_option_function<std::string>(
          "--seed", [arguments](const std::string& text) { arguments->seed = parse_unsigned(text, "--seed"); },
          "Seed of the generator (0 .. 2^64-1)")
      ->type_name("N");
  command.add_option("--init", arguments->init, "Initialization: he (default) or uniform")
      ->check(CLI::IsMember({"he", "uniform"}))
      ->type_name("NAME");
  add_unsigned_option(command, "--digits", arguments->digits,
                      "Significant decimal digits per parameter, 1 to 40 (default 6)");
  add_domain_options(command, arguments->domain);
  add_threads_option(command, arguments->threads, "Samples run at once (default: all cores)");
  add_seconds_option(command, "--time-limit-each", arguments->time_limit_each,
                     "Stop a sample after this many seconds (kept as bounds)");
  command
      .add_option_function<std::string>(
          "--task-index", [arguments](const std::string& text) { arguments->task_index = parse_unsigned(text, "--task-index"); },
          "Run task K of --task-count: the samples i with i % N == K (default: $SLURM_ARRAY_TASK_ID)")
      ->type_name("K");
  command
      .add_option_function<std::string>(
          "--task-count", [arguments](const std::string& text) { arguments->task_count = parse_unsigned(text, "--task-count"); },
          "Split the survey into N tasks, e.g. a job array (default: $SLURM_ARRAY_TASK_COUNT, else 1)")
      ->type_name("N");
  command.add_option("--shard", arguments->legacy_part_text)->group("");  // old spelling of --task-index/--task-count
  command.add_option("-o,--output", arguments->output, "Write (or resume) the sample lines in FILE")
      ->type_name("FILE");
  command.add_flag("--json", arguments->json, "Print the summary as JSON (pleat-survey-summary/1)");
  command.add_flag("-q,--quiet", arguments->quiet,
                   "No progress line and no projection (no samples timed first) on standard error");

  arguments->summary_command = command.add_subcommand("summary", "Summarise survey files (one row per file)");
  arguments->summary_command->add_option("files", arguments->inputs, "Survey files (pleat-survey/1)")->required();
  arguments->summary_command->add_flag("--json", arguments->json, "Print the summary as JSON");
  // Each subcommand says what it does; CLI11 would repeat the survey's own text.
  arguments->summary_command->footer(
      "One file: the samples present and missing, the histogram of the certified values,\n"
      "their exact mean, variance (n-1) and modes, how many are at the scaling bound, and\n"
      "each sample cut short with its bounds. Several files: one row per file (decimals;\n"
      "--json gives pleat-survey-grid/1, the files' pleat-survey-summary/1 in 'surveys').\n\n"
      "Examples:\n  pleat survey summary survey.jsonl --json\n  pleat survey summary grid-*.jsonl");

  arguments->plot_command = command.add_subcommand("plot", "Draw a survey's histogram as SVG or CSV");
  arguments->plot_command->add_option("file", arguments->inputs, "Survey file (pleat-survey/1)")
      ->required()
      ->expected(1);
  arguments->plot_command->add_option("--out", arguments->plot_path, "hist.svg or hist.csv")->required();
  arguments->plot_command->footer(
      "The histogram of the certified values, the scaling bound marked; samples cut short\n"
      "are left out (the SVG's note counts them). hist.csv: functional_dimension,count,\n"
      "is_scaling_bound, one row per value from the least to the greatest (the scaling bound\n"
      "included, counts of 0 too).\n\n"
      "Example:\n  pleat survey plot survey.jsonl --out hist.svg");

  arguments->merge_command = command.add_subcommand("merge", "Join the files of one survey's tasks into one file");
  arguments->merge_command->add_option("files", arguments->inputs, "Survey files of the tasks (pleat-survey/1)")->required();
  arguments->merge_command->add_option("-o,--output", arguments->merge_path, "The merged file")->required();
  arguments->merge_command->add_flag("-q,--quiet", arguments->quiet, "No message on standard error");
  arguments->merge_command->footer(
      "Joins the files of one survey's tasks (--task-index/--task-count, or an array job)\n"
      "into one file, samples in order; files of different surveys, overlapping tasks or a\n"
      "sample twice are refused. The merged file is written whole or not at all; standard\n"
      "error says which tasks it holds and how many samples are still missing.\n\n"
      "Example:\n  pleat survey merge part*.jsonl -o survey.jsonl");
}

}  // namespace pleat::cli
