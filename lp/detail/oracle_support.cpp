// Shared parts of the Oracle's queries (lp/detail/oracle_parts.hpp).
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
#include "lp/detail/integer_rows.hpp"
#include "lp/detail/working_rows.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <optional>
#include <stdexcept>
#include <string>

namespace pleat::lp::detail {

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
      rounded[k] = rational_from_double(point[k]);
      continue;
    }
    rounded[k] = detail::simplest_between(rational_from_double(point[k] - radius), rational_from_double(point[k] + radius));
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

namespace {

// The null space of sum_c x_c a_(indices[c]) = 0 over the caller's rows, by
// minors of their integer rows (integer_rows.hpp): in the plane and in space
// these small systems cost a few integer products where Gauss-Jordan over Q
// reduced a fraction at every step. When it is a line: its spanning vector as
// integer multipliers x on the caller's rows (integer row c is scale_c times the
// caller's row), and sum_c x_c c_c, so that signs are decided before any
// fraction is formed. undecided: more than a line, or too large; the caller
// eliminates over Q instead (the same answer, slower).
struct CallerNullSpace {
  SmallNullSpace::Kind kind = SmallNullSpace::Kind::undecided;
  std::vector<Integer> multipliers;
  Integer offset_sum;
};

CallerNullSpace null_space_on_rows(const Polyhedron& cell, const std::vector<std::size_t>& indices,
                                   LazyIntegerRows* known_rows) {
  if (cell.dim > 3 || indices.size() > cell.dim + 1) return {};
  std::vector<IntegerRow> own;
  std::vector<const IntegerRow*> rows;
  if (known_rows) {
    for (std::size_t i : indices) rows.push_back(&known_rows->get()[i]);
  } else {
    own.reserve(indices.size());
    for (std::size_t i : indices) own.push_back(integer_row(cell.constraints[i]));
    for (const IntegerRow& row : own) rows.push_back(&row);
  }
  std::vector<const std::vector<Integer>*> columns;
  for (const IntegerRow* row : rows) columns.push_back(&row->normal);
  SmallNullSpace space = small_null_space(columns);
  if (space.kind != SmallNullSpace::Kind::line) return CallerNullSpace{space.kind, {}, 0};
  CallerNullSpace result{space.kind, std::move(space.vector), 0};
  for (std::size_t c = 0; c < rows.size(); ++c) {
    result.offset_sum += result.multipliers[c] * rows[c]->offset;  // x_c c_c = v_c (scale_c c_c)
    result.multipliers[c] *= rows[c]->scale;
  }
  return result;
}

Rational quotient(const Integer& numerator, const Integer& denominator) {
  Rational value(numerator, denominator);
  value.canonicalize();
  return value;
}

// x_c / divisor >= 0 for every c in [first, end): signs only.
bool all_non_negative_over(const std::vector<Integer>& x, std::size_t first, std::size_t end, int divisor_sign) {
  for (std::size_t c = first; c < end; ++c)
    if (sgn(x[c]) * divisor_sign < 0) return false;
  return true;
}

Integer sum_over(const std::vector<Integer>& x, std::size_t first, std::size_t end) {
  Integer total = 0;
  for (std::size_t c = first; c < end; ++c) total += x[c];
  return total;
}

}  // namespace

