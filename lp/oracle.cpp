// The queries: GLPK proposes on the double image of the cell (detail/double_rows),
// exact arithmetic verifies each proposal (a point: every constraint evaluated
// exactly; multipliers: solved exactly on the support GLPK proposes, then signs
// and the offset inequality checked), and cddlib's exact LP decides whenever a
// proposal fails. Each LP the code builds is written out above it.
#include "lp/oracle.hpp"

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

namespace pleat::lp {

QueryCounts& QueryCounts::operator+=(const QueryCounts& other) {
  lp_queries += other.lp_queries;
  filter_settled += other.filter_settled;
  exact_fallbacks += other.exact_fallbacks;
  return *this;
}

struct Oracle::State {
  FilterTolerances tolerances;
  QueryCounts counts;
};

namespace {

using detail::BasisStatus;
using detail::DoubleRows;
using detail::DoubleStatus;
using detail::ExactRow;
using detail::ExactStatus;
using detail::GlpkLP;
using detail::WorkingRows;

// ---- small exact helpers ----------------------------------------------------

// A point as integers over one common denominator, for fast exact signs.
struct ScaledPoint {
  std::vector<Integer> numerators;
  Integer denominator = 1;
  explicit ScaledPoint(const RationalVector& point) : numerators(point.size()) {
    for (const Rational& value : point) mpz_lcm(denominator.get_mpz_t(), denominator.get_mpz_t(), value.get_den_mpz_t());
    for (std::size_t k = 0; k < point.size(); ++k) {
      numerators[k] = denominator / point[k].get_den();
      numerators[k] *= point[k].get_num();
    }
  }
};

// sign(a . x + c), exactly: (a . X + c D) accumulated as one unreduced fraction
// (no gcd per term; denominators of integer rows stay 1).
int slack_sign(const Constraint& constraint, const ScaledPoint& point, Integer& numerator, Integer& denominator,
               Integer& term) {
  numerator = constraint.offset.get_num() * point.denominator;
  denominator = constraint.offset.get_den();
  for (std::size_t k = 0; k < point.numerators.size(); ++k) {
    const Rational& a = constraint.normal[k];
    if (sgn(a) == 0 || sgn(point.numerators[k]) == 0) continue;
    term = a.get_num() * point.numerators[k];
    if (a.get_den() == 1) {
      if (denominator != 1) term *= denominator;
    } else {
      numerator *= a.get_den();
      if (denominator != 1) term *= denominator;
      denominator *= a.get_den();
    }
    numerator += term;
  }
  return sgn(numerator);  // the denominator is positive
}

bool is_interior(const Polyhedron& cell, const RationalVector& point) {
  const ScaledPoint scaled(point);
  Integer numerator, denominator, term;
  for (const Constraint& constraint : cell.constraints)
    if (slack_sign(constraint, scaled, numerator, denominator, term) <= 0) return false;
  return true;
}

// Each coordinate replaced by the simplest rational within radius of it
// (radius <= 0: the double's exact value).
RationalVector round_point(const std::vector<double>& point, double radius) {
  RationalVector rounded(point.size());
  for (std::size_t k = 0; k < point.size(); ++k) {
    if (!(radius > 0.0)) {
      rounded[k] = Rational(point[k]);
      continue;
    }
    rounded[k] = detail::simplest_between(Rational(point[k] - radius), Rational(point[k] + radius));
  }
  return rounded;
}

// Same, around an exact point.
RationalVector round_point(const RationalVector& point, const Rational& radius) {
  RationalVector rounded(point.size());
  for (std::size_t k = 0; k < point.size(); ++k)
    rounded[k] = detail::simplest_between(point[k] - radius, point[k] + radius);
  return rounded;
}

Rational one_norm(const RationalVector& values) {
  Rational norm = 0;
  for (const Rational& value : values) norm += abs(value);
  return norm;
}

// Index of the largest |a_k| (exact comparison).
std::size_t largest_entry(const RationalVector& normal) {
  std::size_t best = 0;
  for (std::size_t k = 1; k < normal.size(); ++k)
    if (abs(normal[k]) > abs(normal[best])) best = k;
  return best;
}

// The point with every coordinate but `solved` taken from point, and the
// `solved` coordinate chosen so that constraint is exactly zero there.
RationalVector project_onto(const Constraint& constraint, RationalVector point, std::size_t solved) {
  Rational rest = constraint.offset;
  for (std::size_t k = 0; k < point.size(); ++k)
    if (k != solved) rest += constraint.normal[k] * point[k];
  point[solved] = -rest / constraint.normal[solved];
  return point;
}

bool is_facet_point(const Polyhedron& cell, const std::vector<std::size_t>& group,
                    const RationalVector& point) {
  const ScaledPoint scaled(point);
  Integer numerator, denominator, term;
  std::size_t g = 0;
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    const int sign = slack_sign(cell.constraints[i], scaled, numerator, denominator, term);
    if (g < group.size() && group[g] == i) {
      ++g;
      if (sign != 0) return false;
    } else if (sign <= 0) {
      return false;
    }
  }
  return true;
}

// Exact Gordan/Motzkin multipliers on a proposed support S: solve
//   sum_{s in S} y_s a_s = 0,  sum_{s in S} y_s = 1
// exactly, then require y >= 0 and sum y_s c_s <= 0.
std::optional<EmptinessCertificate> emptiness_on_support(const Polyhedron& cell,
                                                         const std::vector<std::size_t>& support) {
  if (support.empty()) return std::nullopt;
  RationalMatrix system(cell.dim + 1, support.size());
  RationalVector rhs(cell.dim + 1, Rational(0));
  for (std::size_t s = 0; s < support.size(); ++s) {
    for (std::size_t k = 0; k < cell.dim; ++k) system(k, s) = cell.constraints[support[s]].normal[k];
    system(cell.dim, s) = 1;
  }
  rhs[cell.dim] = 1;
  const std::optional<RationalVector> y = detail::solve_exact(std::move(system), std::move(rhs));
  if (!y) return std::nullopt;
  EmptinessCertificate certificate{RationalVector(cell.constraints.size())};
  Rational offset_sum = 0;
  for (std::size_t s = 0; s < support.size(); ++s) {
    if (sgn((*y)[s]) < 0) return std::nullopt;
    certificate.multipliers[support[s]] = (*y)[s];
    offset_sum += (*y)[s] * cell.constraints[support[s]].offset;
  }
  if (sgn(offset_sum) > 0) return std::nullopt;
  return certificate;
}

// Exact Motzkin multipliers for "group j = 0, the rest > 0" on a proposed
// support S (outside the group): solve
//   mu a_j + sum_{s in S} y_s a_s = 0,  sum_{s in S} y_s = 1
// exactly, then require y >= 0 and mu c_j + sum y_s c_s <= 0.
std::optional<NonFacetCertificate> non_facet_on_support(const Polyhedron& cell, std::size_t representative,
                                                        const std::vector<std::size_t>& support) {
  if (support.empty()) return std::nullopt;
  const Constraint& rep = cell.constraints[representative];
  RationalMatrix system(cell.dim + 1, support.size() + 1);
  RationalVector rhs(cell.dim + 1, Rational(0));
  for (std::size_t k = 0; k < cell.dim; ++k) system(k, 0) = rep.normal[k];
  for (std::size_t s = 0; s < support.size(); ++s) {
    for (std::size_t k = 0; k < cell.dim; ++k)
      system(k, s + 1) = cell.constraints[support[s]].normal[k];
    system(cell.dim, s + 1) = 1;
  }
  rhs[cell.dim] = 1;
  const std::optional<RationalVector> solution = detail::solve_exact(std::move(system), std::move(rhs));
  if (!solution) return std::nullopt;
  NonFacetCertificate certificate{(*solution)[0], RationalVector(cell.constraints.size())};
  Rational offset_sum = certificate.equality_multiplier * rep.offset;
  for (std::size_t s = 0; s < support.size(); ++s) {
    const Rational& y = (*solution)[s + 1];
    if (sgn(y) < 0) return std::nullopt;
    certificate.multipliers[support[s]] = y;
    offset_sum += y * cell.constraints[support[s]].offset;
  }
  if (sgn(offset_sum) > 0) return std::nullopt;
  return certificate;
}

// The redundancy form of the Motzkin certificate: a_j = sum_{s in S} y_s a_s
// with y >= 0 and sum y_s c_s <= c_j (equality multiplier -1).
std::optional<NonFacetCertificate> redundancy_on_support(const Polyhedron& cell, std::size_t representative,
                                                         const std::vector<std::size_t>& support) {
  if (support.empty()) return std::nullopt;
  const Constraint& rep = cell.constraints[representative];
  RationalMatrix system(cell.dim, support.size());
  for (std::size_t s = 0; s < support.size(); ++s)
    for (std::size_t k = 0; k < cell.dim; ++k) system(k, s) = cell.constraints[support[s]].normal[k];
  const std::optional<RationalVector> y = detail::solve_exact(std::move(system), rep.normal);
  if (!y) return std::nullopt;
  NonFacetCertificate certificate{Rational(-1), RationalVector(cell.constraints.size())};
  Rational offset_sum = 0;
  for (std::size_t s = 0; s < support.size(); ++s) {
    if (sgn((*y)[s]) < 0) return std::nullopt;
    certificate.multipliers[support[s]] = (*y)[s];
    offset_sum += (*y)[s] * cell.constraints[support[s]].offset;
  }
  if (offset_sum > rep.offset) return std::nullopt;
  return certificate;
}

// The redundancy certificate of redundancy_on_support for a support of two
// constraints in the plane, by Cramer's rule (no matrix, few temporaries):
// a_j = y1 a_s1 + y2 a_s2, y >= 0, y1 c_s1 + y2 c_s2 <= c_j.
std::optional<NonFacetCertificate> redundancy_in_plane(const Polyhedron& cell, std::size_t j, std::size_t s1,
                                                       std::size_t s2) {
  const RationalVector& a = cell.constraints[s1].normal;
  const RationalVector& b = cell.constraints[s2].normal;
  const RationalVector& target = cell.constraints[j].normal;
  Rational determinant = a[0] * b[1] - a[1] * b[0];
  if (sgn(determinant) == 0) return std::nullopt;
  Rational y1 = (target[0] * b[1] - target[1] * b[0]) / determinant;
  if (sgn(y1) < 0) return std::nullopt;
  Rational y2 = (a[0] * target[1] - a[1] * target[0]) / determinant;
  if (sgn(y2) < 0) return std::nullopt;
  if (y1 * cell.constraints[s1].offset + y2 * cell.constraints[s2].offset > cell.constraints[j].offset)
    return std::nullopt;
  NonFacetCertificate certificate{Rational(-1), RationalVector(cell.constraints.size())};
  certificate.multipliers[s1] = std::move(y1);
  certificate.multipliers[s2] = std::move(y2);
  return certificate;
}

// A cell's constraints as filter images (core/filtered_sign.hpp): per row
// a_0, ..., a_(n-1), c. Built once per query; they decide signs only where
// their error bound allows, exact arithmetic decides the rest.
struct CellImages {
  std::size_t width = 0;
  std::vector<double> values;  // width = dim + 1 per constraint
  explicit CellImages(const Polyhedron& cell)
      : width(cell.dim + 1), values(width * cell.constraints.size()) {
    for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
      double* out = values.data() + width * i;
      for (std::size_t k = 0; k < cell.dim; ++k) out[k] = filter_image(cell.constraints[i].normal[k]);
      out[cell.dim] = filter_image(cell.constraints[i].offset);
    }
  }
  const double* row(std::size_t i) const { return values.data() + width * i; }
  double offset(std::size_t i) const { return values[width * i + width - 1]; }
};

