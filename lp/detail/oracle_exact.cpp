// The Oracle's exact fallbacks: cddlib's exact LP decides when a double
// proposal does not verify; every result passes lp/checker.hpp.
#include "lp/detail/oracle_parts.hpp"

#include "core/errors.hpp"
#include "core/filtered_sign.hpp"
#include "core/stop.hpp"
#include "lp/checker.hpp"
#include "lp/detail/double_rows.hpp"
#include "lp/detail/exact_linear.hpp"
#include "lp/detail/exact_lp.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/detail/glpk_lp.hpp"
#include "lp/detail/working_rows.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <optional>
#include <stdexcept>
#include <string>

namespace pleat::lp::detail {

[[noreturn]] void internal_failure(const char* what) {
  throw std::logic_error(std::string("pleat::lp internal error: ") + what);
}

// Open cell, exactly.
CellVerdict decide_open_cell_exactly(const Polyhedron& cell, const Rational& cap,
                                     const std::vector<std::size_t>& try_first) {
  if (std::optional<CellVerdict> verdict = decide_open_cell_on_lines(cell, try_first)) return std::move(*verdict);
  if (std::optional<CellVerdict> verdict = decide_open_cell_on_planes(cell, try_first)) return std::move(*verdict);
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  // Exact LP (cddlib), variables (x, t):
  //   maximise t  subject to  a_i . x + c_i - t |a_i|_1 >= 0  (every i),  cap - t >= 0.
  // With the exact 1-norm, t is the radius of a max-norm ball inside the cell.
  std::vector<ExactRow> rows(m + 1);
  for (std::size_t i = 0; i < m; ++i) {
    rows[i].normal = cell.constraints[i].normal;
    rows[i].normal.push_back(-one_norm(cell.constraints[i].normal));
    rows[i].offset = cell.constraints[i].offset;
  }
  rows[m].normal.assign(n + 1, Rational(0));
  rows[m].normal[n] = -1;
  rows[m].offset = cap;
  RationalVector objective(n + 1, Rational(0));
  objective[n] = 1;
  const detail::ExactSolution primal = detail::maximise_exact(n + 1, rows, objective);
  if (primal.status != ExactStatus::optimal) internal_failure("exact centre LP not optimal");
  if (sgn(primal.value) > 0) {
    RationalVector centre(primal.point.begin(), primal.point.begin() + static_cast<long>(n));
    // Moving each coordinate by at most t/16 keeps every slack >= 15 t|a_i|_1 / 16 > 0.
    RationalVector shortened = round_point(centre, primal.value / 16);
    if (is_interior(cell, shortened)) return InteriorPoint{std::move(shortened)};
    if (!is_interior(cell, centre)) internal_failure("exact centre not interior");
    return InteriorPoint{std::move(centre)};
  }
  // Exact alternative (Gordan/Motzkin), variables y in Q^m:
  //   minimise sum_i y_i c_i  subject to  y >= 0,  sum_i y_i = 1,  sum_i y_i a_i = 0.
  // Feasible with optimum <= 0 exactly when the open cell is empty.
  std::vector<ExactRow> alternative;
  alternative.reserve(m + 1 + n);
  for (std::size_t i = 0; i < m; ++i) {
    ExactRow row{RationalVector(m, Rational(0)), Rational(0), false};
    row.normal[i] = 1;
    alternative.push_back(std::move(row));
  }
  alternative.push_back(ExactRow{RationalVector(m, Rational(1)), Rational(-1), true});
  for (std::size_t k = 0; k < n; ++k) {
    ExactRow row{RationalVector(m), Rational(0), true};
    for (std::size_t i = 0; i < m; ++i) row.normal[i] = cell.constraints[i].normal[k];
    alternative.push_back(std::move(row));
  }
  RationalVector cost(m);
  for (std::size_t i = 0; i < m; ++i) cost[i] = -cell.constraints[i].offset;
  const detail::ExactSolution dual = detail::maximise_exact(m, alternative, cost);
  if (dual.status != ExactStatus::optimal) internal_failure("exact Gordan LP not optimal");
  EmptinessCertificate certificate{dual.point};
  if (!check_emptiness(cell, certificate)) internal_failure("exact Gordan certificate fails");
  return certificate;
}

// One facet group, exactly.
FacetVerdict classify_group_exactly(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                    LazyIntegerRows* known_rows) {
  if (cell.dim == 2 || cell.dim == 3) {
    LazyIntegerRows own(cell);
    LazyIntegerRows& integer = known_rows ? *known_rows : own;
    std::optional<FacetVerdict> verdict = cell.dim == 2 ? classify_group_on_line(cell, group, integer.get())
                                                        : classify_group_on_plane(cell, group, integer.get());
    if (verdict) return std::move(*verdict);
  }
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  const std::size_t j = group[0];
  const Constraint& rep = cell.constraints[j];
  std::vector<bool> is_member(m, false);
  for (std::size_t member : group) is_member[member] = true;
  // Exact mixed LP (cddlib), variables (x, t):
  //   maximise t  subject to  a_j . x + c_j = 0,
  //                           a_i . x + c_i - t |a_i|_1 >= 0  (i outside the group),  1 - t >= 0.
  std::vector<ExactRow> rows;
  ExactRow equality{rep.normal, rep.offset, true};
  equality.normal.push_back(Rational(0));
  rows.push_back(std::move(equality));
  for (std::size_t i = 0; i < m; ++i) {
    if (is_member[i]) continue;
    ExactRow row{cell.constraints[i].normal, cell.constraints[i].offset, false};
    row.normal.push_back(-one_norm(cell.constraints[i].normal));
    rows.push_back(std::move(row));
  }
  ExactRow cap{RationalVector(n + 1, Rational(0)), Rational(1), false};
  cap.normal[n] = -1;
  rows.push_back(std::move(cap));
  RationalVector objective(n + 1, Rational(0));
  objective[n] = 1;
  const detail::ExactSolution primal = detail::maximise_exact(n + 1, rows, objective);
  if (primal.status != ExactStatus::optimal) internal_failure("exact facet LP not optimal");
  if (sgn(primal.value) > 0) {
    RationalVector point(primal.point.begin(), primal.point.begin() + static_cast<long>(n));
    // Rounding all coordinates but the largest-|a_jk| one by < t/(2n) and
    // re-solving that one moves the point by < t/2 in max-norm: still a facet point.
    const std::size_t solved = largest_entry(rep.normal);
    RationalVector shortened = project_onto(
        rep, round_point(point, primal.value / Rational(static_cast<long>(2 * n))), solved);
    if (is_facet_point(cell, group, shortened)) return FacetPoint{std::move(shortened)};
    if (!is_facet_point(cell, group, point)) internal_failure("exact facet point fails");
    return FacetPoint{std::move(point)};
  }
  // Exact alternative (Motzkin), variables (mu, y over the rows outside the group):
  //   minimise mu c_j + sum y_i c_i  subject to  y >= 0,  sum y_i = 1,  mu a_j + sum y_i a_i = 0.
  std::vector<std::size_t> others;
  for (std::size_t i = 0; i < m; ++i)
    if (!is_member[i]) others.push_back(i);
  const std::size_t variables = others.size() + 1;
  std::vector<ExactRow> alternative;
  for (std::size_t s = 0; s < others.size(); ++s) {
    ExactRow row{RationalVector(variables, Rational(0)), Rational(0), false};
    row.normal[s + 1] = 1;
    alternative.push_back(std::move(row));
  }
  ExactRow sum{RationalVector(variables, Rational(1)), Rational(-1), true};
  sum.normal[0] = 0;
  alternative.push_back(std::move(sum));
  for (std::size_t k = 0; k < n; ++k) {
    ExactRow row{RationalVector(variables), Rational(0), true};
    row.normal[0] = rep.normal[k];
    for (std::size_t s = 0; s < others.size(); ++s) row.normal[s + 1] = cell.constraints[others[s]].normal[k];
    alternative.push_back(std::move(row));
  }
  RationalVector cost(variables);
  cost[0] = -rep.offset;
  for (std::size_t s = 0; s < others.size(); ++s) cost[s + 1] = -cell.constraints[others[s]].offset;
  const detail::ExactSolution dual = detail::maximise_exact(variables, alternative, cost);
  if (dual.status != ExactStatus::optimal) internal_failure("exact Motzkin LP not optimal");
  NonFacetCertificate certificate{dual.point[0], RationalVector(m, Rational(0))};
  for (std::size_t s = 0; s < others.size(); ++s) certificate.multipliers[others[s]] = dual.point[s + 1];
  if (!check_non_facet(cell, group, certificate)) internal_failure("exact Motzkin certificate fails");
  return certificate;
}

// Boundedness, exactly.
BoundednessVerdict decide_boundedness_exactly(const Polyhedron& cell) {
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  RationalMatrix normals(m, n);
  for (std::size_t i = 0; i < m; ++i) normals.set_row(i, cell.constraints[i].normal);
  // A lineality direction (rank < n) recedes both ways.
  if (const std::optional<RationalVector> d = detail::null_vector(normals)) {
    RecessionDirection direction{*d};
    if (!check_recession_direction(cell, direction)) internal_failure("exact lineality fails");
    return direction;
  }
  // Exact LP (cddlib), variables d:
  //   maximise (sum_i a_i) . d  subject to  a_i . d >= 0,  -1 <= d_k <= 1.
  // With rank n every nonzero d in the cone has a positive objective.
  std::vector<ExactRow> rows;
  RationalVector objective(n, Rational(0));
  for (const Constraint& constraint : cell.constraints) {
    rows.push_back(ExactRow{constraint.normal, Rational(0), false});
    for (std::size_t k = 0; k < n; ++k) objective[k] += constraint.normal[k];
  }
  for (std::size_t k = 0; k < n; ++k) {
    ExactRow lower{RationalVector(n, Rational(0)), Rational(1), false};
    lower.normal[k] = 1;
    ExactRow upper{RationalVector(n, Rational(0)), Rational(1), false};
    upper.normal[k] = -1;
    rows.push_back(std::move(lower));
    rows.push_back(std::move(upper));
  }
  const detail::ExactSolution primal = detail::maximise_exact(n, rows, objective);
  if (primal.status != ExactStatus::optimal) internal_failure("exact recession LP not optimal");
  if (sgn(primal.value) > 0) {
    RecessionDirection direction{primal.point};
    if (!check_recession_direction(cell, direction)) internal_failure("exact recession direction fails");
    return direction;
  }
  // Exact Stiemke LP, variables y in Q^m:
  //   minimise sum y_i  subject to  y_i >= 1,  sum_i y_i a_i = 0.
  std::vector<ExactRow> alternative;
  for (std::size_t i = 0; i < m; ++i) {
    ExactRow row{RationalVector(m, Rational(0)), Rational(-1), false};
    row.normal[i] = 1;
    alternative.push_back(std::move(row));
  }
  for (std::size_t k = 0; k < n; ++k) {
    ExactRow row{RationalVector(m), Rational(0), true};
    for (std::size_t i = 0; i < m; ++i) row.normal[i] = cell.constraints[i].normal[k];
    alternative.push_back(std::move(row));
  }
  const detail::ExactSolution dual =
      detail::maximise_exact(m, alternative, RationalVector(m, Rational(-1)));
  if (dual.status != ExactStatus::optimal) internal_failure("exact Stiemke LP not optimal");
  BoundednessCertificate certificate{dual.point};
  if (!check_boundedness(cell, certificate)) internal_failure("exact Stiemke certificate fails");
  return certificate;
}

}  // namespace pleat::lp::detail