// Exact Gordan/Motzkin multipliers on a proposed support S: solve
//   sum_{s in S} y_s a_s = 0,  sum_{s in S} y_s = 1
// exactly, then require y >= 0 and sum y_s c_s <= 0.
std::optional<EmptinessCertificate> emptiness_on_support(const Polyhedron& cell,
                                                         const std::vector<std::size_t>& support) {
  if (support.empty()) return std::nullopt;
  const CallerNullSpace space = null_space_on_rows(cell, support, nullptr);
  if (space.kind == SmallNullSpace::Kind::none) return std::nullopt;
  if (space.kind == SmallNullSpace::Kind::line) {
    // y = x / T with T = sum_s x_s: the line's one point with sum 1.
    const Integer total = sum_over(space.multipliers, 0, support.size());
    const int sign = sgn(total);
    if (sign == 0 || !all_non_negative_over(space.multipliers, 0, support.size(), sign) ||
        sgn(space.offset_sum) * sign > 0)
      return std::nullopt;
    EmptinessCertificate certificate{RationalVector(cell.constraints.size())};
    for (std::size_t s = 0; s < support.size(); ++s)
      certificate.multipliers[support[s]] = quotient(space.multipliers[s], total);
    return certificate;
  }
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
                                                        const std::vector<std::size_t>& support,
                                                        LazyIntegerRows* known_rows) {
  if (support.empty()) return std::nullopt;
  const Constraint& rep = cell.constraints[representative];
  std::vector<std::size_t> indices{representative};
  indices.insert(indices.end(), support.begin(), support.end());
  const CallerNullSpace space = null_space_on_rows(cell, indices, known_rows);
  if (space.kind == SmallNullSpace::Kind::none) return std::nullopt;
  if (space.kind == SmallNullSpace::Kind::line) {
    // (mu, y) = x / T with T = sum over S of x_s.
    const std::size_t end = indices.size();
    const Integer total = sum_over(space.multipliers, 1, end);
    const int sign = sgn(total);
    if (sign == 0 || !all_non_negative_over(space.multipliers, 1, end, sign) || sgn(space.offset_sum) * sign > 0)
      return std::nullopt;
    NonFacetCertificate certificate{quotient(space.multipliers[0], total), RationalVector(cell.constraints.size())};
    for (std::size_t s = 0; s < support.size(); ++s)
      certificate.multipliers[support[s]] = quotient(space.multipliers[s + 1], total);
    return certificate;
  }
  RationalMatrix system(cell.dim + 1, support.size() + 1);
  RationalVector rhs(cell.dim + 1, Rational(0));
  for (std::size_t k = 0; k < cell.dim; ++k) system(k, 0) = rep.normal[k];
  for (std::size_t s = 0; s < support.size(); ++s) {
    for (std::size_t k = 0; k < cell.dim; ++k) system(k, s + 1) = cell.constraints[support[s]].normal[k];
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
                                                         const std::vector<std::size_t>& support,
                                                         LazyIntegerRows* known_rows) {
  if (support.empty()) return std::nullopt;
  const Constraint& rep = cell.constraints[representative];
  std::vector<std::size_t> indices(support);
  indices.push_back(representative);
  const CallerNullSpace space = null_space_on_rows(cell, indices, known_rows);
  if (space.kind == SmallNullSpace::Kind::none) return std::nullopt;
  if (space.kind == SmallNullSpace::Kind::line) {
    // sum_s x_s a_s + x_j a_j = 0, so a_j = sum_s (x_s / -x_j) a_s, and
    // sum_s y_s c_s - c_j = (sum_c x_c c_c) / -x_j.
    const Integer divisor = -space.multipliers.back();
    const int sign = sgn(divisor);
    if (sign == 0 || !all_non_negative_over(space.multipliers, 0, support.size(), sign) ||
        sgn(space.offset_sum) * sign > 0)
      return std::nullopt;
    NonFacetCertificate certificate{Rational(-1), RationalVector(cell.constraints.size())};
    for (std::size_t s = 0; s < support.size(); ++s)
      certificate.multipliers[support[s]] = quotient(space.multipliers[s], divisor);
    return certificate;
  }
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

// Groups of positive multiples, by representative index; each group ascending.
std::vector<std::vector<std::size_t>> group_positive_multiples(const Polyhedron& cell, const DoubleRows& rows) {
  const std::size_t m = cell.constraints.size();
  const std::size_t n = cell.dim;
  // Screen in double: positive multiples have equal scaled normals (up to
  // rounding), so sort by the first scaled coordinate and compare neighbours;
  // the exact test decides.
  constexpr double screen = FilterTolerances::oracle_multiple_screen;
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

}  // namespace pleat::lp::detail
