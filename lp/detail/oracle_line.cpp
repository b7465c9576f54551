// The exact facet question of a plane cell on the constraint's own line: no LP.
//
// In the plane, "is a_j . x + c_j = 0 a facet" asks whether an open interval of a
// line is non-empty. Parametrised by one coordinate, every other constraint is an
// affine function alpha_i s + beta_i of that coordinate s, so the answer is an exact
// comparison of at most m fractions, and the Motzkin certificate of a non-facet
// has support one constraint (a parallel one, non-positive on the line) or two
// (the two nearest bounds crossing). On thin cells the double filter cannot decide
// (GLPK's tolerances are wider than the cell) and cddlib's exact simplex took about
// 0.6 ms per such query; this takes a few microseconds. Every verdict is checked
// exactly here; an unexpected failure returns nullopt, and the caller's cddlib path
// decides.
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

}  // namespace

std::optional<FacetVerdict> classify_group_on_line(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  if (cell.dim != 2 || group.empty()) return std::nullopt;
  const Constraint& rep = cell.constraints[group[0]];
  // x[solved] = -(c_j + a_jf s) / a_js with s = x[free]; a_js != 0 (largest entry).
  const std::size_t solved = largest_entry(rep.normal);
  const std::size_t free = 1 - solved;
  if (sgn(rep.normal[solved]) == 0) return std::nullopt;
  const Rational slope = rep.normal[free] / rep.normal[solved];
  const Rational intercept = rep.offset / rep.normal[solved];
  std::vector<bool> is_member(cell.constraints.size(), false);
  for (std::size_t member : group) is_member[member] = true;
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
      // Parallel and non-positive on the whole line: support {i}.
      std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell, group[0], {i});
      if (certificate && check_non_facet(cell, group, *certificate)) return FacetVerdict{std::move(*certificate)};
      return std::nullopt;
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
  if (low && high && *low >= *high) {
    // The two bounds cross: support {lower, upper}.
    std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell, group[0], {lower, upper});
    if (certificate && check_non_facet(cell, group, *certificate)) return FacetVerdict{std::move(*certificate)};
    return std::nullopt;
  }
  RationalVector point(2);
  point[free] = short_inside(low, high);
  point = project_onto(rep, std::move(point), solved);
  if (!is_facet_point(cell, group, point)) return std::nullopt;
  return FacetVerdict{FacetPoint{std::move(point)}};
}

}  // namespace pleat::lp::detail
