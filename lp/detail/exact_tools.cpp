#include "lp/detail/exact_tools.hpp"

#include <cmath>
#include <string>

namespace pleat::lp::detail {

bool is_well_formed(const Polyhedron& cell) {
  for (const Constraint& constraint : cell.constraints) {
    if (constraint.normal.size() != cell.dim) return false;
    bool is_zero = true;
    for (const Rational& entry : constraint.normal) is_zero = is_zero && sgn(entry) == 0;
    if (is_zero) return false;
  }
  return true;
}

void require_well_formed(const Polyhedron& cell, const char* caller) {
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    const Constraint& constraint = cell.constraints[i];
    if (constraint.normal.size() != cell.dim)
      throw usage_error(std::string(caller) + ": constraint " + std::to_string(i) +
                        " has a normal of the wrong size");
    bool is_zero = true;
    for (const Rational& entry : constraint.normal) is_zero = is_zero && sgn(entry) == 0;
    if (is_zero)
      throw usage_error(std::string(caller) + ": constraint " + std::to_string(i) +
                        " has an all-zero normal (drop constant constraints first)");
  }
}

RationalVector weighted_normal_sum(const Polyhedron& cell, const RationalVector& weights) {
  RationalVector sum(cell.dim, Rational(0));
  for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
    if (sgn(weights[i]) == 0) continue;
    for (std::size_t k = 0; k < cell.dim; ++k) sum[k] += weights[i] * cell.constraints[i].normal[k];
  }
  return sum;
}

Rational weighted_offset_sum(const Polyhedron& cell, const RationalVector& weights) {
  Rational sum = 0;
  for (std::size_t i = 0; i < cell.constraints.size(); ++i)
    if (sgn(weights[i]) != 0) sum += weights[i] * cell.constraints[i].offset;
  return sum;
}

Rational simplest_between(const Rational& low, const Rational& high) {
  if (sgn(low) <= 0 && sgn(high) >= 0) return Rational(0);
  if (sgn(high) < 0) return -simplest_between(-high, -low);
  // 0 < low <= high: continued-fraction descent (Stern-Brocot). With
  // a = floor(low): low itself when it is an integer, else a + 1 when that is
  // <= high, else a + 1 / simplest_between(1 / (high - a), 1 / (low - a)).
  // Done in integers: low = p/q, high = r/s are replaced by their reciprocal
  // fractional parts (Euclid's remainders, no gcd), and the answer is the
  // continued fraction of the terms taken, whose convergent h/k is in lowest
  // terms.
  Integer p = low.get_num(), q = low.get_den(), r = high.get_num(), s = high.get_den();
  Integer h = 1, k = 0, h_before = 0, k_before = 1;  // convergents of the terms so far
  Integer a, remainder, next;
  const auto take = [&](const Integer& term) {
    next = term * h + h_before;
    h_before = std::move(h);
    h = std::move(next);
    next = term * k + k_before;
    k_before = std::move(k);
    k = std::move(next);
  };
  for (;;) {
    mpz_fdiv_qr(a.get_mpz_t(), remainder.get_mpz_t(), p.get_mpz_t(), q.get_mpz_t());
    if (sgn(remainder) == 0) {  // low is the integer a
      take(a);
      break;
    }
    a += 1;
    if (a * s <= r) {  // a + 1 <= high
      take(a);
      break;
    }
    a -= 1;
    take(a);
    // low' = 1 / (high - a) = s / (r - a s), high' = 1 / (low - a) = q / remainder.
    next = r - a * s;
    r = std::move(q);
    q = std::move(next);
    p = std::move(s);
    s = std::move(remainder);
    remainder = 0;
  }
  Rational result;
  mpq_set_num(result.get_mpq_t(), h.get_mpz_t());
  mpq_set_den(result.get_mpq_t(), k.get_mpz_t());
  result.canonicalize();  // already in lowest terms; cheap insurance
  return result;
}

// First continued-fraction convergent within radius (64-bit integers), else
// the simplest rational in the interval.
Rational short_rational_near(double value, double radius) {
  if (!(radius > 0.0)) return rational_from_double(value);
  constexpr double limit = 0x1p52;  // convergents stay exact in double and in 64 bits
  if (std::fabs(value) < limit) {
    long h = 1, h_before = 0, k = 0, k_before = 1;
    double rest = value;
    for (int step = 0; step < 40; ++step) {
      const double term = std::floor(rest);
      const double next_h = term * static_cast<double>(h) + static_cast<double>(h_before);
      const double next_k = term * static_cast<double>(k) + static_cast<double>(k_before);
      if (!(std::fabs(next_h) < limit && next_k < limit)) break;
      h_before = h;
      k_before = k;
      h = static_cast<long>(next_h);
      k = static_cast<long>(next_k);
      if (std::fabs(value - static_cast<double>(h) / static_cast<double>(k)) < radius) {
        // Already canonical: consecutive convergents have h k' - h' k = +-1,
        // so gcd(h, k) = 1, and k > 0 (k = 1 first, then every term >= 1);
        // both are exact (below 2^52, checked above). No gcd, no copies.
        Rational result;
        mpq_set_si(result.get_mpq_t(), h, static_cast<unsigned long>(k));
        return result;
      }
      const double fraction = rest - term;
      if (fraction == 0.0) break;
      rest = 1.0 / fraction;
    }
  }
  return simplest_between(rational_from_double(value - radius), rational_from_double(value + radius));
}

}  // namespace pleat::lp::detail