// Every constraint > 0 at point, decided exactly (filtered, exact when undecided).
bool is_interior_filtered(const Polyhedron& cell, const CellImages& images, const RationalVector& point) {
  std::vector<double> x(point.size());
  for (std::size_t k = 0; k < point.size(); ++k) x[k] = filter_image(point[k]);
  std::optional<ScaledPoint> scaled;
  Integer numerator, denominator, term;
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    std::optional<int> sign = filtered_affine_sign(images.row(i), x.data(), cell.dim, images.offset(i));
    if (!sign) {
      if (!scaled) scaled.emplace(point);
      sign = slack_sign(cell.constraints[i], *scaled, numerator, denominator, term);
    }
    if (*sign <= 0) return false;
  }
  return true;
}

// Whether redundancy_in_plane(cell, j, s1, s2) would succeed, by filtered
// signs: with D = det(a_s1, a_s2), y1 = det(a_j, a_s2) / D, y2 = det(a_s1, a_j) / D
// and y1 c_s1 + y2 c_s2 - c_j = -det[(a_s1, c_s1); (a_s2, c_s2); (a_j, c_j)] / D.
// nullopt when a sign is left undecided. Exact when it returns a value.
std::optional<bool> is_redundant_in_plane_filtered(const CellImages& images, std::size_t j, std::size_t s1,
                                                   std::size_t s2) {
  const double* a = images.row(s1);
  const double* b = images.row(s2);
  const double* t = images.row(j);
  const std::optional<int> d = filtered_determinant_sign(a[0], a[1], b[0], b[1]);
  if (!d) return std::nullopt;
  if (*d == 0) return false;
  const std::optional<int> y1 = filtered_determinant_sign(t[0], t[1], b[0], b[1]);
  if (!y1) return std::nullopt;
  if (*y1 * *d < 0) return false;
  const std::optional<int> y2 = filtered_determinant_sign(a[0], a[1], t[0], t[1]);
  if (!y2) return std::nullopt;
  if (*y2 * *d < 0) return false;
  const std::optional<int> excess = filtered_determinant_sign(a, b, t);  // -(y1 c1 + y2 c2 - c_j) D
  if (!excess) return std::nullopt;
  return -*excess * *d <= 0;
}

