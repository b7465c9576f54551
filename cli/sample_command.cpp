// pleat sample: the usual floating-point estimate of the functional dimension
// (double parameter Jacobians at random points, numerical rank from an SVD),
// printed beside the certified value on the same domain, with how many
// regions the sample touched out of how many exist.
//
// Registration (the only edit this file needs elsewhere): in cli/main.cpp,
//   void register_sample(CommandTable& commands);   // with the other declarations
//   register_sample(commands);                      // in register_all_commands
//
// What is floating point here and what is not: the points, the Jacobians and
// the ranks are double (an estimate, as other tools compute it); each point's
// region is decided exactly (its double coordinates are dyadic rationals), and
// the certified value comes from certify_functional_dimension (exact).
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/progress.hpp"
#include "cli/signals.hpp"
#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/random_network.hpp"
#include "core/stop.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/walker.hpp"

#include <Eigen/SVD>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <iostream>
#include <limits>
#include <memory>
#include <numbers>
#include <optional>
#include <string>
#include <unordered_set>
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
  std::uint64_t threads = 0;
  double time_limit = 0;
  std::string points_path;
  std::string dtype = "float64";
};

// float32 is what training code uses: parameters, points and the Jacobian are
// rounded to float32 and the SVD runs in float32 with float32's epsilon in
// the tolerance (numpy's matrix_rank on a float32 array does the same).
bool is_float32(const SampleArguments& arguments) { return arguments.dtype == "float32"; }

// Where the points come from: the standard normal on R^n0, or uniform on an
// open box (one interval for every axis, or one per axis).
struct PointDistribution {
  bool is_box = false;
  RationalVector lower, upper;  // exact box, only when is_box
  std::string text;             // as given, for the output
};

PointDistribution parse_distribution(const std::string& text, std::size_t input_dim) {
  PointDistribution dist;
  dist.text = text;
  if (text == "normal") return dist;
  const std::string prefix = "box:";
  if (text.rfind(prefix, 0) != 0)
    throw input_error("--dist: expected 'normal' or 'box:LO,HI' (e.g. box:-2,2), got '" + text + "'");
  const RationalVector numbers = parse_number_list(text.substr(prefix.size()), "--dist");
  dist.is_box = true;
  if (numbers.size() == 2) {
    dist.lower.assign(input_dim, numbers[0]);
    dist.upper.assign(input_dim, numbers[1]);
  } else if (numbers.size() == 2 * input_dim) {
    for (std::size_t i = 0; i < input_dim; ++i) {
      dist.lower.push_back(numbers[2 * i]);
      dist.upper.push_back(numbers[2 * i + 1]);
    }
  } else {
    throw input_error("--dist: box:LO,HI takes 2 numbers, or 2 per input axis (" + std::to_string(2 * input_dim) +
                      "), got " + std::to_string(numbers.size()));
  }
  for (std::size_t i = 0; i < input_dim; ++i)
    if (!(dist.lower[i] < dist.upper[i]))
      throw input_error("--dist: axis " + std::to_string(i) + ": LO must be below HI");
  return dist;
}

// The point stream. Words come from pleat::RandomStream(seed, 0), the same
// generator as `pleat random`; the step from words to doubles uses libm, so
// the points (unlike random networks) may differ in the last bit between
// C libraries:
//   normal:   Box-Muller, cosine branch, in double: u1 = ((w >> 11) + 1) / 2^53
//             in (0, 1], u2 = (w' >> 11) / 2^53 in [0, 1),
//             x = sqrt(-2 log u1) cos(2 pi u2); two words per coordinate.
//   box:      u = ((w >> 11) + 1/2) / 2^53 in (0, 1), x = lo + (hi - lo) u in
//             double; a coordinate that rounds onto or outside the exact open
//             interval is drawn again (so every point lies strictly inside).
// Coordinates are drawn in axis order, points one after another, so the
// first m points of batch K are the points of batch m.
class PointStream {
 public:
  PointStream(std::uint64_t seed, const PointDistribution& dist, bool is_float32)
      : stream_(seed, 0), dist_(dist), is_float32_(is_float32) {}

  DoubleVector next_point(std::size_t dimension) {
    DoubleVector point(dimension);
    for (std::size_t i = 0; i < dimension; ++i) point[i] = dist_.is_box ? next_box(i) : rounded(next_normal());
    return point;
  }

 private:
  static constexpr double two_to_minus_53 = 1.0 / 9007199254740992.0;

  double rounded(double x) const { return is_float32_ ? static_cast<double>(static_cast<float>(x)) : x; }

  double next_normal() {
    const double u1 = static_cast<double>((stream_.next_word() >> 11) + 1) * two_to_minus_53;
    const double u2 = static_cast<double>(stream_.next_word() >> 11) * two_to_minus_53;
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
  }

