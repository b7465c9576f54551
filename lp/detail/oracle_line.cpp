// A plane cell's exact questions on its constraints' lines: no LP.
//
// In the plane, "is a_j . x + c_j = 0 a facet" asks whether an open interval of a
// line is non-empty. Parametrised by one coordinate, every other constraint is an
// affine function alpha_i s + beta_i of that coordinate s, so the answer is an exact
// comparison of at most m fractions, and the Motzkin certificate of a non-facet
// has support one constraint (a parallel one, non-positive on the line) or two
// (the two nearest bounds crossing). A non-empty open plane cell other than the
// plane has a facet, so "is the open cell empty" is the same question asked of
// each line in turn. On thin cells the double filter cannot decide (GLPK's
// tolerances are wider than the cell) and cddlib's exact simplex took about 0.6 ms
// per such query; these take a few microseconds. Every verdict is checked exactly
// here; an unexpected failure returns nullopt, and the caller's cddlib path decides.
#include "lp/checker.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/detail/oracle_parts.hpp"

#include <optional>
#include <vector>

namespace pleat::lp::detail {

namespace {

// s in the open interval (low, high) (either may be absent: unbounded), with a
// short representation: the simplest rational in its middle half.
Rational short_inside(const std::optional<Rational>& low, const std::optional<Rational>& high) {
  if (low && high) {
    const Rational quarter = (*high - *low) / 4;
    return simplest_between(*low + quarter, *high - quarter);
  }
  if (low) return simplest_between(*low + 1, *low + 2);
  if (high) return simplest_between(*high - 2, *high - 1);
  return Rational(0);
}

// What the other constraints leave of line j: a facet point (every constraint
// outside the group > 0 there), or the support of a Motzkin certificate.
struct LineInterval {
  std::optional<RationalVector> facet_point;
  std::vector<std::size_t> support;
};

// is_member[i]: constraint i is in line j's group (a positive multiple of j); a
// positive multiple left out of is_member is recognised on the way. Precondition:
// dim == 2 and a_j != 0.
LineInterval line_interval(const Polyhedron& cell, std::size_t j, const std::vector<bool>& is_member) {
  const Constraint& rep = cell.constraints[j];
  // x[solved] = -(c_j + a_jf s) / a_js with s = x[free]; a_js != 0 (largest entry).
  const std::size_t solved = largest_entry(rep.normal);
  const std::size_t free = 1 - solved;
  const Rational slope = rep.normal[free] / rep.normal[solved];
  const Rational intercept = rep.offset / rep.normal[solved];
  // The tightest bound from each side: s > low (from `lower`), s < high (from `upper`).
  std::optional<Rational> low, high;
  std::size_t lower = 0, upper = 0;
  Rational alpha, beta, bound;
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    if (is_member[i]) continue;
    const Constraint& constraint = cell.constraints[i];
    // a_i . x + c_i on the line, as alpha s + beta.
    alpha = constraint.normal[free] - constraint.normal[solved] * slope;
    beta = constraint.offset - constraint.normal[solved] * intercept;
    const int direction = sgn(alpha);
    if (direction == 0) {
      if (sgn(beta) > 0) continue;
      // Zero on the whole line and on the same side as j: a positive multiple of j.
      if (sgn(beta) == 0 && sgn(constraint.normal[solved]) == sgn(rep.normal[solved])) continue;
      return LineInterval{std::nullopt, {i}};  // parallel, non-positive on the whole line
    }
    bound = -beta / alpha;
    if (direction > 0 && (!low || bound > *low)) {
      low = bound;
      lower = i;
    } else if (direction < 0 && (!high || bound < *high)) {
      high = bound;
      upper = i;
    }
  }
  if (low && high && *low >= *high) return LineInterval{std::nullopt, {lower, upper}};
  RationalVector point(2);
  point[free] = short_inside(low, high);
  return LineInterval{project_onto(rep, std::move(point), solved), {}};
}

std::vector<bool> membership(std::size_t count, const std::vector<std::size_t>& group) {
  std::vector<bool> is_member(count, false);
  for (std::size_t member : group) is_member[member] = true;
  return is_member;
}

// From a facet point x0 of line j into the open cell: x0 + e a_j with e small
// enough that no constraint falling along a_j reaches zero, then rounded to short
// coordinates within half the smallest slack-to-norm ratio (which keeps every
// slack positive).
std::optional<RationalVector> step_inside(const Polyhedron& cell, std::size_t j, const RationalVector& on_line) {
  const RationalVector& a_j = cell.constraints[j].normal;
  Rational step = 1, along, slack_here;
  for (const Constraint& constraint : cell.constraints) {
    along = constraint.normal[0] * a_j[0] + constraint.normal[1] * a_j[1];
    if (sgn(along) >= 0) continue;
    slack_here = slack(constraint, on_line);
    if (sgn(slack_here) <= 0) return std::nullopt;
    const Rational limit = slack_here / (-2 * along);
    if (limit < step) step = limit;
  }
  RationalVector point{on_line[0] + step * a_j[0], on_line[1] + step * a_j[1]};
  std::optional<Rational> radius;
  for (const Constraint& constraint : cell.constraints) {
    const Rational ratio = slack(constraint, point) / one_norm(constraint.normal);
    if (sgn(ratio) <= 0) return std::nullopt;
    if (!radius || ratio < *radius) radius = ratio;
  }
  RationalVector shortened = round_point(point, *radius / 2);
  if (is_interior(cell, shortened)) return shortened;
  if (is_interior(cell, point)) return point;
  return std::nullopt;
}

}  // namespace

