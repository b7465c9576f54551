// pleat track: the certified functional dimension along a training run, one
// checkpoint after another, as a table and a line plot; resumable.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/figures/figure.hpp"
#include "cli/progress.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/formats/region_json.hpp"
#include "cli/formats/track_file.hpp"
#include "cli/signals.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "enumerate/functional_dimension.hpp"

#include <algorithm>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <map>
#include <memory>
#include <optional>
#include <sstream>
#include <system_error>

namespace pleat::cli {
namespace {

struct TrackArguments {
  std::vector<std::string> checkpoints;
  DomainOptions domain;
  std::string output_path;  // pleat-track/1 lines, for resuming
  std::string csv_path;
  std::string svg_path;
  bool json = false;
  bool quiet = false;
  WalkLimitOptions limits;  // --time-limit-each: each checkpoint's limit
};

Json header_json(const TrackArguments& arguments, const Domain& domain) {
  return Json{{"format", "pleat-track/1"},
              {"checkpoints", arguments.checkpoints},
              {"domain", domain_to_json(domain)},
              {"time_limit_each", arguments.limits.time_limit}};
}

TrackRow track_checkpoint(const TrackArguments& arguments, std::size_t index, ProgressLine& progress,
                          const std::atomic<bool>& interrupt) {
  const std::string& path = arguments.checkpoints[index];
  const Network network = read_network_input(path);
  const Domain domain = make_domain(arguments.domain, network.input_dim);
  FunctionalDimensionOptions options;
  apply_walk_limits(arguments.limits, interrupt, options.walk);
  options.walk.on_progress = [&](const WalkProgress& state) {
    progress.update("track: checkpoint " + std::to_string(index + 1) + " of " +
                    std::to_string(arguments.checkpoints.size()) + ", " + std::to_string(state.regions) +
                    " regions walked");
  };
  options.stop_at_scaling_bound = false;  // the region counts need the whole walk
  const FunctionalDimensionResult result = certify_functional_dimension(network, domain, options);
  TrackRow row;
  row.index = index;
  row.checkpoint = path;
  row.network = network_fingerprint(network);
  row.parametric_dimension = result.parametric_dimension;
  row.scaling_bound = result.scaling_bound;
  row.functional_dimension = result.functional_dimension;
  row.lower_bound = result.lower_bound;
  row.upper_bound = result.upper_bound;
  row.regions = result.walk.regions;
  if (result.walk_complete) row.linear_regions = result.walk.linear_regions;
  row.walk_complete = result.walk_complete;
  row.seconds = result.seconds;
  return row;
}

// The change of the certified value from the previous checkpoint (null when
// either is not certified, or the previous one has no row).
std::optional<long long> change_from_previous(const std::vector<TrackRow>& rows, std::size_t i) {
  if (i == 0 || rows[i - 1].index + 1 != rows[i].index || !rows[i].functional_dimension ||
      !rows[i - 1].functional_dimension)
    return std::nullopt;
  return static_cast<long long>(*rows[i].functional_dimension) -
         static_cast<long long>(*rows[i - 1].functional_dimension);
}

std::string value_text(const TrackRow& row) {
  return row.functional_dimension ? std::to_string(*row.functional_dimension)
                                  : "[" + std::to_string(row.lower_bound) + "," + std::to_string(row.upper_bound) + "]";
}

std::string signed_text(std::optional<long long> change) {
  if (!change) return "-";
  return (*change > 0 ? "+" : "") + std::to_string(*change);
}

void print_table(const std::vector<TrackRow>& rows, const Domain& domain, std::ostream& out) {
  std::size_t width = 10;
  for (const auto& row : rows) width = std::max(width, row.checkpoint.size());
  out << "domain " << domain.describe() << "; functional dimension certified unless shown as [lower,upper]\n";
  out << std::left << std::setw(static_cast<int>(width)) << "checkpoint" << std::right << std::setw(12)
      << "functional" << std::setw(8) << "change" << std::setw(9) << "scaling" << std::setw(9) << "regions"
      << std::setw(8) << "linear" << std::setw(10) << "seconds" << "\n";
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const TrackRow& row = rows[i];
    const std::string at_least = row.walk_complete ? "" : ">=";
    std::ostringstream seconds;
    seconds << std::fixed << std::setprecision(2) << row.seconds;
    out << std::left << std::setw(static_cast<int>(width)) << row.checkpoint << std::right << std::setw(12)
        << value_text(row) << std::setw(8) << signed_text(change_from_previous(rows, i)) << std::setw(9)
        << row.scaling_bound << std::setw(9) << at_least + std::to_string(row.regions) << std::setw(8)
        << (row.linear_regions ? std::to_string(*row.linear_regions) : "-") << std::setw(10) << seconds.str()
        << "\n";
  }
}

// checkpoints: the files given; an interrupted run has rows for fewer, and
// says so (interrupted), so that the table alone cannot pass for the run's.
Json table_json(const std::vector<TrackRow>& rows, const Domain& domain, const std::vector<std::string>& checkpoints,
                bool is_interrupted) {
  Json table = Json::array();
  for (std::size_t i = 0; i < rows.size(); ++i) {
    Json row = track_row_json(rows[i]);
    const auto change = change_from_previous(rows, i);
    row["change"] = change ? Json(*change) : Json(nullptr);
    table.push_back(std::move(row));
  }
  return Json{{"format", "pleat-track-table/1"}, {"domain", domain_to_json(domain)}, {"rows", std::move(table)},
              {"checkpoints", checkpoints}, {"interrupted", is_interrupted}};
}

std::string csv_quoted(const std::string& text) {
  std::string quoted = "\"";  // a path may hold a comma (and '"' doubled)
  for (char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + '"';
}

// One row per checkpoint given: those an interrupted run did not reach are
// listed with empty values, certified and walk_complete false, so that a
// table of the finished ones cannot pass for the whole run.
std::string table_csv(const std::vector<TrackRow>& rows, const std::vector<std::string>& checkpoints) {
  std::string text =
      "index,checkpoint,functional_dimension,lower_bound,upper_bound,certified,change,scaling_bound,"
      "parametric_dimension,regions,linear_regions,walk_complete,seconds\n";
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const TrackRow& row = rows[i];
    const auto change = change_from_previous(rows, i);
    const std::string checkpoint = csv_quoted(row.checkpoint);
    text += std::to_string(row.index) + "," + checkpoint + "," +
            (row.functional_dimension ? std::to_string(*row.functional_dimension) : "") + "," +
            std::to_string(row.lower_bound) + "," + std::to_string(row.upper_bound) + "," +
            (row.functional_dimension ? "true" : "false") + "," + (change ? std::to_string(*change) : "") + "," +
            std::to_string(row.scaling_bound) + "," + std::to_string(row.parametric_dimension) + "," +
            std::to_string(row.regions) + "," + (row.linear_regions ? std::to_string(*row.linear_regions) : "") + "," +
            (row.walk_complete ? "true" : "false") + "," + format_double(row.seconds) + "\n";
  }
  std::vector<bool> is_done(checkpoints.size(), false);
  for (const TrackRow& row : rows) is_done[row.index] = true;
  for (std::size_t i = 0; i < checkpoints.size(); ++i)
    if (!is_done[i]) text += std::to_string(i) + "," + csv_quoted(checkpoints[i]) + ",,,,false,,,,,,false,\n";
  return text;
}

// The line plot: the certified value per checkpoint (a solid dark line with
// dots; an uncertified checkpoint is a hollow dot with its bounds as a bar)
// and the scaling bound (dashed, burnt orange), the survey histogram's
// palette and type, so it reads the same in greyscale.
// planned: the checkpoints given; an interrupted run draws fewer, and its
// title says so.
std::string track_svg(const std::vector<TrackRow>& rows, const Domain& domain, std::size_t planned) {
  constexpr const char* value_colour = "#24505a";
  constexpr const char* bound_colour = "#c05621";
  constexpr const char* ink = "#222222";
  constexpr const char* grid = "#d9d9d9";
  constexpr double width = 720, height = 400, left = 64, right = 72, top = 72, bottom = 84, inset = 24;
  const double plot_width = width - left - right, plot_height = height - top - bottom;
  double low = static_cast<double>(rows.front().lower_bound), high = 0;
  for (const auto& row : rows) {
    low = std::min(low, static_cast<double>(row.lower_bound));
    high = std::max({high, static_cast<double>(row.upper_bound), static_cast<double>(row.scaling_bound)});
  }
  const std::vector<double> ticks = nice_ticks(std::max(0.0, low - 1), high + 1);
  const double axis_low = ticks.empty() ? low - 1 : std::min(ticks.front(), low - 1);
  const double axis_high = ticks.empty() ? high + 1 : std::max(ticks.back(), high + 1);
  auto x_of = [&](std::size_t i) {
    const double span = plot_width - 2 * inset;
    return left + inset + span * (rows.size() == 1 ? 0.5 : static_cast<double>(i) / static_cast<double>(rows.size() - 1));
  };
  auto y_of = [&](double value) { return top + plot_height * (1 - (value - axis_low) / (axis_high - axis_low)); };
  auto number = [](double value) { return fixed_point_text(value, 1); };

  std::ostringstream svg;
  svg << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << number(width) << "\" height=\"" << number(height)
      << "\" viewBox=\"0 0 " << number(width) << " " << number(height)
      << "\" font-family=\"DejaVu Sans, Arial, sans-serif\">\n";
  svg << "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n";
  svg << "<text x=\"" << number(left) << "\" y=\"24\" font-size=\"16\" fill=\"" << ink
      << "\">Certified functional dimension along training ("
      << (rows.size() < planned ? std::to_string(rows.size()) + " of " + count_of(planned, "checkpoint") +
                                      "; the run was interrupted"
                                : count_of(rows.size(), "checkpoint"))
      << ")</text>\n";
  svg << "<text x=\"" << number(left) << "\" y=\"42\" font-size=\"12\" fill=\"#555555\">domain "
      << escape_xml(domain.describe()) << "</text>\n";
  for (double tick : ticks) {
    svg << "<line x1=\"" << number(left) << "\" y1=\"" << number(y_of(tick)) << "\" x2=\"" << number(width - right)
        << "\" y2=\"" << number(y_of(tick)) << "\" stroke=\"" << grid << "\" stroke-width=\"1\"/>\n";
    svg << "<text x=\"" << number(left - 8) << "\" y=\"" << number(y_of(tick) + 4)
        << "\" font-size=\"12\" text-anchor=\"end\" fill=\"" << ink << "\">" << fixed_point_text(tick, 1)
        << "</text>\n";
  }
  auto polyline = [&](auto&& value_of, const char* colour, const char* dash) {
    svg << "<polyline fill=\"none\" stroke=\"" << colour << "\" stroke-width=\"2\"" << dash << " points=\"";
    for (std::size_t i = 0; i < rows.size(); ++i)
      svg << (i ? " " : "") << number(x_of(i)) << "," << number(y_of(static_cast<double>(value_of(rows[i]))));
    svg << "\"/>\n";
  };
  polyline([](const TrackRow& row) { return row.scaling_bound; }, bound_colour, " stroke-dasharray=\"6,4\"");
  polyline([](const TrackRow& row) { return row.lower_bound; }, value_colour, "");
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const TrackRow& row = rows[i];
    const std::string x = number(x_of(i));
    if (!row.functional_dimension)
      svg << "<line x1=\"" << x << "\" y1=\"" << number(y_of(static_cast<double>(row.lower_bound))) << "\" x2=\"" << x
          << "\" y2=\"" << number(y_of(static_cast<double>(row.upper_bound))) << "\" stroke=\"" << value_colour
          << "\" stroke-width=\"2\"/>\n";
    svg << "<circle cx=\"" << x << "\" cy=\"" << number(y_of(static_cast<double>(row.lower_bound)))
        << "\" r=\"4.5\" fill=\"" << (row.functional_dimension ? value_colour : "#ffffff") << "\" stroke=\""
        << value_colour << "\" stroke-width=\"2\"><title>" << escape_xml(row.checkpoint) << ": " << value_text(row)
        << "</title></circle>\n";
    const std::string label = std::filesystem::path(row.checkpoint).stem().string();
    svg << "<text transform=\"translate(" << x << "," << number(top + plot_height + 14)
        << ") rotate(30)\" font-size=\"11\" fill=\"" << ink << "\">" << escape_xml(label) << "</text>\n";
  }
  const double base = top + plot_height;
  svg << "<line x1=\"" << number(left) << "\" y1=\"" << number(base) << "\" x2=\"" << number(width - right)
      << "\" y2=\"" << number(base) << "\" stroke=\"" << ink << "\" stroke-width=\"1.5\"/>\n";
  svg << "<text transform=\"translate(18," << number(top + plot_height / 2)
      << ") rotate(-90)\" font-size=\"13\" text-anchor=\"middle\" fill=\"" << ink << "\">dimension</text>\n";
  // Legend: the line style says which is which without colour.
  const double legend_y = 58;
  svg << "<line x1=\"" << number(width - 420) << "\" y1=\"" << number(legend_y) << "\" x2=\"" << number(width - 396)
      << "\" y2=\"" << number(legend_y) << "\" stroke=\"" << value_colour << "\" stroke-width=\"2\"/>\n";
  svg << "<text x=\"" << number(width - 390) << "\" y=\"" << number(legend_y + 4) << "\" font-size=\"12\" fill=\""
      << ink << "\">functional dimension (certified)</text>\n";
  svg << "<line x1=\"" << number(width - 150) << "\" y1=\"" << number(legend_y) << "\" x2=\"" << number(width - 126)
      << "\" y2=\"" << number(legend_y) << "\" stroke=\"" << bound_colour
      << "\" stroke-width=\"2\" stroke-dasharray=\"6,4\"/>\n";
  svg << "<text x=\"" << number(width - 120) << "\" y=\"" << number(legend_y + 4) << "\" font-size=\"12\" fill=\""
      << bound_colour << "\">scaling bound</text>\n";
  svg << "</svg>\n";
  return svg.str();
}