// is_facet_point for a single constraint j of a plane cell, with each
// constraint's sign filtered first and computed exactly only when undecided.
bool is_facet_point_filtered(const Polyhedron& cell, const CellImages& images, std::size_t j,
                             const RationalVector& point) {
  const double x[2] = {filter_image(point[0]), filter_image(point[1])};
  std::optional<ScaledPoint> scaled;
  Integer numerator, denominator, term;
  const auto exact_sign = [&](std::size_t i) {
    if (!scaled) scaled.emplace(point);
    return slack_sign(cell.constraints[i], *scaled, numerator, denominator, term);
  };
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    const std::optional<int> filtered = filtered_affine_sign(images.row(i), x, 2, images.offset(i));
    const int sign = filtered ? *filtered : exact_sign(i);
    if (i == j ? sign != 0 : sign <= 0) return false;
  }
  return true;
}

// ---- exact fallbacks (cddlib) ----------------------------------------------

[[noreturn]] void internal_failure(const char* what) {
  throw std::logic_error(std::string("pleat::lp internal error: ") + what);
}

// Open cell, exactly.
CellVerdict decide_open_cell_exactly(const Polyhedron& cell, const Rational& cap) {
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
FacetVerdict classify_group_exactly(const Polyhedron& cell, const std::vector<std::size_t>& group) {
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

// ---- the double filter --------------------------------------------------------

// Open cell via the filter; nullopt when the proposal does not verify.
std::optional<CellVerdict> decide_open_cell_filtered(const Polyhedron& cell, const DoubleRows& rows,
                                                     double cap, double positive_slack) {
  const std::size_t n = cell.dim;
  // LP0 (GLPK, rows scaled to 1-norm 1 as in DoubleRows), variables (x, t):
  //   maximise t  subject to  â_i . x - t >= -ĉ_i  (every i),  t <= cap,  x free.
  // t* > 0 is the radius of a max-norm ball inside the cell; t* <= 0 means
  // empty, and the rows active at the optimum carry the Gordan multipliers.
  // Solved by row generation (detail/working_rows.hpp), starting from the
  // rows nearest the origin.
  WorkingRows working(rows, 0, true, true);
  GlpkLP& lp = working.lp();
  lp.set_column_upper(n, cap);
  lp.set_objective(n, 1.0);
  working.add_nearest(std::vector<double>(n, 0.0), 2 * n + 2);
  if (working.solve([](std::size_t) { return false; }) != DoubleStatus::optimal) return std::nullopt;
  const double radius = lp.objective();
  std::vector<double> centre(n);
  for (std::size_t k = 0; k < n; ++k) centre[k] = lp.column_value(k);
  if (radius > positive_slack) {
    // A max-norm move below t*/16 keeps every scaled slack above 15 t*/16 and
    // the point well centred; tighter, then the double's own value, if GLPK's
    // tolerances ate the margin.
    for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
      RationalVector point = round_point(centre, radius * shrink);
      if (is_interior(cell, point)) return InteriorPoint{std::move(point)};
    }
    return std::nullopt;
  }
  if (std::optional<EmptinessCertificate> certificate =
          emptiness_on_support(cell, working.active_constraints()))
    return std::move(*certificate);
  return std::nullopt;
}

// rows: the cell's double image (to_double_rows), built by the caller.
CellVerdict decide_open_cell_counted(const Polyhedron& cell, const DoubleRows& rows, const Rational& cap,
                                     const FilterTolerances& tolerances, QueryCounts& counts) {
  ++counts.lp_queries;
  if (cell.constraints.empty()) {
    ++counts.filter_settled;
    return InteriorPoint{RationalVector(cell.dim, Rational(0))};
  }
  const double cap_double = std::min(cap.get_d(), 1e100);
  if (rows.is_finite && !tolerances.exact_only) {
    if (std::optional<CellVerdict> verdict =
            decide_open_cell_filtered(cell, rows, cap_double, tolerances.positive_slack)) {
      ++counts.filter_settled;
      return *verdict;
    }
  }
  ++counts.exact_fallbacks;
  return decide_open_cell_exactly(cell, cap);
}

// Groups of positive multiples, by representative index; each group ascending.
std::vector<std::vector<std::size_t>> group_positive_multiples(const Polyhedron& cell, const DoubleRows& rows) {
  const std::size_t m = cell.constraints.size();
  const std::size_t n = cell.dim;
  // Screen in double: positive multiples have equal scaled normals (up to
  // rounding), so sort by the first scaled coordinate and compare neighbours;
  // the exact test decides.
  constexpr double screen = 1e-6;
  std::vector<std::size_t> order(m);
  for (std::size_t i = 0; i < m; ++i) order[i] = i;
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return rows.normal(a)[0] < rows.normal(b)[0]; });
  std::vector<std::size_t> parent(m);
  for (std::size_t i = 0; i < m; ++i) parent[i] = i;
  for (std::size_t a = 0; a < m; ++a) {
    poll_stop();  // exact comparisons of long rows: minutes on deep networks
    const std::size_t i = order[a];
    for (std::size_t b = a + 1; b < m; ++b) {
      const std::size_t j = order[b];
      if (rows.normal(j)[0] - rows.normal(i)[0] > screen) break;
      bool is_close = true;
      for (std::size_t k = 1; k < n && is_close; ++k)
        is_close = std::fabs(rows.normal(i)[k] - rows.normal(j)[k]) <= screen;
      if (!is_close) continue;
      if (!detail::is_positive_multiple(cell.constraints[i], cell.constraints[j])) continue;
      // Positive multiples form classes: attach the larger index to the smaller root.
      std::size_t root_i = i;
      while (parent[root_i] != root_i) root_i = parent[root_i];
      std::size_t root_j = j;
      while (parent[root_j] != root_j) root_j = parent[root_j];
      if (root_i != root_j) parent[std::max(root_i, root_j)] = std::min(root_i, root_j);
    }
  }
  std::vector<std::vector<std::size_t>> groups;
  std::vector<std::size_t> group_of(m);
  for (std::size_t i = 0; i < m; ++i) {
    std::size_t root = i;
    while (parent[root] != root) root = parent[root];
    if (root == i) {
      group_of[i] = groups.size();
      groups.push_back({i});
    } else {
      groups[group_of[root]].push_back(i);
    }
  }
  return groups;
}

