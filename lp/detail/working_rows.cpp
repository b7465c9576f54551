#include "lp/detail/working_rows.hpp"

#include "lp/filter_tolerances.hpp"

#include <algorithm>
#include <numeric>

namespace pleat::lp::detail {
namespace {

// A constraint counts as violated below this double slack (FilterTolerances says why).
constexpr double kViolation = FilterTolerances::violated_slack;
constexpr std::size_t kRounds = 40;

}  // namespace

WorkingRows::WorkingRows(const DoubleRows& rows, std::size_t fixed_rows, bool has_radius, bool is_maximise,
                         bool is_homogeneous)
    : rows_(rows),
      has_radius_(has_radius),
      is_homogeneous_(is_homogeneous),
      lp_(fixed_rows, rows.dim + (has_radius ? 1 : 0), is_maximise),
      lp_row_(rows.count, kAbsent),
      fixed_rows_(fixed_rows) {}

void WorkingRows::add(std::size_t constraint) {
  if (contains(constraint)) return;
  const std::size_t row = lp_.add_rows(1);
  std::vector<double> coefficients(rows_.normal(constraint), rows_.normal(constraint) + rows_.dim);
  if (has_radius_) coefficients.push_back(-1.0);
  lp_.set_row(row, coefficients.data(), coefficients.size());
  lp_.set_row_lower(row, -offset(constraint));
  lp_row_[constraint] = row;
  constraint_.push_back(constraint);
}

void WorkingRows::add_nearest(const std::vector<double>& point, std::size_t count) {
  std::vector<double> slack(rows_.count, 0.0);
  for (std::size_t i = 0; i < rows_.count; ++i) {
    slack[i] = offset(i);
    for (std::size_t k = 0; k < rows_.dim; ++k) slack[i] += rows_.normal(i)[k] * point[k];
  }
  std::vector<std::size_t> order(rows_.count);
  std::iota(order.begin(), order.end(), std::size_t{0});
  count = std::min(count, rows_.count);
  std::partial_sort(order.begin(), order.begin() + static_cast<long>(count), order.end(),
                    [&](std::size_t a, std::size_t b) { return slack[a] < slack[b]; });
  for (std::size_t c = 0; c < count; ++c) add(order[c]);
}

void WorkingRows::add_all() {
  for (std::size_t i = 0; i < rows_.count; ++i) add(i);
}

DoubleStatus WorkingRows::solve(const std::function<bool(std::size_t)>& is_excluded) {
  const std::size_t dim = rows_.dim;
  std::vector<double> x(dim);
  std::vector<std::pair<double, std::size_t>> violated;
  for (std::size_t round = 0;; ++round) {
    const DoubleStatus status = lp_.solve();
    if (status != DoubleStatus::optimal) return status;
    for (std::size_t k = 0; k < dim; ++k) x[k] = lp_.column_value(k);
    const double radius = has_radius_ ? lp_.column_value(dim) : 0.0;
    violated.clear();
    for (std::size_t i = 0; i < rows_.count; ++i) {
      if (contains(i) || is_excluded(i)) continue;
      double slack = offset(i) - radius;
      for (std::size_t k = 0; k < dim; ++k) slack += rows_.normal(i)[k] * x[k];
      if (slack < -kViolation) violated.emplace_back(slack, i);
    }
    if (violated.empty()) return DoubleStatus::optimal;
    if (round == kRounds) {
      for (std::size_t i = 0; i < rows_.count; ++i)
        if (!is_excluded(i)) add(i);
      continue;
    }
    // The most violated few, as cutting planes.
    const std::size_t take = std::min(violated.size(), dim + 1);
    std::partial_sort(violated.begin(), violated.begin() + static_cast<long>(take), violated.end());
    for (std::size_t v = 0; v < take; ++v) add(violated[v].second);
  }
}

std::vector<std::size_t> WorkingRows::active_constraints() const {
  std::vector<std::size_t> active;
  for (std::size_t r = 0; r < constraint_.size(); ++r) {
    const BasisStatus status = lp_.row_status(fixed_rows_ + r);
    if (status == BasisStatus::at_lower || status == BasisStatus::fixed) active.push_back(constraint_[r]);
  }
  std::sort(active.begin(), active.end());
  return active;
}

}  // namespace pleat::lp::detail