// The --csv and --svg files this run has not written. One an earlier run
// left there must not pass for this run's: say so (stale) and why.
struct UnwrittenOutputs {
  bool is_csv_written = false;
  bool is_svg_written = false;

  void name_stale(const TrackArguments& arguments, const std::string& why) const {
    auto is_checkpoint = [&](const std::string& path) {  // refused as an output: not a stale table
      std::error_code error;
      return std::any_of(arguments.checkpoints.begin(), arguments.checkpoints.end(),
                         [&](const std::string& checkpoint) { return std::filesystem::equivalent(path, checkpoint, error); });
    };
    std::vector<std::string> stale;
    for (const auto& [path, is_written] : {std::pair{arguments.csv_path, is_csv_written},
                                           std::pair{arguments.svg_path, is_svg_written}})
      if (!is_written && !path.empty() && path != "-" && std::filesystem::is_regular_file(path) && !is_checkpoint(path))
        stale.push_back(path);
    for (const auto& path : stale)
      std::cerr << "pleat: " << path << " is stale: an earlier run's, not rewritten (" << why << ")\n";
  }
};

// A checkpoint listed twice (the same file, by any path, or standard input
// twice) is a slip in the list, not a second point of the training run: its
// row would show a change of 0 that no training step made, and '-' would be
// read empty the second time. Refused naming both positions.
void refuse_repeated_checkpoints(const std::vector<std::string>& checkpoints) {
  for (std::size_t j = 1; j < checkpoints.size(); ++j)
    for (std::size_t i = 0; i < j; ++i) {
      std::error_code error;
      const bool is_stdin = checkpoints[i] == "-" && checkpoints[j] == "-";
      if (!is_stdin && (checkpoints[i] == "-" || checkpoints[j] == "-" ||
                        !std::filesystem::equivalent(checkpoints[i], checkpoints[j], error) || error))
        continue;
      throw usage_error("checkpoint " + std::to_string(j + 1) + " (" + checkpoints[j] + ") is checkpoint " +
                        std::to_string(i + 1) + " (" + checkpoints[i] + ") again" +
                        (is_stdin ? " (standard input can be read once)" : "") + ": list each checkpoint once");
    }
}