// The per-region double state for facet classification: two row-generation
// LPs kept warm across the region's candidates.
class FacetFilter {
 public:
  FacetFilter(const Polyhedron& cell, const DoubleRows& rows, const RationalVector& interior,
              double positive_slack)
      : cell_(cell), rows_(rows), positive_slack_(positive_slack), screen_(rows, 1, false, false) {
    // LP1 (GLPK, one per region; row 0 and the objective rewritten per candidate j):
    //   minimise â_j . x  subject to  â_j . x >= -ĉ_j  (row 0),
    //                                 â_i . x >= -ĉ_i  (every i, by row generation),  x free.
    // The optimum v_j = min(â_j . x + ĉ_j) over the closed cell is >= 0.
    // v_j > 0: the hyperplane misses the closed cell, and the dual
    // (a_j = sum y_i a_i over the active rows, sum y_i c_i <= c_j by duality)
    // is the Motzkin certificate with equality multiplier -1.
    // v_j ~ 0: the hyperplane touches the cell; LP2 decides.
    std::vector<double> point(cell.dim);
    for (std::size_t k = 0; k < cell.dim; ++k) point[k] = interior[k].get_d();
    screen_.add_nearest(point, 2 * cell.dim + 2);
  }

  std::optional<FacetVerdict> classify(const std::vector<std::size_t>& group) {
    const std::size_t j = group[0];
    const auto is_member = [&](std::size_t i) { return std::find(group.begin(), group.end(), i) != group.end(); };
    GlpkLP& lp = screen_.lp();
    lp.set_row(0, rows_.normal(j), cell_.dim);
    lp.set_row_lower(0, -rows_.offsets[j]);
    for (std::size_t k = 0; k < cell_.dim; ++k) lp.set_objective(k, rows_.normal(j)[k]);
    if (screen_.solve(is_member) == DoubleStatus::optimal) {
      const double minimum = lp.objective() + rows_.offsets[j];
      if (minimum > positive_slack_) {
        const std::vector<std::size_t> support = screen_.active_constraints();
        if (std::none_of(support.begin(), support.end(), is_member))
          if (std::optional<NonFacetCertificate> certificate = redundancy_on_support(cell_, j, support))
            return FacetVerdict{std::move(*certificate)};
      }
    }
    return classify_on_hyperplane(group, is_member);
  }

 private:
  void build_hyperplane_lp() {
    const std::size_t n = cell_.dim;
    // LP2 (GLPK, one per region, built on the first touching candidate;
    // row 0 rewritten per candidate j), variables (x, t):
    //   maximise t  subject to  â_j . x = -ĉ_j                    (row 0),
    //                           â_i . x - t >= -ĉ_i  (i outside j's group, by row
    //                                                 generation; the group's rows are freed),
    //                           t <= 1,  x free.
    // t* > 0: a point on j's hyperplane with every other constraint > 0, a facet.
    // t* <= 0: the mixed system has no solution; the active rows and row 0
    // carry the Motzkin multipliers (row 0's free in sign).
    hyperplane_.emplace(rows_, 1, true, true);
    hyperplane_->lp().set_column_upper(n, 1.0);
    hyperplane_->lp().set_objective(n, 1.0);
    for (std::size_t i : screen_.constraints()) hyperplane_->add(i);
  }

  template <class IsMember>
  std::optional<FacetVerdict> classify_on_hyperplane(const std::vector<std::size_t>& group,
                                                     const IsMember& is_member) {
    const std::size_t j = group[0];
    if (!hyperplane_) build_hyperplane_lp();
    GlpkLP& lp = hyperplane_->lp();
    lp.set_row(0, rows_.normal(j), cell_.dim);
    lp.set_row_fixed(0, -rows_.offsets[j]);
    for (std::size_t member : group)
      if (hyperplane_->contains(member)) lp.set_row_free(hyperplane_->lp_row(member));
    std::optional<FacetVerdict> verdict;
    if (hyperplane_->solve(is_member) == DoubleStatus::optimal) verdict = read_hyperplane_lp(group, is_member);
    for (std::size_t member : group)
      if (hyperplane_->contains(member)) lp.set_row_lower(hyperplane_->lp_row(member), -rows_.offsets[member]);
    return verdict;
  }

  template <class IsMember>
  std::optional<FacetVerdict> read_hyperplane_lp(const std::vector<std::size_t>& group,
                                                 const IsMember& is_member) const {
    const std::size_t n = cell_.dim;
    const GlpkLP& lp = hyperplane_->lp();
    const double radius = lp.objective();
    if (radius > positive_slack_) {
      std::vector<double> point(n);
      for (std::size_t k = 0; k < n; ++k) point[k] = lp.column_value(k);
      const Constraint& rep = cell_.constraints[group[0]];
      const std::size_t solved = largest_entry(rep.normal);
      // Rounding the other coordinates by < t/(16n) and solving for the
      // largest-|a_jk| one moves the point by < t/16 in max-norm.
      const double scale = 1.0 / static_cast<double>(n);
      for (double shrink : {scale / 16.0, scale / 1024.0, 0.0}) {
        RationalVector candidate = project_onto(rep, round_point(point, radius * shrink), solved);
        if (is_facet_point(cell_, group, candidate)) return FacetVerdict{FacetPoint{std::move(candidate)}};
      }
      return std::nullopt;
    }
    std::vector<std::size_t> support = hyperplane_->active_constraints();
    support.erase(std::remove_if(support.begin(), support.end(), is_member), support.end());
    if (std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell_, group[0], support))
      return FacetVerdict{std::move(*certificate)};
    return std::nullopt;
  }

  const Polyhedron& cell_;
  const DoubleRows& rows_;
  double positive_slack_;
  WorkingRows screen_;
  std::optional<WorkingRows> hyperplane_;
};

