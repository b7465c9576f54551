// pleat sample: the usual floating-point estimate of the functional dimension
// (double parameter Jacobians at random points, numerical rank from an SVD),
// printed beside the certified value on the same domain, with how many
// regions the sample touched out of how many exist.
//
// Registration (the only edit this file needs elsewhere): in cli/main.cpp,
//   void register_sample(CommandTable& commands);   // with the other declarations
//   register_sample(commands);                      // in register_all_commands
//
// The estimate itself (point stream, Jacobians, SVD ranks, regions touched,
// the certifying walk) is enumerate/sampled_estimate.hpp, shared with the
// Python module; this file parses options and prints.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/progress.hpp"
#include "cli/signals.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "core/stop.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/sampled_estimate.hpp"
#include "enumerate/walker.hpp"

#include <algorithm>
#include <iostream>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace pleat::cli {
namespace {

struct SampleArguments {
  std::string network_path;
  std::uint64_t batch = 0;
  std::uint64_t seed = 0;
  std::string dist = "normal";
  bool json = false;
  bool quiet = false;
  WalkLimitOptions limits;
  std::string points_path;
  std::string dtype = "float64";
};

// Where the points come from: the standard normal on R^n0, or uniform on an
// open box (one interval for every axis, or one per axis).
PointDistribution parse_distribution(const std::string& text, std::size_t input_dim) {
  if (text == "normal") return PointDistribution{};
  const std::string prefix = "box:";
  if (text.rfind(prefix, 0) != 0)
    throw input_error("--dist: expected 'normal' or 'box:LO,HI' (e.g. box:-2,2), got '" + text + "'");
  const RationalVector numbers = parse_number_list(text.substr(prefix.size()), "--dist");
  std::optional<BoxBounds> bounds = box_bounds(numbers, input_dim);
  if (!bounds)
    throw input_error("--dist: box:LO,HI takes 2 numbers, or 2 per input axis (" + std::to_string(2 * input_dim) +
                      "), got " + std::to_string(numbers.size()));
  return box_distribution(std::move(bounds->lower), std::move(bounds->upper), "--dist");
}

Json result_to_json(const SampleArguments& arguments, const Domain& domain, const SampleResult& result) {
  Json out;
  out["format"] = "pleat-sample/1";
  out["batch"] = result.batch;
  out["seed"] = arguments.seed;
  out["dist"] = arguments.dist;
  out["dtype"] = arguments.dtype;
  out["rank"] = result.rank.customary;
  out["rank_rtol_1e-6"] = result.rank.relative_1e6;
  out["rank_rtol_1e-10"] = result.rank.relative_1e10;
  out["regions_touched"] = result.regions_touched;
  out["regions_total"] = result.certified.walk_complete ? Json(result.certified.walk.regions) : Json(nullptr);
  out["certified_value"] =
      result.certified.functional_dimension ? Json(*result.certified.functional_dimension) : Json(nullptr);
  out["verdict"] = result.verdict ? Json(sample_word(*result.verdict)) : Json(nullptr);
  out["first_batch_reaching"] = result.first_batch_reaching ? Json(*result.first_batch_reaching) : Json(nullptr);
  // Additional keys (the contract allows more): what the verdict rests on.
  out["domain"] = domain.describe();
  out["points_on_bent_hyperplanes"] = result.points_on_bent_hyperplanes;
  out["lower_bound"] = result.certified.lower_bound;
  out["upper_bound"] = result.certified.upper_bound;
  out["scaling_bound"] = result.certified.scaling_bound;
  out["parametric_dimension"] = result.certified.parametric_dimension;
  // Why certified_value is null, if it is; "interrupted" with a certified
  // value: the search for first_batch_reaching was.
  out["stop_reason"] = stop_reason_json(result.stop_reason());
  out["seconds"] = result.seconds;
  return out;
}

void print_result(const Network& network, const Domain& domain, const SampleResult& result, bool print_float32,
                  std::ostream& out) {
  const FunctionalDimensionResult& certified = result.certified;
  // An incomplete walk proves only a lower count: the regions it saw, or the
  // distinct ones the points landed in, whichever is larger.
  const std::size_t total_count =
      certified.walk_complete ? certified.walk.regions : std::max(certified.walk.regions, result.regions_touched);
  const std::string total = (certified.walk_complete ? "" : "at least ") + std::to_string(total_count);
  out << "domain                " << domain.describe() << "\n";
  out << "sampled rank          " << result.rank.customary << "  (" << (print_float32 ? "float32" : "double")
      << " Jacobian at " << count_of(result.batch, "point") << ", " << result.batch * network.output_dim() << " x " << certified.parametric_dimension
      << "; SVD, tolerance sigma_max*max(M,N)*eps)\n";
  out << "                      " << result.rank.relative_1e6 << " at relative tolerance 1e-6, "
      << result.rank.relative_1e10 << " at 1e-10\n";
  if (certified.certified) {
    out << "certified value       " << *certified.functional_dimension << "  (exact, every region of the domain)\n";
  } else {
    // The stop may fall after a whole walk, in the proof of the kernel.
    const std::string why = certified.stop_reason == StopReason::none ? "the walk could not be certified"
                            : certified.walk_complete ? "stopped after the walk (" + to_string(certified.stop_reason) + ")"
                                                      : "the walk stopped early (" + to_string(certified.stop_reason) + ")";
    out << "certified value       none: " << why << "; proved bounds [" << certified.lower_bound << ", "
        << certified.upper_bound << "]\n";
  }
  out << "verdict               ";
  if (result.verdict == Verdict::too_low)
    out << "below"
        << (certified.certified ? " by " + std::to_string(certified.lower_bound - result.rank.customary) : "")
        << "\n";
  else
    out << (result.verdict ? sample_word(*result.verdict) : "undecided (within the proved bounds)") << "\n";
  out << "regions touched       " << result.regions_touched << " of " << total;
  if (result.points_on_bent_hyperplanes)
    out << "  (" << count_of(result.points_on_bent_hyperplanes, "point") << " fell on a bent hyperplane)";
  out << "\n";
  out << "first batch reaching  "
      << (result.first_batch_reaching      ? count_of(*result.first_batch_reaching, "point")
          : result.interrupted_while_searching ? std::string("not known (interrupted while searching)")
          : certified.certified                ? std::string("none within the batch")
                                               : std::string("not known (no certified value to reach)"))
      << "\n";
  out << "The sample touched " << result.regions_touched << " of " << (certified.walk_complete ? "the " : "") << total
      << (total_count == 1 ? " region that exists" : " regions that exist") << " on this domain.\n"
         "A region no point lands in adds no rows, so a sampled rank can fall short of the\n"
         "certified value however accurate the SVD is.\n";
}

int report_interrupted_sampling(std::uint64_t drawn, std::uint64_t batch) {
  std::cerr << "pleat: sample interrupted while drawing points (" << drawn << " of " << batch
            << "); no rank computed\n";
  return 130;
}

int run_sample(const SampleArguments& arguments) {
  const InterruptGuard early_interrupt;  // before reading: a Ctrl-C while reading stops cleanly too (signals.hpp)
  if (arguments.batch == 0) throw input_error("--batch: give at least 1 point");
  const Network network = read_network_input(arguments.network_path);
  SampleOptions options;
  options.batch = arguments.batch;
  options.seed = arguments.seed;
  options.dist = parse_distribution(arguments.dist, network.input_dim);
  const Domain domain = distribution_domain(options.dist, network.input_dim);
  if (arguments.dtype != "float64" && arguments.dtype != "float32")
    throw input_error("--dtype: expected float64 or float32, got '" + arguments.dtype + "'");
  options.is_float32 = arguments.dtype == "float32";
  check_batch_size(arguments.batch, network, "--batch");
  refuse_unwritable_output(arguments.points_path);  // written after the points are drawn: tried before

  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  apply_walk_limits(arguments.limits, interrupt.flag(), options.walk);
  options.walk.on_progress = [&](const WalkProgress& state) {
    progress.update([&] { return "sample: certifying, " + std::to_string(state.regions) + " regions walked"; });
  };
  options.on_point = [&](std::uint64_t drawn) {
    progress.update("sample: drawing points, " + std::to_string(drawn) + " of " + std::to_string(arguments.batch));
  };
  options.on_points_drawn = [&](const std::vector<RationalVector>& points) {
    if (!arguments.points_path.empty()) {
      std::string text;  // the points exactly (every double is a dyadic rational)
      for (const RationalVector& point : points) {
        for (std::size_t c = 0; c < point.size(); ++c) {
          if (c) text += ',';  // appended, not "," + string: GCC 12 warns falsely (-Wrestrict) on that
          text += format_rational(point[c]);
        }
        text += "\n";
      }
      write_output(arguments.points_path, text);
    }
    progress.update("sample: singular values of the " + std::to_string(arguments.batch * network.output_dim()) +
                    " x " + std::to_string(network.parametric_dimension()) + " Jacobian");
  };
  const SampleResult result = run_sampled_estimate(network, options);
  if (result.interrupted_while_sampling) return report_interrupted_sampling(result.drawn, arguments.batch);
  progress.finish();

  if (arguments.json) std::cout << json_text(result_to_json(arguments, domain, result));
  else print_result(network, domain, result, options.is_float32, std::cout);
  return result.stop_reason() == StopReason::interrupted ? 130 : 0;
}

constexpr const char* sample_help =
    "The usual way to estimate a network's functional dimension is to sample: take K\n"
    "random inputs, stack the K parameter Jacobians (K*nd x D) in double precision and\n"
    "count singular values above a tolerance. 'sample' does exactly that, then puts the\n"
    "certified value (an exact walk of the same domain, as 'pleat certify --full-walk')\n"
    "beside it:\n"
    "  rank                 at the customary tolerance sigma_max * max(M,N) * eps,\n"
    "                       also at relative tolerances 1e-6 and 1e-10;\n"
    "  verdict              equal, below (the sample missed directions) or\n"
    "                       above-impossible (rounding invented rank);\n"
    "  regions touched      distinct regions the points landed in (decided exactly),\n"
    "                       out of all regions of the domain. A sampled rank falls short\n"
    "                       mostly because points never reach regions far out, not\n"
    "                       because of rounding;\n"
    "  first batch reaching the smallest m <= K whose first m points already give the\n"
    "                       certified rank (binary search over prefixes; rank only grows\n"
    "                       with m, up to rounding). none: K points were not enough;\n"
    "                       not known when the run was cut short (no certified value).\n"
    "--time-limit bounds the certifying walk only (then bounds, no certified value).\n"
    "Ctrl-C stops every phase: the drawing of the points (no rank then), the walk, the\n"
    "search for the first batch reaching (then not known); an SVD under way is finished\n"
    "first (seconds on a stack of thousands of points). Exit 130 after Ctrl-C.\n"
    "Points: --dist normal draws each coordinate from N(0,1) and is judged against\n"
    "R^n0; --dist box:LO,HI draws uniformly from the open box (LO,HI)^n0 (or\n"
    "box:L1,H1,L2,H2,... per axis) and is judged against that box. The stream is\n"
    "seeded (same generator as 'pleat random'; Box-Muller in double), and batch m is\n"
    "always the first m points of batch K. --points-out writes them exactly, so\n"
    "'pleat certify NET --points FILE' gives the exact rank at the very same points:\n"
    "when it equals 'rank', rounding was not the reason for a shortfall.\n"
    "--dtype float32 does it as training code does: parameters, points and Jacobian\n"
    "rounded to float32, the SVD in float32 and float32's epsilon in the tolerance.\n"
    "\nExamples:\n"
    "  pleat sample data/fold2d.json --batch 40 --seed 1\n"
    "  pleat sample data/fold2d.json --batch 40 --seed 1 --dtype float32\n"
    "  pleat sample net.json --batch 200 --seed 7 --dist box:-2,2 --json";

}  // namespace

void register_sample(CommandTable& commands) {
  auto arguments = std::make_shared<SampleArguments>();
  CLI::App& command = commands.add(
      "sample", "The usual sampled (double, SVD) functional dimension, beside the certified one", sample_help,
      [arguments] { return run_sample(*arguments); });
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")
      ->required();
  add_unsigned_option(command, "--batch", arguments->batch, "Number of random input points K")->required();
  add_unsigned_option(command, "--seed", arguments->seed, "Seed of the point stream")->required();
  command.add_option("--dist", arguments->dist, "normal (default) or box:LO,HI (uniform on the open box)")
      ->type_name("DIST")
      ->allow_extra_args(false);
  command.add_flag("--json", arguments->json, "Print the result as JSON (pleat-sample/1)");
  add_walk_limit_options(command, arguments->limits, "Worker threads for the walk (default: all cores)",
                         "--time-limit", "Stop the certifying walk after this many seconds (then only bounds)");
  command.add_option("--dtype", arguments->dtype,
                     "float64 (default) or float32: the precision of the parameters, points, Jacobian and SVD")
      ->type_name("TYPE");
  command.add_option("--points-out", arguments->points_path,
                     "Write the sampled points exactly (one per line), e.g. for 'pleat certify --points'");
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