  double next_box(std::size_t axis) {
    const double lo = to_double(dist_.lower[axis]), hi = to_double(dist_.upper[axis]);
    for (;;) {
      const double u = (static_cast<double>(stream_.next_word() >> 11) + 0.5) * two_to_minus_53;
      const double x = rounded(lo + (hi - lo) * u);
      const Rational exact = rational_from_double(x);
      if (dist_.lower[axis] < exact && exact < dist_.upper[axis]) return x;
    }
  }

  RandomStream stream_;
  const PointDistribution& dist_;
  bool is_float32_ = false;
};

// Numerical ranks of one stacked Jacobian from its singular values.
struct NumericalRank {
  std::size_t customary = 0;  // sigma > sigma_max * max(M, N) * eps (numpy's matrix_rank default)
  std::size_t relative_1e6 = 0;
  std::size_t relative_1e10 = 0;
  double sigma_max = 0;
};

// Scalar is double or float (the Jacobian entries rounded to it).
template <class Scalar>
NumericalRank numerical_rank_in(const std::vector<DoubleMatrix>& jacobians, std::size_t points, std::size_t columns) {
  using MatrixType = Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic>;
  std::size_t rows = 0;
  for (std::size_t p = 0; p < points; ++p) rows += jacobians[p].rows();
  NumericalRank rank;
  if (rows == 0 || columns == 0) return rank;
  MatrixType stacked(static_cast<Eigen::Index>(rows), static_cast<Eigen::Index>(columns));
  Eigen::Index r = 0;
  for (std::size_t p = 0; p < points; ++p)
    for (std::size_t i = 0; i < jacobians[p].rows(); ++i, ++r)
      for (std::size_t c = 0; c < columns; ++c)
        stacked(r, static_cast<Eigen::Index>(c)) = static_cast<Scalar>(jacobians[p](i, c));
  // Singular values only (no U, V), in decreasing order.
  const Eigen::BDCSVD<MatrixType> svd(stacked);
  const auto sigma = svd.singularValues();
  rank.sigma_max = sigma.size() ? static_cast<double>(sigma(0)) : 0.0;
  const Scalar sigma_max = sigma.size() ? sigma(0) : Scalar(0);
  const Scalar customary =
      sigma_max * static_cast<Scalar>(std::max(rows, columns)) * std::numeric_limits<Scalar>::epsilon();
  for (Eigen::Index i = 0; i < sigma.size(); ++i) {
    rank.customary += sigma(i) > customary;
    rank.relative_1e6 += sigma(i) > Scalar(1e-6) * sigma_max;
    rank.relative_1e10 += sigma(i) > Scalar(1e-10) * sigma_max;
  }
  return rank;
}

NumericalRank numerical_rank(const std::vector<DoubleMatrix>& jacobians, std::size_t points, std::size_t columns,
                             bool is_float32) {
  return is_float32 ? numerical_rank_in<float>(jacobians, points, columns)
                    : numerical_rank_in<double>(jacobians, points, columns);
}

// The smallest m <= points whose prefix rank (customary tolerance) equals
// target, by binary search for the first m with rank >= target. Exact ranks
// of prefixes never decrease (more rows), so the search is sound for them;
// float ranks are monotone too unless rounding moves a singular value across
// the tolerance, which the search does not guard against (an estimate).
std::optional<std::size_t> first_batch_reaching(const std::vector<DoubleMatrix>& jacobians, std::size_t columns,
                                                std::size_t target, std::size_t full_rank, bool is_float32) {
  if (full_rank < target) return std::nullopt;
  std::size_t low = 0, high = jacobians.size();  // rank(low) < target <= rank(high); rank(0) = 0
  if (target == 0) return 0;
  while (high - low > 1) {
    const std::size_t middle = low + (high - low) / 2;
    if (numerical_rank(jacobians, middle, columns, is_float32).customary >= target) high = middle;
    else low = middle;
  }
  if (numerical_rank(jacobians, high, columns, is_float32).customary != target) return std::nullopt;
  return high;
}

// The parameters as the sampled estimate sees them: rounded to double, or
// further to float32.
DoubleNetwork sampling_network(const Network& network, bool is_float32) {
  DoubleNetwork rounded = to_double(network);
  if (!is_float32) return rounded;
  auto to_float32 = [](double& value) { value = static_cast<double>(static_cast<float>(value)); };
  for (auto& weights : rounded.weights)
    for (std::size_t r = 0; r < weights.rows(); ++r)
      for (std::size_t c = 0; c < weights.cols(); ++c) to_float32(weights(r, c));
  for (auto& bias : rounded.bias)
    for (double& value : bias) to_float32(value);
  return rounded;
}