// ---- the 2-D path: the cell clipped as a polygon in double -----------------------

// What the polygon proposes for one constraint: a facet (the midpoint of its
// edge) or not (the two constraints whose lines meet at the polygon's vertex
// nearest its line). Proposals only; each is certified exactly or dropped.
struct PolygonProposal {
  enum class Kind { none, facet, non_facet } kind = Kind::none;
  std::array<double, 2> point{};            // facet: the edge's midpoint
  double margin = 0.0;                      // facet: the other constraints' least double slack there
  std::array<std::size_t, 2> support{};     // non-facet: the lines through the nearest vertex
};

// Clips a large box around the interior point by every constraint (rows scaled
// to 1-norm 1, so a slack is within a factor 2 of the max-norm distance to the
// line) and reads off, per constraint, an edge or the nearest vertex. A
// constraint whose only edge is shorter than kShortEdge, or lies beyond the box,
// gets a proposal the exact step rejects, and the general filter decides it.
std::vector<PolygonProposal> polygon_proposals(const DoubleRows& rows, const RationalVector& interior) {
  constexpr std::size_t box = static_cast<std::size_t>(-1);  // label of the box's own edges
  constexpr double kShortEdge = 1e-9;
  const std::size_t m = rows.count;
  const std::array<double, 2> centre{interior[0].get_d(), interior[1].get_d()};
  // The slack of constraint i at centre + u, for u relative to the interior point.
  std::vector<double> slack_at_centre(m);
  double radius = 1.0;
  for (std::size_t i = 0; i < m; ++i) {
    slack_at_centre[i] = rows.offsets[i] + rows.normal(i)[0] * centre[0] + rows.normal(i)[1] * centre[1];
    radius = std::max(radius, 4.0 * slack_at_centre[i]);
  }
  radius = std::min(radius * 64.0, 1e12);
  const auto slack = [&](std::size_t i, const std::array<double, 2>& u) {
    return slack_at_centre[i] + rows.normal(i)[0] * u[0] + rows.normal(i)[1] * u[1];
  };
  struct Corner {
    std::array<double, 2> u;
    std::size_t edge;  // the constraint whose line the edge from this corner to the next lies on
  };
  std::vector<Corner> polygon{{{-radius, -radius}, box}, {{radius, -radius}, box},
                              {{radius, radius}, box},   {{-radius, radius}, box}};
  std::vector<Corner> clipped;
  std::vector<double> values;
  for (std::size_t i = 0; i < m && !polygon.empty(); ++i) {
    values.resize(polygon.size());
    for (std::size_t k = 0; k < polygon.size(); ++k) values[k] = slack(i, polygon[k].u);
    clipped.clear();
    for (std::size_t k = 0; k < polygon.size(); ++k) {
      const std::size_t next = (k + 1) % polygon.size();
      const double a = values[k];
      const double b = values[next];
      const auto crossing = [&] {
        const double t = a / (a - b);
        return std::array<double, 2>{polygon[k].u[0] + t * (polygon[next].u[0] - polygon[k].u[0]),
                                     polygon[k].u[1] + t * (polygon[next].u[1] - polygon[k].u[1])};
      };
      if (a >= 0) {
        clipped.push_back(polygon[k]);
        if (b < 0) clipped.push_back(Corner{crossing(), i});  // leaves: the edge runs along line i
      } else if (b >= 0) {
        clipped.push_back(Corner{crossing(), polygon[k].edge});  // re-enters on the old edge
      }
    }
    polygon.swap(clipped);
  }
  std::vector<PolygonProposal> proposals(m);
  if (polygon.size() < 3) return proposals;
  for (std::size_t k = 0; k < polygon.size(); ++k) {
    const Corner& from = polygon[k];
    const Corner& to = polygon[(k + 1) % polygon.size()];
    if (from.edge == box) continue;
    const double length = std::max(std::fabs(to.u[0] - from.u[0]), std::fabs(to.u[1] - from.u[1]));
    if (!(length > kShortEdge)) continue;
    PolygonProposal& proposal = proposals[from.edge];
    const std::array<double, 2> middle{(from.u[0] + to.u[0]) / 2, (from.u[1] + to.u[1]) / 2};
    double margin = std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < m; ++i)
      if (i != from.edge) margin = std::min(margin, slack(i, middle));
    if (proposal.kind == PolygonProposal::Kind::facet && proposal.margin >= margin) continue;
    proposal.kind = PolygonProposal::Kind::facet;
    proposal.point = {centre[0] + middle[0], centre[1] + middle[1]};
    proposal.margin = margin;
  }
  for (std::size_t j = 0; j < m; ++j) {
    if (proposals[j].kind == PolygonProposal::Kind::facet) continue;
    std::size_t nearest = 0;
    double least = std::numeric_limits<double>::infinity();
    for (std::size_t k = 0; k < polygon.size(); ++k) {
      const double value = slack(j, polygon[k].u);
      if (value < least) {
        least = value;
        nearest = k;
      }
    }
    const std::size_t before = polygon[(nearest + polygon.size() - 1) % polygon.size()].edge;
    const std::size_t after = polygon[nearest].edge;
    if (before == box || after == box || before == after || before == j || after == j) continue;
    proposals[j].kind = PolygonProposal::Kind::non_facet;
    proposals[j].support = {std::min(before, after), std::max(before, after)};
  }
  return proposals;
}

