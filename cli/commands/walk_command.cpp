// pleat walk: every activation region of a network on a domain, certified.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/progress.hpp"
#include "cli/formats/points_file.hpp"
#include "cli/process_group.hpp"
#include "cli/formats/region_json.hpp"
#include "cli/signals.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "enumerate/walker.hpp"

#include <cstdio>
#include <iostream>
#include <optional>
#include <sstream>

namespace pleat::cli {
namespace {

struct WalkArguments {
  std::string network_path;
  DomainOptions domain;
  std::string output_path;
  std::string points_path;
  bool certificates = false;
  bool json = false;
  bool patterns = false;
  bool quiet = false;
  WalkLimitOptions limits;
  std::uint64_t max_regions = 0;
};

std::string describe_widths(const Network& network) {
  std::string text;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) text += (k ? "," : "") + std::to_string(network.layers[k].width());
  return text.empty() ? "none" : text;
}

void print_summary(const Network& network, const Domain& domain, const WalkSummary& summary, std::ostream& out) {
  const bool is_bound = !summary.complete;
  out << "network     " << count_of(network.input_dim, "input") << ", hidden widths " << describe_widths(network) << ", "
      << network.output_dim() << " output" << (network.output_dim() == 1 ? "" : "s")
      << (network.has_output_relu() ? " (ReLU)" : "") << "\n";
  out << "domain      " << domain.describe() << "\n";
  // A stopped walk found only some regions: every count is a lower bound.
  const char* at_least = is_bound ? ">= " : "";
  out << "regions     " << at_least << summary.regions << " (" << at_least << summary.bounded_regions << " bounded), ";
  // Regions not found may join found pieces of one linear region, so a
  // partial count of linear regions bounds nothing: it is not printed.
  if (is_bound) out << "linear regions not counted (the walk stopped)\n";
  else out << "linear regions " << summary.linear_regions << "\n";
  out << "per layer   ";
  for (std::size_t k = 0; k < summary.regions_per_layer.size(); ++k)
    out << (k ? ", " : "") << at_least << summary.regions_per_layer[k];
  out << "  (distinct pattern prefixes up to each layer)\n";
  out << "facets      " << at_least << summary.facets << " interior\n";
  if (!summary.nonsmooth_regions.empty())
    out << "non-smooth  " << count_of(summary.nonsmooth_regions.size(), "region")
        << (summary.nonsmooth_regions.size() == 1 ? " has" : " have") << " a neuron identically zero with a nonzero backward signal\n";
  if (summary.certified)
    out << "status      certified: every region has an exactly checked interior point, every constraint of\n"
           "            every region is classified with an exact certificate, every neighbour was found\n";
  else if (summary.complete)
    out << "status      complete but NOT certified (a crossing candidate was not a region; please report)\n";
  else
    out << "status      stopped (" << to_string(summary.stop_reason)
        << "): the counts above are lower bounds, not certified\n";
  out << "lp          " << summary.counts.lp_queries << " queries, " << summary.counts.filter_settled
      << " settled by the double filter, " << summary.counts.exact_fallbacks << " exact fallbacks\n";
  char seconds[32];
  std::snprintf(seconds, sizeof seconds, "%.3f", summary.seconds);
  out << "time        " << seconds << " s\n";
}

// One interior point per region, in output order: exact text, or a float64
// .npy. Rounding to double can move a point of a thin region out of it; such
// points are counted on standard error (the exact text file never has any).
// A walk cut short found only some regions: the text file's comment says so.
void write_interior_points(const Network& network, const std::string& path, const std::vector<RationalVector>& points,
                           const std::vector<ActivationPattern>& patterns, const WalkSummary& summary) {
  if (path.size() < 4 || path.compare(path.size() - 4, 4, ".npy") != 0) {
    const std::string comment =
        summary.complete ? std::string("pleat walk --points-out: one exact interior point per region")
                         : "pleat walk --points-out: one exact interior point per region found; the walk stopped (" +
                               to_string(summary.stop_reason) + "), so regions are missing";
    write_output(path, points_text(points, comment));
    return;
  }
  write_points_npy(path, points);
  std::size_t moved = 0;
  for (std::size_t i = 0; i < points.size(); ++i) {
    RationalVector rounded;
    for (const Rational& coordinate : points[i]) rounded.push_back(rational_from_double(to_double(coordinate)));
    const auto pattern = region_pattern_at(network, rounded);
    moved += !pattern || *pattern != patterns[i];
  }
  if (moved)
    std::cerr << "pleat: " << moved << " of " << points.size() << " points left their region when rounded to float64 in "
              << path << "; the exact points are in a text file (--points-out FILE.txt)\n";
}

int run_walk(const WalkArguments& arguments) {
  const InterruptGuard early_interrupt;  // before reading: a Ctrl-C while reading stops cleanly too (signals.hpp)
  const Network network = read_network_input(arguments.network_path);
  const Domain domain = make_domain(arguments.domain, network.input_dim);
  refuse_shared_outputs({{"-o", arguments.output_path}, {"--points-out", arguments.points_path}});
  if (is_follower_process()) {  // an MPI job's rank other than 0: its share of the walk, no output
    const InterruptGuard interrupt;
    return follow_walks(network, domain, interrupt.flag());
  }
  refuse_unwritable_output(arguments.points_path);  // rank 0 writes it after the walk: tried before it

  std::optional<OutputFile> regions_file;
  if (!arguments.output_path.empty()) {
    regions_file.emplace(arguments.output_path);
    regions_file->write(json_text(regions_header(network, domain, arguments.network_path), false));
  }

  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  WalkOptions options;
  apply_walk_limits(arguments.limits, interrupt.flag(), options);
  options.max_regions = arguments.max_regions;
  options.keep_certificates = arguments.certificates;
  options.keep_patterns = arguments.patterns;
  std::vector<RationalVector> interior_points;
  std::vector<ActivationPattern> interior_patterns;
  options.on_region = [&](const Region& region) {
    if (regions_file) regions_file->write(json_text(region_to_json(network, region), false));
    if (!arguments.points_path.empty()) {
      interior_points.push_back(region.interior.point);
      interior_patterns.push_back(region.pattern);
    }
    return true;
  };
  options.on_progress = [&](const WalkProgress& state) {
    progress.update([&] {
      std::ostringstream line;
      line << "walking: " << state.regions << " regions, frontier " << state.frontier << ", "
           << static_cast<long>(state.seconds > 0 ? state.regions / state.seconds : 0) << " regions/s";
      return line.str();
    });
  };
  DistributedWalkStatistics statistics;
  const WalkSummary summary = walk_here_or_across(network, domain, options, &statistics);
  finish_walks_across();
  progress.finish();
  if (statistics.ranks && !arguments.quiet)
    std::cerr << "pleat: walked across " << count_of(statistics.ranks, "process", "processes") << " (MPI), "
              << statistics.bytes_sent << " bytes sent between them ("
              << (summary.regions ? statistics.bytes_sent / summary.regions : 0) << " per region)\n";

  // The summary first: a file that fails to be written (a full disk) then
  // loses itself, not the walk's counts as well.
  if (arguments.json) {
    std::cout << json_text(walk_summary_to_json(network, domain, summary, arguments.patterns));
  } else {
    print_summary(network, domain, summary, std::cout);
    if (arguments.patterns)
      for (const auto& pattern : summary.patterns) std::cout << format_pattern(network, pattern) << "\n";
  }
  if (regions_file) regions_file->close();
  if (!arguments.points_path.empty())
    write_interior_points(network, arguments.points_path, interior_points, interior_patterns, summary);
  if (!arguments.json) {
    if (!arguments.output_path.empty())
      std::cout << "written     " << arguments.output_path << " (" << count_of(summary.regions, "region line")
                << (summary.complete ? "" : ", one per region found; regions are missing") << ")\n";
    if (!arguments.points_path.empty())
      std::cout << "written     " << arguments.points_path << " ("
                << count_of(interior_points.size(), "interior point") << ", one per region"
                << (summary.complete ? "" : " found") << ")\n";
  }
  if (summary.stop_reason == StopReason::interrupted) {
    std::cerr << "pleat: walk interrupted; " << count_of(summary.regions, "region") << " kept"
              << (arguments.output_path.empty() ? "" : " in " + arguments.output_path) << "\n";
    return 130;
  }
  return 0;
}

}  // namespace

