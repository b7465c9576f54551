#include "enumerate/sampled_estimate.hpp"

#include "core/errors.hpp"
#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/random_network.hpp"
#include "core/stop.hpp"
#include "enumerate/walker.hpp"

#include <Eigen/SVD>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <numbers>
#include <string>
#include <unordered_set>

namespace pleat {
namespace {

// The point stream documented at run_sampled_estimate.
class PointStream {
 public:
  // Throws input_error when some axis of a box cannot be drawn from.
  PointStream(std::uint64_t seed, const PointDistribution& dist, bool is_float32)
      : stream_(seed, 0), dist_(dist), is_float32_(is_float32) {
    if (dist_.is_box)
      for (std::size_t axis = 0; axis < dist_.lower.size(); ++axis) require_drawable(axis);
  }

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

  // next_box draws until a point lies strictly inside: an axis with no
  // double (or float32) there, such as (1, 1 + 10^-20), would draw forever,
  // and one beyond the type's range (or as wide) draws infinities. Refused;
  // a representable middle makes about every other draw land inside.
  void require_drawable(std::size_t axis) const {
    const double lo = to_double(dist_.lower[axis]), hi = to_double(dist_.upper[axis]);
    const std::string where = dist_.name + ": axis " + std::to_string(axis) + ": the interval (" +
                              format_rational_brief(dist_.lower[axis]) + ", " +
                              format_rational_brief(dist_.upper[axis]) + ")";
    const char* type = is_float32_ ? "float32" : "float64";
    if (!std::isfinite(rounded(lo)) || !std::isfinite(rounded(hi)) || !std::isfinite(hi - lo))
      throw input_error(where + " reaches beyond the " + type + " range the points are drawn in");
    const double middle = rounded(lo + (hi - lo) * 0.5);
    if (!std::isfinite(middle) || !(dist_.lower[axis] < rational_from_double(middle) &&
                                    rational_from_double(middle) < dist_.upper[axis]))
      throw input_error(where + " is too narrow to draw " + type + " points strictly inside it");
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

// Scalar is double or float (the Jacobian entries rounded to it); float32
// uses float32's epsilon in the tolerance, as numpy's matrix_rank does on a
// float32 array.
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
// An interrupt is polled before each SVD (each one is not interruptible):
// then *interrupted is set and the answer is none.
std::optional<std::size_t> first_batch_reaching(const std::vector<DoubleMatrix>& jacobians, std::size_t columns,
                                                std::size_t target, std::size_t full_rank, bool is_float32,
                                                const StopRequest& stop, bool* interrupted) {
  if (full_rank < target) return std::nullopt;
  std::size_t low = 0, high = jacobians.size();  // rank(low) < target <= rank(high); rank(0) = 0
  if (target == 0) return 0;
  while (high - low > 1) {
    if (stop.is_requested()) {
      *interrupted = true;
      return std::nullopt;
    }
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

// The estimate computes in double (or float32): a parameter, or a product of
// them, beyond that range makes a Jacobian entry infinite or NaN, and the SVD
// rank of such a matrix means nothing, so it is refused rather than printed.
void require_finite_jacobian(const Network& network, const DoubleMatrix& jacobian, bool is_float32,
                             std::uint64_t point, std::uint64_t batch) {
  const std::string type = is_float32 ? "float32" : "float64";
  for (std::size_t r = 0; r < jacobian.rows(); ++r)
    for (std::size_t c = 0; c < jacobian.cols(); ++c) {
      const double entry = jacobian(r, c);
      if (!std::isfinite(is_float32 ? static_cast<double>(static_cast<float>(entry)) : entry))
        throw input_error("sample: point " + std::to_string(point + 1) + " of " + std::to_string(batch) + ": the " + type +
                          " Jacobian's entry for parameter " + network.parameter_name(c) +
                          " is not finite (parameters or their products beyond " + type +
                          "'s range): no sampled estimate in " + type + "; pleat certify is exact");
    }
}

// 200 MB of doubles per copy of the stacked Jacobian.
constexpr double max_jacobian_entries = 25e6;

}  // namespace

PointDistribution box_distribution(RationalVector lower, RationalVector upper, std::string_view what) {
  if (lower.size() != upper.size()) throw usage_error("box_distribution: bounds of different lengths");
  for (std::size_t i = 0; i < lower.size(); ++i)
    if (!(lower[i] < upper[i]))
      throw input_error(std::string(what) + ": axis " + std::to_string(i) + ": LO must be below HI");
  PointDistribution dist;
  dist.is_box = true;
  dist.lower = std::move(lower);
  dist.upper = std::move(upper);
  dist.name = what;
  return dist;
}

Domain distribution_domain(const PointDistribution& dist, std::size_t input_dim) {
  return dist.is_box ? make_box(dist.lower, dist.upper) : make_whole_space(input_dim);
}

void check_batch_size(std::uint64_t batch, const Network& network, std::string_view what) {
  const double entries_per_point =
      static_cast<double>(network.output_dim()) * static_cast<double>(network.parametric_dimension());
  if (static_cast<double>(batch) * entries_per_point > max_jacobian_entries)
    throw input_error(std::string(what) + ": " + std::to_string(batch) + " points would stack a Jacobian of " +
                      std::to_string(static_cast<std::uint64_t>(entries_per_point)) +
                      " entries per point; at most 25 million entries (200 MB of doubles) are allowed, that is " +
                      std::to_string(static_cast<std::uint64_t>(max_jacobian_entries / entries_per_point)) +
                      " points for this network");
}

std::optional<Verdict> sample_verdict(std::size_t rank, const FunctionalDimensionResult& certified) {
  if (rank > certified.upper_bound) return Verdict::impossible;
  if (certified.certified) return rank == certified.lower_bound ? Verdict::consistent : Verdict::too_low;
  if (rank < certified.lower_bound) return Verdict::too_low;
  return std::nullopt;
}

SampleResult run_sampled_estimate(const Network& network, const SampleOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  SampleResult result;
  result.batch = options.batch;
  const DoubleNetwork double_network = sampling_network(network, options.is_float32);
  PointStream stream(options.seed, options.dist, options.is_float32);
  std::vector<DoubleMatrix> jacobians;
  std::unordered_set<ActivationPattern, PatternHash> touched;
  // Only an interrupt stops the sampling (the time limit is the walk's); each
  // point's exact pattern polls it too, which matters on deep networks.
  const StopRequest sampling_stop(options.walk.interrupt, 0);
  const StopScope sampling_scope(sampling_stop);
  auto interrupted_at = [&](std::uint64_t drawn) {
    result.interrupted_while_sampling = true;
    result.drawn = drawn;
    return result;
  };
  for (std::uint64_t i = 0; i < options.batch; ++i) {
    if (sampling_stop.is_requested()) return interrupted_at(i);
    if (options.on_point) options.on_point(i);
    const DoubleVector point = stream.next_point(network.input_dim);
    jacobians.push_back(parameter_jacobian_double(double_network, point));  // rounded to float32 by the SVD
    require_finite_jacobian(network, jacobians.back(), options.is_float32, i, options.batch);
    RationalVector exact;
    for (double coordinate : point) exact.push_back(rational_from_double(coordinate));
    try {
      if (auto pattern = region_pattern_at(network, exact)) touched.insert(*pattern);
      else ++result.points_on_bent_hyperplanes;
    } catch (const Stopped&) {
      return interrupted_at(i);
    }
    result.points.push_back(std::move(exact));
  }
  result.drawn = options.batch;
  result.regions_touched = touched.size();
  const std::size_t columns = network.parametric_dimension();
  if (options.on_points_drawn) options.on_points_drawn(result.points);
  result.rank = numerical_rank(jacobians, jacobians.size(), columns, options.is_float32);

  FunctionalDimensionOptions certify_options;
  certify_options.walk = options.walk;
  certify_options.stop_at_scaling_bound = false;  // regions_total needs the whole walk
  const Domain domain = distribution_domain(options.dist, network.input_dim);
  result.certified = certify_functional_dimension(network, domain, certify_options);
  result.verdict = sample_verdict(result.rank.customary, result.certified);
  if (result.certified.certified)
    result.first_batch_reaching =
        first_batch_reaching(jacobians, columns, *result.certified.functional_dimension, result.rank.customary,
                             options.is_float32, sampling_stop, &result.interrupted_while_searching);
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

}  // namespace pleat