// The exact certificate of one polygon proposal, or nullopt when it fails.
// Without images (exact only) every sign is computed exactly. A non-facet
// proved with keep_certificate false carries an empty multiplier vector.
std::optional<FacetVerdict> certify_polygon_proposal(const Polyhedron& cell, const CellImages* images,
                                                     std::size_t j, const PolygonProposal& proposal,
                                                     bool keep_certificate) {
  if (proposal.kind == PolygonProposal::Kind::non_facet) {
    const std::size_t s1 = proposal.support[0];
    const std::size_t s2 = proposal.support[1];
    if (images && !keep_certificate) {
      if (const std::optional<bool> redundant = is_redundant_in_plane_filtered(*images, j, s1, s2)) {
        if (!*redundant) return std::nullopt;
        return FacetVerdict{NonFacetCertificate{Rational(-1), {}}};
      }
    }
    if (std::optional<NonFacetCertificate> certificate = redundancy_in_plane(cell, j, s1, s2)) {
      if (!keep_certificate) certificate->multipliers.clear();
      return FacetVerdict{std::move(*certificate)};
    }
    return std::nullopt;
  }
  if (proposal.kind != PolygonProposal::Kind::facet || !(proposal.margin > 0)) return std::nullopt;
  // Rounding by r in max-norm and solving line j for its largest-|a_jk|
  // coordinate (|â_jk| >= 1/2) moves the point by <= 2r; the other scaled
  // slacks stay above margin - 4r.
  if (!std::isfinite(proposal.point[0]) || !std::isfinite(proposal.point[1])) return std::nullopt;
  // A lone constraint has no other slack to keep: any margin will do.
  const double margin = std::min(proposal.margin, 1.0);
  const Constraint& rep = cell.constraints[j];
  const std::size_t solved = largest_entry(rep.normal);
  const std::vector<double> point{proposal.point[0], proposal.point[1]};
  for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
    RationalVector candidate = project_onto(rep, round_point(point, margin * shrink), solved);
    const bool is_facet =
        images ? is_facet_point_filtered(cell, *images, j, candidate) : is_facet_point(cell, {j}, candidate);
    if (is_facet) return FacetVerdict{FacetPoint{std::move(candidate)}};
  }
  return std::nullopt;
}

// Boundedness of a plane cell without an LP. The closure is bounded iff its
// normals leave no angular gap of pi or more. Proposal (double): sort the
// normals by angle; a gap >= pi before normal b proposes the recession
// direction d = (-b_1, b_0) (b turned counter-clockwise by a right angle:
// a_i . d >= 0 for every normal within pi counter-clockwise of b); otherwise three normals around the circle, each within pi of the next,
// propose Stiemke multipliers y = (det(a2,a3), det(a3,a1), det(a1,a2)). Both
// are checked exactly (filtered signs, exact where undecided); nullopt when
// the proposal fails (the LP path decides then).
std::optional<BoundednessVerdict> decide_boundedness_in_plane(const Polyhedron& cell) {
  const std::size_t m = cell.constraints.size();
  if (m == 0) return std::nullopt;
  const CellImages images(cell);
  std::vector<std::pair<double, std::size_t>> angles;
  angles.reserve(m);
  for (std::size_t i = 0; i < m; ++i) {
    const double* a = images.row(i);
    const double angle = std::atan2(a[1], a[0]);
    if (!std::isfinite(angle)) return std::nullopt;
    angles.emplace_back(angle, i);
  }
  const auto proposal = detail::propose_plane_boundedness(std::move(angles));
  if (!proposal) return std::nullopt;
  if (proposal->after_gap) {
    // All normals lie within pi counter-clockwise of the normal b after the
    // gap, so d = b turned counter-clockwise by a right angle has b_i . d >= 0.
    const Constraint& after_gap = cell.constraints[*proposal->after_gap];
    RecessionDirection direction{RationalVector{-after_gap.normal[1], after_gap.normal[0]}};
    const double d[2] = {filter_image(direction.direction[0]), filter_image(direction.direction[1])};
    for (std::size_t i = 0; i < m; ++i) {
      std::optional<int> sign = filtered_affine_sign(images.row(i), d, 2, 0.0);
      if (!sign) sign = sgn(cell.constraints[i].normal[0] * direction.direction[0] +
                            cell.constraints[i].normal[1] * direction.direction[1]);
      if (*sign < 0) return std::nullopt;
    }
    return BoundednessVerdict{std::move(direction)};
  }
  const std::array<std::size_t, 3>& rows = proposal->around;
  const auto det = [&](std::size_t p, std::size_t q) {
    const RationalVector& a = cell.constraints[p].normal;
    const RationalVector& b = cell.constraints[q].normal;
    return Rational(a[0] * b[1] - a[1] * b[0]);
  };
  // y_1 a_1 + y_2 a_2 + y_3 a_3 = 0 for y = (det(a2,a3), det(a3,a1), det(a1,a2)) (Cramer).
  BoundednessCertificate certificate{RationalVector(m)};
  std::array<Rational, 3> y{det(rows[1], rows[2]), det(rows[2], rows[0]), det(rows[0], rows[1])};
  for (std::size_t k = 0; k < 3; ++k) {
    if (sgn(y[k]) <= 0) return std::nullopt;  // counter-clockwise order: all > 0
    certificate.multipliers[rows[k]] = std::move(y[k]);
  }
  return BoundednessVerdict{std::move(certificate)};
}

// Recession direction from LP3's optimal basis: the active rows (a_i . d = 0)
// and the columns at a bound (d_k = +-1) determine d; solve exactly.
std::optional<RecessionDirection> direction_from_basis(const Polyhedron& cell, const WorkingRows& working) {
  const std::size_t n = cell.dim;
  RationalMatrix system(n, n);
  RationalVector rhs(n, Rational(0));
  std::size_t equations = 0;
  for (std::size_t i : working.active_constraints()) {
    if (equations == n) break;
    system.set_row(equations++, cell.constraints[i].normal);
  }
  for (std::size_t k = 0; k < n && equations < n; ++k) {
    const BasisStatus status = working.lp().column_status(k);
    if (status != BasisStatus::at_lower && status != BasisStatus::at_upper) continue;
    system(equations, k) = 1;
    rhs[equations++] = status == BasisStatus::at_upper ? 1 : -1;
  }
  if (equations != n) return std::nullopt;
  std::optional<RationalVector> d = detail::solve_unique(std::move(system), std::move(rhs));
  if (!d) return std::nullopt;
  RecessionDirection direction{std::move(*d)};
  if (!check_recession_direction(cell, direction)) return std::nullopt;
  return direction;
}

