#include "lp/detail/double_rows.hpp"

#include "lp/filter_tolerances.hpp"

#include <algorithm>
#include <climits>
#include <cmath>

namespace pleat::lp::detail {

double split_exponent(const Rational& value, long& exponent) {
  if (sgn(value) == 0) {
    exponent = 0;
    return 0.0;
  }
  long numerator_exponent = 0;
  long denominator_exponent = 0;
  const double numerator = mpz_get_d_2exp(&numerator_exponent, value.get_num_mpz_t());
  const double denominator = mpz_get_d_2exp(&denominator_exponent, value.get_den_mpz_t());
  exponent = numerator_exponent - denominator_exponent;
  return numerator / denominator;
}

namespace {

double scaled(double mantissa, long exponent) {
  // ldexp saturates to 0 or inf; clamp so the int conversion cannot wrap.
  const long clamped = std::clamp(exponent, -5000L, 5000L);
  return std::ldexp(mantissa, static_cast<int>(clamped));
}

}  // namespace

DoubleRows to_double_rows(const Polyhedron& cell) {
  DoubleRows rows;
  rows.dim = cell.dim;
  rows.count = cell.constraints.size();
  rows.normals.assign(rows.count * rows.dim, 0.0);
  rows.offsets.assign(rows.count, 0.0);
  rows.exponents.assign(rows.count, 0);
  rows.norms.assign(rows.count, 1.0);
  std::vector<double> mantissas(rows.dim);
  std::vector<long> exponents(rows.dim);
  for (std::size_t i = 0; i < rows.count; ++i) {
    const Constraint& constraint = cell.constraints[i];
    long top = LONG_MIN;
    for (std::size_t k = 0; k < rows.dim; ++k) {
      mantissas[k] = split_exponent(constraint.normal[k], exponents[k]);
      if (mantissas[k] != 0.0) top = std::max(top, exponents[k]);
    }
    if (top == LONG_MIN) top = 0;  // all-zero normal: rejected by the caller
    double norm = 0.0;
    double* row = rows.normals.data() + i * rows.dim;
    for (std::size_t k = 0; k < rows.dim; ++k) {
      row[k] = mantissas[k] == 0.0 ? 0.0 : scaled(mantissas[k], exponents[k] - top);
      norm += std::fabs(row[k]);
    }
    long offset_exponent = 0;
    const double offset_mantissa = split_exponent(constraint.offset, offset_exponent);
    double offset = offset_mantissa == 0.0 ? 0.0 : scaled(offset_mantissa, offset_exponent - top);
    if (norm == 0.0) norm = 1.0;
    for (std::size_t k = 0; k < rows.dim; ++k) row[k] /= norm;
    offset /= norm;
    // Offsets beyond 1e200 would wreck GLPK's tolerances; let the exact path decide.
    if (!std::isfinite(offset) || std::fabs(offset) > 1e200) rows.is_finite = false;
    rows.offsets[i] = offset;
    rows.exponents[i] = top;
    rows.norms[i] = norm;
  }
  return rows;
}

Rational DoubleRows::exact_weight(std::size_t i) const {
  Rational weight = rational_from_double(1.0 / norms[i]);  // exact (norms[i] is finite and > 0)
  const long exponent = exponents[i];
  if (exponent > 0)
    mpq_div_2exp(weight.get_mpq_t(), weight.get_mpq_t(), static_cast<mp_bitcnt_t>(exponent));
  else if (exponent < 0)
    mpq_mul_2exp(weight.get_mpq_t(), weight.get_mpq_t(), static_cast<mp_bitcnt_t>(-exponent));
  return weight;
}

std::optional<PlaneBoundednessProposal> propose_plane_boundedness(std::vector<std::pair<double, std::size_t>> angles) {
  const std::size_t m = angles.size();
  if (m == 0) return std::nullopt;
  std::sort(angles.begin(), angles.end());
  constexpr double pi = 3.14159265358979323846;
  constexpr double margin = FilterTolerances::half_turn_margin;
  const auto gap_after = [&](std::size_t k) {  // counter-clockwise angle from normal k to normal k+1
    const double next = k + 1 < m ? angles[k + 1].first : angles[0].first + 2 * pi;
    return next - angles[k].first;
  };
  std::size_t widest = 0;
  for (std::size_t k = 1; k < m; ++k)
    if (gap_after(k) > gap_after(widest)) widest = k;
  if (gap_after(widest) >= pi - margin) return PlaneBoundednessProposal{angles[(widest + 1) % m].second, {}};
  // Every gap < pi: walk round greedily, each step to the last normal within pi.
  std::array<std::size_t, 3> chosen{};
  std::size_t at = 0;
  for (std::size_t step = 1; step < 3; ++step) {
    std::size_t next = at;
    while (next + 1 < m && angles[next + 1].first - angles[at].first < pi - margin) ++next;
    if (next == at) return std::nullopt;
    chosen[step] = at = next;
  }
  if (angles[chosen[0]].first + 2 * pi - angles[chosen[2]].first >= pi - margin) return std::nullopt;
  return PlaneBoundednessProposal{std::nullopt, {angles[chosen[0]].second, angles[chosen[1]].second, angles[chosen[2]].second}};
}

}  // namespace pleat::lp::detail