struct SampleResult {
  std::size_t batch = 0;
  std::string dtype;
  NumericalRank rank;
  std::size_t regions_touched = 0;
  std::size_t points_on_bent_hyperplanes = 0;
  FunctionalDimensionResult certified;
  std::optional<std::size_t> first_batch_reaching;
  std::string verdict;  // "" when neither certified nor outside the proved bounds
  double seconds = 0;
};

std::string verdict_of(std::size_t rank, const FunctionalDimensionResult& certified) {
  if (rank > certified.upper_bound) return "above-impossible";
  if (certified.certified) return rank == certified.lower_bound ? "equal" : "below";
  if (rank < certified.lower_bound) return "below";
  return "";
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
  out["verdict"] = result.verdict.empty() ? Json(nullptr) : Json(result.verdict);
  out["first_batch_reaching"] = result.first_batch_reaching ? Json(*result.first_batch_reaching) : Json(nullptr);
  // Additional keys (the contract allows more): what the verdict rests on.
  out["domain"] = domain.describe();
  out["points_on_bent_hyperplanes"] = result.points_on_bent_hyperplanes;
  out["lower_bound"] = result.certified.lower_bound;
  out["upper_bound"] = result.certified.upper_bound;
  out["scaling_bound"] = result.certified.scaling_bound;
  out["parametric_dimension"] = result.certified.parametric_dimension;
  out["seconds"] = result.seconds;
  return out;
}

void print_result(const Network& network, const Domain& domain, const SampleResult& result, std::ostream& out) {
  const FunctionalDimensionResult& certified = result.certified;
  // An incomplete walk proves only a lower count: the regions it saw, or the
  // distinct ones the points landed in, whichever is larger.
  const std::string total = certified.walk_complete
                                ? std::to_string(certified.walk.regions)
                                : "at least " + std::to_string(std::max(certified.walk.regions, result.regions_touched));
  out << "domain                " << domain.describe() << "\n";
  out << "sampled rank          " << result.rank.customary << "  (" << (result.dtype == "float32" ? "float32" : "double")
      << " Jacobian at " << result.batch
      << " points, " << result.batch * network.output_dim() << " x " << certified.parametric_dimension
      << "; SVD, tolerance sigma_max*max(M,N)*eps)\n";
  out << "                      " << result.rank.relative_1e6 << " at relative tolerance 1e-6, "
      << result.rank.relative_1e10 << " at 1e-10\n";
  if (certified.certified) {
    out << "certified value       " << *certified.functional_dimension << "  (exact, every region of the domain)\n";
  } else {
    out << "certified value       none: the walk stopped early; proved bounds [" << certified.lower_bound << ", "
        << certified.upper_bound << "]\n";
  }
  out << "verdict               ";
  if (result.verdict == "below")
    out << "below"
        << (certified.certified ? " by " + std::to_string(certified.lower_bound - result.rank.customary) : "")
        << "\n";
  else
    out << (result.verdict.empty() ? "undecided (within the proved bounds)" : result.verdict) << "\n";
  out << "regions touched       " << result.regions_touched << " of " << total;
  if (result.points_on_bent_hyperplanes)
    out << "  (" << result.points_on_bent_hyperplanes << " points fell on a bent hyperplane)";
  out << "\n";
  out << "first batch reaching  "
      << (result.first_batch_reaching ? std::to_string(*result.first_batch_reaching) + " points"
                                      : std::string("none within the batch"))
      << "\n";
  out << "The sample touched " << result.regions_touched << " of " << (certified.walk_complete ? "the " : "") << total
      << " regions that exist on this domain.\n"
         "A region no point lands in adds no rows, so a sampled rank can fall short of the\n"
         "certified value however accurate the SVD is.\n";
}

// The stacked Jacobian is K*nd x D doubles, held about three times over
// (per-point blocks, the stacked copy, the SVD's work space): refuse a batch
// whose matrix would not fit comfortably rather than grow until killed.
constexpr double max_jacobian_entries = 25e6;  // 200 MB of doubles per copy

void check_batch_size(std::uint64_t batch, const Network& network) {
  const double entries_per_point =
      static_cast<double>(network.output_dim()) * static_cast<double>(network.parametric_dimension());
  if (static_cast<double>(batch) * entries_per_point > max_jacobian_entries)
    throw input_error("--batch: " + std::to_string(batch) + " points would stack a Jacobian of " +
                      std::to_string(static_cast<std::uint64_t>(entries_per_point)) +
                      " entries per point; at most 25 million entries (200 MB of doubles) are allowed, that is " +
                      std::to_string(static_cast<std::uint64_t>(max_jacobian_entries / entries_per_point)) +
                      " points for this network");
}

int report_interrupted_sampling(std::uint64_t drawn, std::uint64_t batch) {
  std::cerr << "pleat: sample interrupted while drawing points (" << drawn << " of " << batch
            << "); no rank computed\n";
  return 130;
}