// Stiemke multipliers from LP3's dual at d = 0: sum_i (1 + y_i) â_i = 0, y >= 0
// on the n active rows S. Exactly: with exact weights u_i ~ the scaling of row
// i, solve sum_{s in S} z_s a_s = -sum_i u_i a_i (a_S square, nonsingular),
// then w = u + z must be > 0 everywhere; rank(a_S) = n comes with the solve.
std::optional<BoundednessCertificate> stiemke_from_basis(const Polyhedron& cell, const DoubleRows& rows,
                                                         const WorkingRows& working) {
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  const std::vector<std::size_t> support = working.active_constraints();
  if (support.size() != n) return std::nullopt;
  RationalVector weights(m);
  for (std::size_t i = 0; i < m; ++i) weights[i] = rows.exact_weight(i);
  RationalVector rhs = detail::weighted_normal_sum(cell, weights);
  for (Rational& value : rhs) value = -value;
  RationalMatrix system(n, n);
  for (std::size_t s = 0; s < n; ++s)
    for (std::size_t k = 0; k < n; ++k) system(k, s) = cell.constraints[support[s]].normal[k];
  const std::optional<RationalVector> z = detail::solve_unique(std::move(system), std::move(rhs));
  if (!z) return std::nullopt;
  for (std::size_t s = 0; s < n; ++s) {
    weights[support[s]] += (*z)[s];
    if (sgn(weights[support[s]]) <= 0) return std::nullopt;
  }
  return BoundednessCertificate{std::move(weights)};
}

// A lineality direction proposed in double (row space of rank < n by Gram-Schmidt),
// made exact as a null vector of the independent rows and checked on all rows.
std::optional<std::optional<RecessionDirection>> lineality_filtered(const Polyhedron& cell, const DoubleRows& rows) {
  const std::size_t n = cell.dim;
  std::vector<std::vector<double>> basis;
  std::vector<std::size_t> independent;
  for (std::size_t i = 0; i < cell.constraints.size() && basis.size() < n; ++i) {
    std::vector<double> residual(rows.normal(i), rows.normal(i) + n);
    for (int pass = 0; pass < 2; ++pass)
      for (const std::vector<double>& b : basis) {
        double dot = 0.0;
        for (std::size_t k = 0; k < n; ++k) dot += residual[k] * b[k];
        for (std::size_t k = 0; k < n; ++k) residual[k] -= dot * b[k];
      }
    double norm = 0.0;
    for (double value : residual) norm += value * value;
    norm = std::sqrt(norm);
    if (norm < 1e-9) continue;
    for (double& value : residual) value /= norm;
    basis.push_back(std::move(residual));
    independent.push_back(i);
  }
  if (independent.size() == n) return std::optional<RecessionDirection>();  // full rank: no lineality
  RationalMatrix system(independent.size(), n);
  for (std::size_t s = 0; s < independent.size(); ++s) system.set_row(s, cell.constraints[independent[s]].normal);
  std::optional<RationalVector> d = detail::null_vector(std::move(system));
  if (!d) return std::nullopt;
  RecessionDirection direction{std::move(*d)};
  if (!check_recession_direction(cell, direction)) return std::nullopt;  // wrong proposal
  return std::optional<RecessionDirection>(std::move(direction));
}

std::optional<BoundednessVerdict> decide_boundedness_filtered(const Polyhedron& cell, const DoubleRows& rows,
                                                              double positive_slack) {
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  const std::optional<std::optional<RecessionDirection>> lineality = lineality_filtered(cell, rows);
  if (!lineality) return std::nullopt;
  if (*lineality) return BoundednessVerdict{**lineality};
  // LP3 (GLPK), variables d:
  //   maximise g . d, g = sum_i â_i,  subject to  â_i . d >= 0 (every i, by row
  //   generation, starting from the rows most opposed to g),  -1 <= d_k <= 1.
  // With rank n, a positive optimum gives a recession direction; a zero
  // optimum at d = 0 has the dual sum_i (1 + y_i) â_i = 0, y >= 0: Stiemke
  // multipliers all >= 1.
  std::vector<double> objective(n, 0.0);
  for (std::size_t i = 0; i < m; ++i)
    for (std::size_t k = 0; k < n; ++k) objective[k] += rows.normal(i)[k];
  WorkingRows working(rows, 0, false, true, true);
  GlpkLP& lp = working.lp();
  for (std::size_t k = 0; k < n; ++k) {
    lp.set_column_bounds(k, -1.0, 1.0);
    lp.set_objective(k, objective[k]);
  }
  // Rows with the smallest slack at the point g: those most opposed to g.
  working.add_nearest(objective, 2 * n + 2);
  if (working.solve([](std::size_t) { return false; }) != DoubleStatus::optimal) return std::nullopt;
  if (lp.objective() > positive_slack) {
    if (std::optional<RecessionDirection> direction = direction_from_basis(cell, working)) return *direction;
    return std::nullopt;
  }
  if (std::optional<BoundednessCertificate> certificate = stiemke_from_basis(cell, rows, working))
    return std::move(*certificate);
  return std::nullopt;
}

}  // namespace

Oracle::Oracle(FilterTolerances tolerances) : state_(std::make_unique<State>()) {
  state_->tolerances = tolerances;
}
Oracle::~Oracle() = default;
Oracle::Oracle(Oracle&&) noexcept = default;
Oracle& Oracle::operator=(Oracle&&) noexcept = default;

const QueryCounts& Oracle::counts() const { return state_->counts; }

namespace {

// One representative per class of positive multiples. GLPK's factorisation
// can fail an internal assertion (and abort the process) on a basis with
// repeated rows, so the double filters only ever see representatives, and
// certificates are mapped back (duplicates get multiplier 0).
// Without duplicates (the usual case) nothing is copied: cell() is the
// caller's polyhedron, which must outlive this value.
struct Representatives {
  const Polyhedron* original = nullptr;
  Polyhedron distinct;  // the representatives, built only when there are duplicates
  std::vector<std::vector<std::size_t>> classes;  // original indices, ascending; front is the representative
  bool has_duplicates = false;
  DoubleRows rows;  // the double image of cell()
  const Polyhedron& cell() const { return has_duplicates ? distinct : *original; }
};

Representatives reduce_to_representatives(const Polyhedron& cell) {
  Representatives reduced;
  reduced.original = &cell;
  reduced.rows = detail::to_double_rows(cell);
  if (cell.constraints.empty()) return reduced;
  reduced.classes = group_positive_multiples(cell, reduced.rows);
  reduced.has_duplicates = reduced.classes.size() < cell.constraints.size();
  if (reduced.has_duplicates) {
    reduced.distinct.dim = cell.dim;
    for (const auto& members : reduced.classes) reduced.distinct.constraints.push_back(cell.constraints[members.front()]);
    reduced.rows = detail::to_double_rows(reduced.distinct);
  }
  return reduced;
}

RationalVector expand_multipliers(const RationalVector& reduced, const Representatives& classes, std::size_t size) {
  RationalVector out(size, Rational(0));
  for (std::size_t r = 0; r < reduced.size() && r < classes.classes.size(); ++r)
    out[classes.classes[r].front()] = reduced[r];
  return out;
}

CellVerdict expand(CellVerdict verdict, const Representatives& classes, std::size_t size) {
  if (auto* empty = std::get_if<EmptinessCertificate>(&verdict))
    empty->multipliers = expand_multipliers(empty->multipliers, classes, size);
  return verdict;
}

}  // namespace

