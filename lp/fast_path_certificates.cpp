// The Motzkin certificates of the plane and space paths' non-facet verdicts
// (lp/plane_cell.hpp, lp/space_cell.hpp), in rational form for --certificates:
// the multipliers of a group's support solved exactly and checked. Exact.
#include "lp/detail/exact_linear.hpp"
#include "lp/plane_cell.hpp"
#include "lp/space_cell.hpp"

#include <utility>
#include <vector>

namespace pleat::lp {

std::optional<NonFacetCertificate> plane_redundancy_certificate(const Polyhedron& cell, std::size_t j,
                                                                std::size_t s1, std::size_t s2) {
  const RationalVector& target = cell.constraints[j].normal;
  NonFacetCertificate certificate{Rational(-1), RationalVector(cell.constraints.size())};
  if (s1 == s2) {
    const RationalVector& a = cell.constraints[s1].normal;
    const std::size_t k = sgn(a[0]) != 0 ? 0 : 1;
    Rational y = target[k] / a[k];
    if (sgn(y) <= 0 || target[1 - k] != y * a[1 - k]) return std::nullopt;
    if (y * cell.constraints[s1].offset > cell.constraints[j].offset) return std::nullopt;
    certificate.multipliers[s1] = std::move(y);
    return certificate;
  }
  const RationalVector& a = cell.constraints[s1].normal;
  const RationalVector& b = cell.constraints[s2].normal;
  const Rational determinant = a[0] * b[1] - a[1] * b[0];
  if (sgn(determinant) == 0) return std::nullopt;
  Rational y1 = (target[0] * b[1] - target[1] * b[0]) / determinant;
  Rational y2 = (a[0] * target[1] - a[1] * target[0]) / determinant;
  if (sgn(y1) < 0 || sgn(y2) < 0) return std::nullopt;
  if (y1 * cell.constraints[s1].offset + y2 * cell.constraints[s2].offset > cell.constraints[j].offset)
    return std::nullopt;
  certificate.multipliers[s1] = std::move(y1);
  certificate.multipliers[s2] = std::move(y2);
  return certificate;
}

std::optional<NonFacetCertificate> space_redundancy_certificate(const Polyhedron& cell, std::size_t j,
                                                                const std::vector<std::size_t>& support) {
  const std::size_t n = cell.dim;
  const std::size_t s = support.size();
  if (s == 0 || s > n) return std::nullopt;
  // a_j = sum_t y_t a_{support[t]}: n equations in s unknowns, whose solution
  // is unique unless the support is dependent or a_j is outside its span
  // (then no certificate here).
  RationalMatrix columns(n, s);
  for (std::size_t r = 0; r < n; ++r)
    for (std::size_t t = 0; t < s; ++t) columns(r, t) = cell.constraints[support[t]].normal[r];
  const std::optional<RationalVector> y = detail::solve_unique(std::move(columns), cell.constraints[j].normal);
  if (!y) return std::nullopt;
  NonFacetCertificate certificate{Rational(-1), RationalVector(cell.constraints.size())};
  Rational offset = 0;
  for (std::size_t t = 0; t < s; ++t) {
    if (sgn((*y)[t]) < 0) return std::nullopt;
    offset += (*y)[t] * cell.constraints[support[t]].offset;
    certificate.multipliers[support[t]] = (*y)[t];
  }
  if (offset > cell.constraints[j].offset) return std::nullopt;
  return certificate;
}

}  // namespace pleat::lp