std::optional<FacetVerdict> classify_group_on_line(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  if (cell.dim != 2 || group.empty() || !is_well_formed(cell)) return std::nullopt;
  const LineInterval interval = line_interval(cell, group[0], membership(cell.constraints.size(), group));
  if (interval.facet_point) {
    if (!is_facet_point(cell, group, *interval.facet_point)) return std::nullopt;
    return FacetVerdict{FacetPoint{*interval.facet_point}};
  }
  std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell, group[0], interval.support);
  if (certificate && check_non_facet(cell, group, *certificate)) return FacetVerdict{std::move(*certificate)};
  return std::nullopt;
}

std::optional<CellVerdict> decide_open_cell_on_lines(const Polyhedron& cell) {
  if (cell.dim != 2 || cell.constraints.empty() || !is_well_formed(cell)) return std::nullopt;
  const std::size_t m = cell.constraints.size();
  std::vector<bool> is_member(m, false);
  for (std::size_t j = 0; j < m; ++j) {
    is_member[j] = true;
    LineInterval interval = line_interval(cell, j, is_member);
    is_member[j] = false;
    if (interval.facet_point) {
      if (std::optional<RationalVector> point = step_inside(cell, j, *interval.facet_point))
        return CellVerdict{InteriorPoint{std::move(*point)}};
      return std::nullopt;
    }
    // The line's support with the line itself is often a Gordan support (Helly: an
    // empty open plane cell has an empty sub-cell of at most three constraints).
    interval.support.push_back(j);
    if (std::optional<EmptinessCertificate> certificate = emptiness_on_support(cell, interval.support)) {
      if (!check_emptiness(cell, *certificate)) return std::nullopt;  // unexpected: cddlib decides
      return CellVerdict{std::move(*certificate)};
    }
  }
  // No line has a facet point, so the open cell is empty, but no line's support
  // carried the certificate: cddlib finds one.
  return std::nullopt;
}

namespace {

// Cell 3-D restricted to the plane of constraint j (the group's members left out),
// in the two coordinates other than the one solved for: each other constraint is
// alpha . s + beta with alpha in Q^2. One that is constant and non-positive on the
// plane is `violated` (a Motzkin support of one); constant positive ones are dropped.
struct PlaneRestriction {
  Polyhedron plane{2, {}};
  std::vector<std::size_t> origin;  // plane constraint -> the cell's index
  std::optional<std::size_t> violated;
  std::size_t solved = 0;
};

PlaneRestriction restrict_to_plane(const Polyhedron& cell, std::size_t j, const std::vector<bool>& is_member) {
  const Constraint& rep = cell.constraints[j];
  PlaneRestriction result;
  result.solved = largest_entry(rep.normal);
  std::size_t free[2], f = 0;
  for (std::size_t k = 0; k < 3; ++k)
    if (k != result.solved) free[f++] = k;
  // x[solved] = -(c_j + sum_f a_jf s_f) / a_js.
  const Rational& pivot = rep.normal[result.solved];
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    if (is_member[i]) continue;
    const Constraint& constraint = cell.constraints[i];
    const Rational ratio = constraint.normal[result.solved] / pivot;
    Constraint restricted;
    restricted.normal = {constraint.normal[free[0]] - ratio * rep.normal[free[0]],
                         constraint.normal[free[1]] - ratio * rep.normal[free[1]]};
    restricted.offset = constraint.offset - ratio * rep.offset;
    if (sgn(restricted.normal[0]) == 0 && sgn(restricted.normal[1]) == 0) {
      if (sgn(restricted.offset) > 0) continue;
      result.violated = i;
      return result;
    }
    result.plane.constraints.push_back(std::move(restricted));
    result.origin.push_back(i);
  }
  return result;
}

// The plane point s lifted onto constraint j's plane in the cell's coordinates.
RationalVector lift_from_plane(const Constraint& rep, std::size_t solved, const RationalVector& s) {
  RationalVector point(3);
  for (std::size_t k = 0, f = 0; k < 3; ++k)
    if (k != solved) point[k] = s[f++];
  return project_onto(rep, std::move(point), solved);
}

}  // namespace

std::optional<FacetVerdict> classify_group_on_plane(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  if (cell.dim != 3 || group.empty() || !is_well_formed(cell)) return std::nullopt;
  const Constraint& rep = cell.constraints[group[0]];
  const PlaneRestriction restriction = restrict_to_plane(cell, group[0], membership(cell.constraints.size(), group));
  std::vector<std::size_t> support;
  if (restriction.violated) {
    support.push_back(*restriction.violated);
  } else {
    std::optional<CellVerdict> on_plane;
    if (restriction.plane.constraints.empty())
      on_plane = CellVerdict{InteriorPoint{RationalVector(2, Rational(0))}};
    else
      on_plane = decide_open_cell_on_lines(restriction.plane);
    if (!on_plane) return std::nullopt;
    if (const auto* inside = std::get_if<InteriorPoint>(&*on_plane)) {
      RationalVector point = lift_from_plane(rep, restriction.solved, inside->point);
      if (!is_facet_point(cell, group, point)) return std::nullopt;
      return FacetVerdict{FacetPoint{std::move(point)}};
    }
    // A Gordan certificate on the plane: its support, with the line's own row
    // folded into the equality multiplier, is a Motzkin support in space.
    const RationalVector& y = std::get<EmptinessCertificate>(*on_plane).multipliers;
    for (std::size_t k = 0; k < y.size(); ++k)
      if (sgn(y[k]) > 0) support.push_back(restriction.origin[k]);
  }
  std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell, group[0], support);
  if (certificate && check_non_facet(cell, group, *certificate)) return FacetVerdict{std::move(*certificate)};
  return std::nullopt;
}

}  // namespace pleat::lp::detail