CellVerdict Oracle::decide_open_cell(const Polyhedron& cell) {
  return find_centre(cell, Rational(1));
}

CellVerdict Oracle::find_centre(const Polyhedron& cell, const Rational& radius_cap) {
  detail::require_well_formed(cell, "find_centre");
  if (sgn(radius_cap) <= 0) throw usage_error("find_centre: radius_cap must be > 0");
  const Representatives reduced = reduce_to_representatives(cell);
  CellVerdict verdict =
      decide_open_cell_counted(reduced.cell(), reduced.rows, radius_cap, state_->tolerances, state_->counts);
  if (!reduced.has_duplicates) return verdict;
  return expand(std::move(verdict), reduced, cell.constraints.size());
}

FacetClassification Oracle::classify_facets(const Polyhedron& cell, const InteriorPoint& interior,
                                            bool keep_non_facet_certificates) {
  detail::require_well_formed(cell, "classify_facets");
  if (interior.point.size() != cell.dim)
    throw usage_error("classify_facets: the given point is not strictly inside the cell");
  FacetClassification classification;
  if (cell.constraints.empty()) return classification;
  // The filter and the exact path work on one representative per class of
  // positive multiples (see reduce_to_representatives); each verdict is then
  // stated for the whole class.
  const Representatives representatives = reduce_to_representatives(cell);
  const Polyhedron& distinct = representatives.cell();
  const DoubleRows& rows = representatives.rows;
  const bool use_filter = rows.is_finite && !state_->tolerances.exact_only;
  // The precondition, checked exactly (filtered signs unless exact only).
  std::optional<CellImages> images;
  if (use_filter) images.emplace(distinct);
  if (!(images ? is_interior_filtered(distinct, *images, interior.point) : check_interior_point(cell, interior)))
    throw usage_error("classify_facets: the given point is not strictly inside the cell");
  // In the plane the clipped polygon proposes every verdict at once; the LP
  // filter (built only when needed) takes what the polygon's proposals leave.
  std::vector<PolygonProposal> proposals;
  if (use_filter && cell.dim == 2) proposals = polygon_proposals(rows, interior.point);
  std::optional<FacetFilter> filter;
  const Representatives& reduced = representatives;
  classification.groups.reserve(reduced.classes.size());
  for (std::size_t r = 0; r < reduced.classes.size(); ++r) {
    poll_stop();
    ++state_->counts.lp_queries;
    const std::vector<std::size_t> single{r};
    std::optional<FacetVerdict> verdict;
    if (!proposals.empty())
      verdict = certify_polygon_proposal(distinct, images ? &*images : nullptr, r, proposals[r],
                                         keep_non_facet_certificates);
    if (!verdict && use_filter) {
      if (!filter) filter.emplace(distinct, rows, interior.point, state_->tolerances.positive_slack);
      verdict = filter->classify(single);
    }
    if (verdict) {
      ++state_->counts.filter_settled;
    } else {
      ++state_->counts.exact_fallbacks;
      verdict = classify_group_exactly(distinct, single);
    }
    if (auto* proof = std::get_if<NonFacetCertificate>(&*verdict)) {
      if (!keep_non_facet_certificates) {
        proof->multipliers.clear();
      } else if (reduced.has_duplicates) {
        proof->multipliers = expand_multipliers(proof->multipliers, reduced, cell.constraints.size());
      }
    }
    classification.groups.push_back(FacetGroup{reduced.classes[r], std::move(*verdict)});
  }
  return classification;
}

BoundednessVerdict Oracle::decide_boundedness(const Polyhedron& cell) {
  detail::require_well_formed(cell, "decide_boundedness");
  if (cell.dim == 2 && !state_->tolerances.exact_only) {
    // No LP in the plane: the normals' angles propose, filtered signs prove.
    if (std::optional<BoundednessVerdict> verdict = decide_boundedness_in_plane(cell)) {
      ++state_->counts.lp_queries;
      ++state_->counts.filter_settled;
      return std::move(*verdict);
    }
  }
  const Representatives reduced = reduce_to_representatives(cell);
  if (!reduced.has_duplicates) return decide_boundedness_of_distinct_rows(cell, reduced.rows);
  BoundednessVerdict verdict = decide_boundedness_of_distinct_rows(reduced.cell(), reduced.rows);
  if (auto* bounded = std::get_if<BoundednessCertificate>(&verdict))
    bounded->multipliers = expand_multipliers(bounded->multipliers, reduced, cell.constraints.size());
  return verdict;
}

BoundednessVerdict Oracle::decide_boundedness_of_distinct_rows(const Polyhedron& cell, const DoubleRows& rows) {
  ++state_->counts.lp_queries;
  if (cell.dim == 0) {
    ++state_->counts.filter_settled;
    return BoundednessCertificate{RationalVector(cell.constraints.size(), Rational(0))};
  }
  if (cell.constraints.empty()) {
    ++state_->counts.filter_settled;
    RationalVector direction(cell.dim, Rational(0));
    direction[0] = 1;
    return RecessionDirection{std::move(direction)};
  }
  if (!state_->tolerances.exact_only) {
    if (std::optional<BoundednessVerdict> verdict =
            decide_boundedness_filtered(cell, rows, state_->tolerances.positive_slack)) {
      ++state_->counts.filter_settled;
      return *verdict;
    }
  }
  ++state_->counts.exact_fallbacks;
  return decide_boundedness_exactly(cell);
}

}  // namespace pleat::lp
