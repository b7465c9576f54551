#include "lp/polyhedron.hpp"

namespace pleat::lp {

Rational slack(const Constraint& constraint, const RationalVector& x) {
  Rational value = constraint.offset;
  for (std::size_t k = 0; k < x.size(); ++k)
    if (sgn(constraint.normal[k]) != 0) value += constraint.normal[k] * x[k];
  return value;
}

bool is_positive_multiple(const Constraint& first, const Constraint& second) {
  const std::size_t dim = second.normal.size();
  if (first.normal.size() != dim) return false;
  std::size_t k = 0;
  while (k < dim && sgn(second.normal[k]) == 0) ++k;
  if (k == dim) return false;
  if (sgn(first.normal[k]) != sgn(second.normal[k])) return false;
  // first = (first_k / second_k) * second, checked by cross-multiplication.
  const Rational& p = first.normal[k];
  const Rational& q = second.normal[k];
  for (std::size_t l = 0; l < dim; ++l)
    if (first.normal[l] * q != second.normal[l] * p) return false;
  return first.offset * q == second.offset * p;
}

}  // namespace pleat::lp