int run_sample(const SampleArguments& arguments) {
  const auto started = std::chrono::steady_clock::now();
  if (arguments.batch == 0) throw input_error("--batch: give at least 1 point");
  const Network network = load_network(arguments.network_path);
  const PointDistribution dist = parse_distribution(arguments.dist, network.input_dim);
  const Domain domain = dist.is_box ? make_box(dist.lower, dist.upper) : make_whole_space(network.input_dim);

  SampleResult result;
  result.batch = arguments.batch;
  result.dtype = arguments.dtype;
  if (arguments.dtype != "float64" && arguments.dtype != "float32")
    throw input_error("--dtype: expected float64 or float32, got '" + arguments.dtype + "'");
  check_batch_size(arguments.batch, network);
  const DoubleNetwork double_network = sampling_network(network, is_float32(arguments));
  PointStream stream(arguments.seed, dist, is_float32(arguments));
  std::vector<DoubleMatrix> jacobians;
  std::unordered_set<ActivationPattern, PatternHash> touched;
  std::string points_text;  // the points exactly (every double is a dyadic rational)
  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  // Only Ctrl-C stops the sampling (the time limit is the walk's); each
  // point's exact pattern polls it too, which matters on deep networks.
  const StopRequest sampling_stop(&interrupt.flag(), 0);
  const StopScope sampling_scope(sampling_stop);
  for (std::uint64_t i = 0; i < arguments.batch; ++i) {
    if (sampling_stop.is_requested()) return report_interrupted_sampling(i, arguments.batch);
    progress.update("sample: drawing points, " + std::to_string(i) + " of " + std::to_string(arguments.batch));
    const DoubleVector point = stream.next_point(network.input_dim);
    jacobians.push_back(parameter_jacobian_double(double_network, point));  // rounded to float32 by the SVD
    RationalVector exact;
    for (double coordinate : point) exact.push_back(rational_from_double(coordinate));
    for (std::size_t c = 0; c < exact.size(); ++c) {
      if (c) points_text += ',';
      points_text += format_rational(exact[c]);
    }
    points_text += "\n";
    try {
      if (auto pattern = region_pattern_at(network, exact)) touched.insert(*pattern);
      else ++result.points_on_bent_hyperplanes;
    } catch (const Stopped&) {
      return report_interrupted_sampling(i, arguments.batch);
    }
  }
  result.regions_touched = touched.size();
  if (!arguments.points_path.empty()) write_output(arguments.points_path, points_text);
  const std::size_t columns = network.parametric_dimension();
  progress.update("sample: singular values of the " + std::to_string(arguments.batch * network.output_dim()) + " x " +
                  std::to_string(columns) + " Jacobian");
  result.rank = numerical_rank(jacobians, jacobians.size(), columns, is_float32(arguments));

  FunctionalDimensionOptions options;
  options.walk.threads = static_cast<unsigned>(arguments.threads);
  options.walk.time_limit_seconds = arguments.time_limit;
  options.walk.interrupt = &interrupt.flag();
  options.walk.on_progress = [&](const WalkProgress& state) {
    progress.update("sample: certifying, " + std::to_string(state.regions) + " regions walked");
  };
  options.stop_at_scaling_bound = false;  // regions_total needs the whole walk
  result.certified = certify_functional_dimension(network, domain, options);
  progress.finish();
  result.verdict = verdict_of(result.rank.customary, result.certified);
  if (result.certified.certified)
    result.first_batch_reaching =
        first_batch_reaching(jacobians, columns, *result.certified.functional_dimension, result.rank.customary,
                             is_float32(arguments));
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();

  if (arguments.json) std::cout << json_text(result_to_json(arguments, domain, result));
  else print_result(network, domain, result, std::cout);
  return result.certified.stop_reason == StopReason::interrupted ? 130 : 0;
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
    "                       with m, up to rounding). none: K points were not enough.\n"
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
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON; - for stdin)")
      ->required();
  add_unsigned_option(command, "--batch", arguments->batch, "Number of random input points K")->required();
  add_unsigned_option(command, "--seed", arguments->seed, "Seed of the point stream")->required();
  command.add_option("--dist", arguments->dist, "normal (default) or box:LO,HI (uniform on the open box)")
      ->type_name("DIST")
      ->allow_extra_args(false);
  command.add_flag("--json", arguments->json, "Print the result as JSON (pleat-sample/1)");
  add_threads_option(command, arguments->threads, "Worker threads for the walk (default: all cores)");
  add_seconds_option(command, "--time-limit", arguments->time_limit,
                     "Stop the certifying walk after this many seconds (then only bounds)");
  command.add_option("--dtype", arguments->dtype,
                     "float64 (default) or float32: the precision of the parameters, points, Jacobian and SVD")
      ->type_name("TYPE");
  command.add_option("--points-out", arguments->points_path,
                     "Write the sampled points exactly (one per line), e.g. for 'pleat certify --points'");
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