int track_checkpoints(const TrackArguments& arguments, UnwrittenOutputs& outputs) {
  const InterruptGuard early_interrupt;  // before reading: a Ctrl-C while reading stops cleanly too (signals.hpp)
  refuse_repeated_checkpoints(arguments.checkpoints);
  // Every checkpoint must read before any work starts (nothing computed is lost to a typo).
  std::optional<std::size_t> input_dim;
  std::vector<CheckpointFacts> facts;  // what a resumed row is checked against
  for (const auto& path : arguments.checkpoints) {
    const Network network = read_network_input(path);
    facts.push_back(checkpoint_facts(network));
    if (input_dim && *input_dim != network.input_dim)
      throw input_error(path + ": takes " + count_of(network.input_dim, "input") + ", the first checkpoint " +
                        std::to_string(*input_dim));
    input_dim = network.input_dim;
  }
  for (const std::string* output : {&arguments.output_path, &arguments.csv_path, &arguments.svg_path})
    refuse_overwriting_input(*output);  // before the run, not after it
  refuse_shared_outputs({{"-o", arguments.output_path}, {"--csv", arguments.csv_path}, {"--svg", arguments.svg_path}});
  // Written after the last checkpoint: tried now, not after every checkpoint's walk.
  for (const std::string* output : {&arguments.csv_path, &arguments.svg_path}) refuse_unwritable_output(*output);
  const Domain domain = make_domain(arguments.domain, *input_dim);
  const Json header = header_json(arguments, domain);
  std::map<std::size_t, TrackRow> finished;
  std::optional<OutputFile> lines;
  if (!arguments.output_path.empty()) {
    bool dropped_cut_line = false;
    finished = read_finished_rows(arguments.output_path, header, facts, &dropped_cut_line);
    if (dropped_cut_line)
      std::cerr << "pleat: " << arguments.output_path << ": dropped a last line cut short by an earlier run\n";
    const bool is_new = !std::filesystem::is_regular_file(arguments.output_path) ||
                        std::filesystem::file_size(arguments.output_path) == 0;
    lines.emplace(arguments.output_path, OutputFile::Mode::append);
    if (is_new) {
      lines->write(json_text(header, false));
      lines->flush();
    }
  }

  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  bool is_interrupted = false;
  for (std::size_t i = 0; i < arguments.checkpoints.size() && !is_interrupted; ++i) {
    if (finished.contains(i)) continue;
    TrackRow row = track_checkpoint(arguments, i, progress, interrupt.flag());
    if (interrupt.flag()) {
      is_interrupted = true;  // a cut-short row is not kept: the rerun redoes it
      break;
    }
    if (lines) {
      lines->write(json_text(track_row_json(row), false));
      lines->flush();  // kept even if a later checkpoint is interrupted
    }
    finished[i] = std::move(row);
  }
  progress.finish();
  std::vector<TrackRow> rows;
  for (auto& [index, row] : finished) rows.push_back(row);
  if (rows.empty()) {
    if (is_interrupted) {
      std::cerr << "pleat: track interrupted; 0 of " << count_of(arguments.checkpoints.size(), "checkpoint")
                << " done: no table, CSV or plot written\n";
      outputs.name_stale(arguments, "interrupted before a checkpoint was done");
    }
    return is_interrupted ? 130 : 0;
  }

  // The table first: a CSV or SVG that fails to be written (a full disk)
  // then loses itself, not every checkpoint's certified value as well.
  if (arguments.json) std::cout << json_text(table_json(rows, domain, arguments.checkpoints, is_interrupted));
  else print_table(rows, domain, std::cout);
  if (!arguments.csv_path.empty()) write_output(arguments.csv_path, table_csv(rows, arguments.checkpoints));
  outputs.is_csv_written = true;
  if (!arguments.svg_path.empty()) write_output(arguments.svg_path, track_svg(rows, domain, arguments.checkpoints.size()));
  outputs.is_svg_written = true;
  if (is_interrupted) {
    std::cerr << "pleat: track interrupted; " << rows.size() << " of " << count_of(arguments.checkpoints.size(), "checkpoint")
              << " done" << (arguments.output_path.empty() ? "" : ", kept in " + arguments.output_path)
              << "\n";
    return 130;
  }
  return 0;
}