void register_walk(CommandTable& commands) {
  auto arguments = std::make_shared<WalkArguments>();
  CLI::App& command = commands.add(
      "walk", "Find every activation region of a network, with exact certificates",
      "An activation region is the set of inputs that switch the same ReLUs on; on it the\n"
      "network is one affine map. 'walk' starts in one region and crosses every facet of\n"
      "every region it reaches, deciding each step with an LP whose answer is re-checked in\n"
      "exact rational arithmetic, until no new region appears. Facet-adjacency connects all\n"
      "regions of a convex domain, so the walk finds them all; a finished walk is certified.\n\n"
      "Examples:\n"
      "  pleat walk data/fold2d.json\n"
      "  pleat walk data/fold2d.json --box -2,2 -o regions.jsonl --certificates\n"
      "  pleat walk net.json --json --patterns --max-regions 10000 --time-limit 60\n"
      "  pleat walk data/fold2d.json --points-out interior.csv   # feed: certify --points\n"
      "  mpirun -n 4 pleat walk net.json --threads 1   # one walk across 4 processes (MPI builds)",
      [arguments] { return run_walk(*arguments); });
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")
      ->required();
  add_domain_options(command, arguments->domain);
  CLI::Option* output = command.add_option("-o,--output", arguments->output_path,
                                           "Write one JSON line per region (pleat-regions/1) to this file, as they "
                                           "are found");
  command.add_option("--points-out", arguments->points_path,
                     "Write one exact interior point per region (text; FILE.npy: float64 for numpy)");
  // The certificates go into the region lines only: without -o they would
  // be computed and thrown away, so the flag needs -o.
  command
      .add_flag("--certificates", arguments->certificates,
                "Add each region's certificates to the region lines of -o (for 'pleat verify')")
      ->needs(output);
  command.add_flag("--json", arguments->json, "Print the summary as JSON (pleat-walk/1)");
  command.add_flag("--patterns", arguments->patterns, "Also list every region's activation pattern, sorted");
  add_walk_limit_options(command, arguments->limits, "Worker threads (default: all cores)", "--time-limit",
                         "Stop after this many seconds (result: lower bounds)");
  add_unsigned_option(command, "--max-regions", arguments->max_regions,
                      "Stop after this many regions, at least 1 (the result is then a lower bound)", 1);
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
