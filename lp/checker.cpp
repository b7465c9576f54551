// The independent checker. Exact rational arithmetic only: this file and what
// it includes know nothing of GLPK or cddlib. Malformed certificates (wrong
// sizes, bad indices) are answered "false", never thrown.
#include "lp/checker.hpp"

#include "lp/detail/exact_linear.hpp"
#include "lp/detail/exact_tools.hpp"

namespace pleat::lp {
namespace {

using detail::is_positive_multiple;
using detail::slack;

bool is_all_zero(const RationalVector& values) {
  for (const Rational& value : values)
    if (sgn(value) != 0) return false;
  return true;
}

// A group is valid when its indices are ascending, in range, non-empty, and
// every member is a positive multiple of the representative (the first).
bool is_valid_group(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  if (group.empty()) return false;
  for (std::size_t g = 0; g < group.size(); ++g) {
    if (group[g] >= cell.constraints.size()) return false;
    if (g > 0 && group[g] <= group[g - 1]) return false;
    if (!is_positive_multiple(cell.constraints[group[g]], cell.constraints[group[0]])) return false;
  }
  return true;
}

bool is_in_group(const std::vector<std::size_t>& group, std::size_t index) {
  for (std::size_t member : group)
    if (member == index) return true;
  return false;
}

}  // namespace

bool check_interior_point(const Polyhedron& cell, const InteriorPoint& certificate) {
  if (!detail::is_well_formed(cell) || certificate.point.size() != cell.dim) return false;
  for (const Constraint& constraint : cell.constraints)
    if (sgn(slack(constraint, certificate.point)) <= 0) return false;
  return true;
}

bool check_emptiness(const Polyhedron& cell, const EmptinessCertificate& certificate) {
  const RationalVector& y = certificate.multipliers;
  if (!detail::is_well_formed(cell) || y.size() != cell.constraints.size()) return false;
  for (const Rational& value : y)
    if (sgn(value) < 0) return false;
  if (is_all_zero(y)) return false;
  if (!is_all_zero(detail::weighted_normal_sum(cell, y))) return false;
  return sgn(detail::weighted_offset_sum(cell, y)) <= 0;
}

bool check_facet_point(const Polyhedron& cell, const std::vector<std::size_t>& group,
                       const FacetPoint& certificate) {
  if (!detail::is_well_formed(cell) || certificate.point.size() != cell.dim) return false;
  if (!is_valid_group(cell, group)) return false;
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    const int sign = sgn(slack(cell.constraints[i], certificate.point));
    if (is_in_group(group, i) ? sign != 0 : sign <= 0) return false;
  }
  return true;
}

bool check_non_facet(const Polyhedron& cell, const std::vector<std::size_t>& group,
                     const NonFacetCertificate& certificate) {
  const RationalVector& y = certificate.multipliers;
  if (!detail::is_well_formed(cell) || y.size() != cell.constraints.size()) return false;
  if (!is_valid_group(cell, group)) return false;
  for (std::size_t i = 0; i < y.size(); ++i) {
    if (is_in_group(group, i) ? sgn(y[i]) != 0 : sgn(y[i]) < 0) return false;
  }
  if (is_all_zero(y)) return false;
  const Constraint& representative = cell.constraints[group[0]];
  RationalVector normal_sum = detail::weighted_normal_sum(cell, y);
  for (std::size_t k = 0; k < cell.dim; ++k)
    normal_sum[k] += certificate.equality_multiplier * representative.normal[k];
  if (!is_all_zero(normal_sum)) return false;
  const Rational offset_sum = detail::weighted_offset_sum(cell, y) +
                              certificate.equality_multiplier * representative.offset;
  return sgn(offset_sum) <= 0;
}

bool check_recession_direction(const Polyhedron& cell, const RecessionDirection& certificate) {
  const RationalVector& d = certificate.direction;
  if (!detail::is_well_formed(cell) || d.size() != cell.dim || is_all_zero(d)) return false;
  for (const Constraint& constraint : cell.constraints) {
    Rational value = 0;
    for (std::size_t k = 0; k < cell.dim; ++k) value += constraint.normal[k] * d[k];
    if (sgn(value) < 0) return false;
  }
  return true;
}

bool check_boundedness(const Polyhedron& cell, const BoundednessCertificate& certificate) {
  const RationalVector& y = certificate.multipliers;
  if (!detail::is_well_formed(cell) || y.size() != cell.constraints.size()) return false;
  std::vector<std::size_t> support;
  for (std::size_t i = 0; i < y.size(); ++i) {
    if (sgn(y[i]) < 0) return false;
    if (sgn(y[i]) > 0) support.push_back(i);
  }
  if (!is_all_zero(detail::weighted_normal_sum(cell, y))) return false;
  // Stiemke needs the support's normals to span Q^dim (dim 0 is trivially bounded).
  RationalMatrix normals(support.size(), cell.dim);
  for (std::size_t s = 0; s < support.size(); ++s)
    normals.set_row(s, cell.constraints[support[s]].normal);
  return detail::exact_rank(normals) == cell.dim;
}

bool check_facet_classification(const Polyhedron& cell,
                                const FacetClassification& classification) {
  if (!detail::is_well_formed(cell)) return false;
  std::vector<bool> is_covered(cell.constraints.size(), false);
  for (std::size_t g = 0; g < classification.groups.size(); ++g) {
    const FacetGroup& group = classification.groups[g];
    if (!is_valid_group(cell, group.constraints)) return false;
    if (g > 0 && group.constraints[0] <= classification.groups[g - 1].constraints[0]) return false;
    for (std::size_t member : group.constraints) {
      if (is_covered[member]) return false;
      is_covered[member] = true;
    }
    // Classes, not just chains: no two representatives are positive multiples.
    for (std::size_t h = 0; h < g; ++h)
      if (is_positive_multiple(cell.constraints[group.constraints[0]],
                               cell.constraints[classification.groups[h].constraints[0]]))
        return false;
    const bool is_checked =
        group.is_facet()
            ? check_facet_point(cell, group.constraints, std::get<FacetPoint>(group.verdict))
            : check_non_facet(cell, group.constraints, std::get<NonFacetCertificate>(group.verdict));
    if (!is_checked) return false;
  }
  for (bool covered : is_covered)
    if (!covered) return false;
  return true;
}

}  // namespace pleat::lp
