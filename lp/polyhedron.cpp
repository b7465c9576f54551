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
  // first = (first_k / second_k) * second, checked by cross-multiplication:
  // x q == y p for rationals x, y, p, q is num(x) num(q) den(y) den(p) ==
  // num(y) num(p) den(x) den(q), integer products only (no gcd per product;
  // thin cells send many nearly parallel rows here that differ in one entry).
  const Rational& p = first.normal[k];
  const Rational& q = second.normal[k];
  Integer left, right;
  const auto same_ratio = [&](const Rational& x, const Rational& y) {
    mpz_mul(left.get_mpz_t(), x.get_num_mpz_t(), q.get_num_mpz_t());
    mpz_mul(left.get_mpz_t(), left.get_mpz_t(), y.get_den_mpz_t());
    mpz_mul(left.get_mpz_t(), left.get_mpz_t(), p.get_den_mpz_t());
    mpz_mul(right.get_mpz_t(), y.get_num_mpz_t(), p.get_num_mpz_t());
    mpz_mul(right.get_mpz_t(), right.get_mpz_t(), x.get_den_mpz_t());
    mpz_mul(right.get_mpz_t(), right.get_mpz_t(), q.get_den_mpz_t());
    return left == right;
  };
  for (std::size_t l = 0; l < dim; ++l)
    if (l != k && !same_ratio(first.normal[l], second.normal[l])) return false;
  return same_ratio(first.offset, second.offset);
}

}  // namespace pleat::lp