int run_track(const TrackArguments& arguments) {
  UnwrittenOutputs outputs;
  try {
    return track_checkpoints(arguments, outputs);
  } catch (...) {
    outputs.name_stale(arguments, "the run failed: see below");
    throw;
  }
}

}  // namespace

void register_track(CommandTable& commands) {
  auto arguments = std::make_shared<TrackArguments>();
  CLI::App& command = commands.add(
      "track", "The certified functional dimension along a training run, checkpoint by checkpoint",
      "Certifies each checkpoint (pleat-network/1 JSON or ONNX) in the order given, each file\n"
      "once, e.g. a "
      "glob of epoch files, walking every region: per checkpoint the functional dimension\n"
      "(or, when --time-limit-each cuts a walk short, proved bounds [lower,upper]), the\n"
      "scaling bound, the regions (>= when cut short) and linear regions (- when cut short:\n"
      "regions not found may join the pieces found), and the change of\n"
      "the certified value from the previous checkpoint. --csv and --svg write the table and\n"
      "a line plot; --json prints it (pleat-track-table/1). After Ctrl-C they hold the\n"
      "checkpoints done; the CSV lists the others as empty rows, the JSON says \"interrupted\".\n"
      "-o FILE keeps one JSON line per finished checkpoint (pleat-track/1); rerunning the\n"
      "same command resumes, skipping the checkpoints already in the file (a checkpoint file\n"
      "that holds another network since is refused: give another -o or remove the file).\n\n"
      "Examples:\n"
      "  pleat track data/track/epoch*.json\n"
      "  pleat track run/epoch*.onnx --box -2,2 -o track.jsonl --csv track.csv --svg track.svg\n"
      "  pleat track run/*.json --time-limit-each 60 --json",
      [arguments] { return run_track(*arguments); });
  command.add_option("checkpoints", arguments->checkpoints, "Checkpoint files, in training order")
      ->required()
      ->type_name("CKPT...");
  add_domain_options(command, arguments->domain);
  command.add_option("-o,--output", arguments->output_path,
                     "Keep finished checkpoints in this file (pleat-track/1 lines); a rerun resumes");
  command.add_option("--csv", arguments->csv_path, "Write the table as CSV");
  command.add_option("--svg", arguments->svg_path, "Write the line plot as SVG");
  command.add_flag("--json", arguments->json, "Print the table as JSON (pleat-track-table/1)");
  add_walk_limit_options(command, arguments->limits, "Worker threads per walk (default: all cores)",
                         "--time-limit-each", "Stop each checkpoint's walk after this many seconds (that row: bounds)");
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
