// pleat certify: the functional dimension, certified exactly; the batch
// functional dimension at given points; a verdict on someone else's estimate.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/progress.hpp"
#include "cli/region_json.hpp"
#include "cli/signals.hpp"
#include "enumerate/functional_dimension.hpp"

#include <fstream>
#include <iostream>
#include <optional>
#include <sstream>

namespace pleat::cli {
namespace {

struct CertifyArguments {
  std::string network_path;
  DomainOptions domain;
  bool json = false;
  bool quiet = false;
  bool full_walk = false;
  std::uint64_t threads = 0;
  double time_limit = 0;
  std::string rows_path;
  std::string kernel_path;
  std::string points_path;
  std::optional<std::uint64_t> claim;
  std::uint64_t claim_value = 0;
};

// One point per line, coordinates separated by commas; blank lines and lines
// starting with '#' are skipped.
std::vector<RationalVector> read_points_file(const std::string& path, std::size_t dimension) {
  std::ifstream file(path);
  if (!file) throw input_error(path + ": cannot open");
  std::vector<RationalVector> points;
  std::string line;
  for (std::size_t number = 1; std::getline(file, line); ++number) {
    while (!line.empty() && (line.back() == '\r' || line.back() == ' ')) line.pop_back();
    if (line.empty() || line.front() == '#') continue;
    points.push_back(parse_point(line, dimension, path + ":" + std::to_string(number)));
  }
  if (points.empty()) throw input_error(path + ": no points");
  return points;
}

void write_matrix(const std::string& path, const RationalMatrix& matrix) {
  std::ostringstream out;
  for (std::size_t r = 0; r < matrix.rows(); ++r) {
    for (std::size_t c = 0; c < matrix.cols(); ++c) out << (c ? "," : "") << format_rational(matrix(r, c));
    out << "\n";
  }
  write_output(path, out.str());
}

Json claim_to_json(std::uint64_t value, const FunctionalDimensionResult& result) {
  Json claim{{"value", value}};
  std::string verdict, reason;
  if (value > result.parametric_dimension) {
    verdict = "impossible";
    reason = "exceeds the parametric dimension " + std::to_string(result.parametric_dimension);
  } else if (value > result.upper_bound) {
    verdict = "impossible";
    reason = "exceeds the proved upper bound " + std::to_string(result.upper_bound) +
             (result.upper_bound == result.scaling_bound ? " (the scaling bound: every hidden neuron's "
                                                           "rescaling leaves the function unchanged)"
                                                         : " (an exact kernel checked on every region)");
  } else if (value < result.lower_bound) {
    verdict = "too-low";
    reason = "below the proved lower bound " + std::to_string(result.lower_bound) + " by " +
             std::to_string(result.lower_bound - value) +
             " (a sampled estimate that misses regions or rounds away rank falls short like this)";
  } else {
    verdict = "consistent";
    reason = result.certified ? "equals the certified functional dimension"
                              : "within the proved bounds [" + std::to_string(result.lower_bound) + ", " +
                                    std::to_string(result.upper_bound) + "]";
  }
  claim["verdict"] = verdict;
  claim["reason"] = reason;
  return claim;
}

std::string parameter_vector_text(const Network& network, const RationalVector& vector) {
  std::string text;
  for (std::size_t c = 0; c < vector.size(); ++c)
    if (vector[c] != 0) text += (text.empty() ? "" : ", ") + network.parameter_name(c) + ": " + format_rational(vector[c]);
  return text;
}

Json result_to_json(const Network& network, const FunctionalDimensionResult& result) {
  Json nonsmooth = Json::array();
  for (const auto& [pattern, neurons] : result.nonsmooth_regions)
    nonsmooth.push_back({{"pattern", format_pattern(network, pattern)}, {"neurons", neurons}});
  Json extra = Json::array();
  for (const auto& direction : result.extra_kernel) {
    Json vector = Json::object();
    for (std::size_t c = 0; c < direction.vector.size(); ++c)
      if (direction.vector[c] != 0) vector[network.parameter_name(c)] = format_rational(direction.vector[c]);
    extra.push_back({{"vector", vector},
                     {"mechanism", direction.mechanism.empty() ? Json(nullptr) : Json(direction.mechanism)},
                     {"neurons", direction.neurons}});
  }
  Json out;
  out["format"] = "pleat-certify/1";
  out["parametric_dimension"] = result.parametric_dimension;
  out["scaling_bound"] = result.scaling_bound;
  out["functional_dimension"] = result.functional_dimension ? Json(*result.functional_dimension) : Json(nullptr);
  out["lower_bound"] = result.lower_bound;
  out["upper_bound"] = result.upper_bound;
  out["certified"] = result.certified;
  out["regions_walked"] = result.regions_walked;
  out["regions_contributing"] = result.regions_contributing;
  out["walk_complete"] = result.walk_complete;
  out["early_stop"] = result.early_stop;
  out["stop_reason"] = result.stop_reason == StopReason::none ? Json(nullptr) : Json(to_string(result.stop_reason));
  out["nonsmooth_regions"] = std::move(nonsmooth);
  out["extra_kernel"] = std::move(extra);
  out["seconds"] = result.seconds;
  return out;
}

void print_result(const Network& network, const Domain& domain, const FunctionalDimensionResult& result,
                  std::ostream& out) {
  out << "domain                " << domain.describe() << "\n";
  out << "parametric dimension  " << result.parametric_dimension << "\n";
  out << "scaling bound         " << result.scaling_bound << "  (D minus the rank of the "
      << network.hidden_neuron_count() << " hidden neurons' scaling directions)\n";
  if (result.certified) {
    out << "functional dimension  " << *result.functional_dimension << "  certified\n";
    if (result.early_stop)
      out << "                      lower bound: rows of " << result.regions_contributing
          << " regions have a nonsingular minor (mod p);\n"
             "                      upper bound: the scaling directions, an exact kernel\n";
    else
      out << "                      lower bound: exact rank of the rows of " << result.regions_contributing
          << " regions;\n                      upper bound: an exact kernel checked on every smooth region\n";
  } else {
    out << "functional dimension  between " << result.lower_bound << " and " << result.upper_bound
        << "  NOT certified ("
        << (result.stop_reason == StopReason::none
                ? std::string("the walk could not be certified")
                : std::string(result.walk_complete ? "stopped after the walk: " : "walk stopped: ") +
                      to_string(result.stop_reason))
        << ")\n";
  }
  out << "regions               " << result.regions_walked << " walked"
      << (result.early_stop ? " (stopped early: the rank met the scaling bound)"
                            : result.walk_complete ? " (all regions)" : " (walk cut short)")
      << ", " << result.regions_contributing << " contributed new rows\n";
  if (!result.nonsmooth_regions.empty()) {
    out << "left out              " << result.nonsmooth_regions.size()
        << " non-smooth regions (a neuron identically zero there with a nonzero backward signal):\n";
    for (const auto& [pattern, neurons] : result.nonsmooth_regions) {
      out << "                      " << format_pattern(network, pattern) << "  neuron";
      for (std::size_t n : neurons) out << " " << n;
      out << "\n";
    }
  }
  if (!result.extra_kernel.empty()) {
    out << "extra flat directions " << result.extra_kernel.size() << " beyond the scaling ones:\n";
    for (const auto& direction : result.extra_kernel) {
      out << "  " << (direction.mechanism.empty() ? "no recognised mechanism" : direction.mechanism);
      if (!direction.neurons.empty()) {
        out << " (neuron";
        for (std::size_t n : direction.neurons) out << " " << n;
        out << ")";
      }
      out << ": " << parameter_vector_text(network, direction.vector) << "\n";
    }
  }
}

int run_points(const CertifyArguments& arguments, const Network& network) {
  const auto points = read_points_file(arguments.points_path, network.input_dim);
  const std::size_t rank = batch_functional_dimension(network, points);
  if (arguments.json) {
    Json out{{"format", "pleat-batch/1"},
             {"points", points.size()},
             {"parametric_dimension", network.parametric_dimension()},
             {"batch_functional_dimension", rank}};
    std::cout << json_text(out);
  } else {
    std::cout << "batch functional dimension " << rank << " at " << points.size() << " points (exact rank of the "
              << points.size() * network.output_dim() << " x " << network.parametric_dimension()
              << " parameter Jacobian)\n";
  }
  return 0;
}

int run_certify(const CertifyArguments& arguments) {
  const Network network = load_network(arguments.network_path);
  if (!arguments.points_path.empty()) return run_points(arguments, network);
  const Domain domain = make_domain(arguments.domain, network.input_dim);

  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  FunctionalDimensionOptions options;
  options.walk.threads = static_cast<unsigned>(arguments.threads);
  options.walk.time_limit_seconds = arguments.time_limit;
  options.walk.interrupt = &interrupt.flag();
  options.walk.on_progress = [&](const WalkProgress& state) {
    progress.update("certifying: " + std::to_string(state.regions) + " regions walked, frontier " +
                    std::to_string(state.frontier));
  };
  options.on_phase = [&](const CertifyProgress& state) {
    std::string text = std::string("certifying: ") + state.phase;
    if (std::string(state.phase) == "kernel")
      text += " (lifting the extra directions), " + std::to_string(state.done) + " primes";
    else
      text += " " + std::to_string(state.done) + "/" + std::to_string(state.total) +
              (std::string(state.phase) == "check" ? " regions" : " directions");
    progress.update(text);
  };
  options.stop_at_scaling_bound = !arguments.full_walk;
  options.keep_rows = !arguments.rows_path.empty();
  const FunctionalDimensionResult result = certify_functional_dimension(network, domain, options);
  progress.finish();
  if (!arguments.rows_path.empty()) write_matrix(arguments.rows_path, result.rows);
  if (!arguments.kernel_path.empty()) write_matrix(arguments.kernel_path, result.kernel);

  Json document = result_to_json(network, result);
  if (arguments.claim) document["claim"] = claim_to_json(*arguments.claim, result);
  if (arguments.json) {
    std::cout << json_text(document);
  } else {
    print_result(network, domain, result, std::cout);
    if (arguments.claim)
      std::cout << "claim                 " << *arguments.claim << "  " << document["claim"]["verdict"].get<std::string>()
                << ": " << document["claim"]["reason"].get<std::string>() << "\n";
  }
  return result.stop_reason == StopReason::interrupted ? 130 : 0;
}

}  // namespace

void register_certify(CommandTable& commands) {
  auto arguments = std::make_shared<CertifyArguments>();
  CLI::App& command = commands.add(
      "certify", "Certify the functional dimension of a network's parameters, exactly",
      "The functional dimension is the rank of the Jacobian of the network's output with\n"
      "respect to its parameters, taken over all inputs: how many independent directions\n"
      "of parameter change actually change the function. Rescaling a hidden neuron never\n"
      "does, so it is at most the scaling bound. 'certify' walks the regions, stacks each\n"
      "region's exact Jacobian rows, and proves a lower bound (a nonsingular minor) and an\n"
      "upper bound (the scaling directions, or an exact kernel checked on every region).\n\n"
      "Examples:\n"
      "  pleat certify data/fold2d.json\n"
      "  pleat certify data/fold2d.json --box -1,1 --json\n"
      "  pleat certify net.json --claim 37          # check someone's sampled estimate\n"
      "  pleat certify net.json --points pts.csv    # exact batch dimension at these points",
      [arguments] { return run_certify(*arguments); });
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON; - for stdin)")
      ->required();
  add_domain_options(command, arguments->domain);
  command.add_flag("--json", arguments->json, "Print the result as JSON (pleat-certify/1)");
  add_unsigned_option(command, "--threads", arguments->threads, "Worker threads (default: all cores)");
  command.add_option("--time-limit", arguments->time_limit, "Stop after this many seconds (result: bounds)")
      ->check(CLI::NonNegativeNumber);
  command.add_flag("--full-walk", arguments->full_walk,
                   "Walk every region even after the rank meets the scaling bound");
  command.add_option("--rows-out", arguments->rows_path,
                     "Write the exact Jacobian rows of the contributing regions (one row per line)");
  command.add_option("--kernel-out", arguments->kernel_path,
                     "Write the exact kernel basis checked against every region (one row per line)");
  command.add_option("--points", arguments->points_path,
                     "Instead: the exact batch functional dimension at the points in this CSV file");
  CLI::Option* claim = add_unsigned_option(command, "--claim", arguments->claim_value,
                                           "Judge a claimed value: consistent, too-low or impossible");
  claim->each([arguments](const std::string& text) { arguments->claim = parse_unsigned(text, "--claim"); });
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
