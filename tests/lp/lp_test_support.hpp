// Small builders shared by the lp tests (not a test file itself).
#pragma once

#include "lp/polyhedron.hpp"

#include <cstddef>
#include <random>
#include <vector>

namespace pleat::lp::testing {

inline Constraint constraint(std::vector<long> normal, Rational offset) {
  Constraint result;
  for (long value : normal) result.normal.push_back(Rational(value));
  result.offset = offset;
  return result;
}

inline Polyhedron polyhedron(std::size_t dim, std::vector<Constraint> constraints) {
  return Polyhedron{dim, std::move(constraints)};
}

inline Rational slack_at(const Constraint& c, const RationalVector& x) {
  Rational value = c.offset;
  for (std::size_t k = 0; k < x.size(); ++k) value += c.normal[k] * x[k];
  return value;
}

// Random integer normals in [-9, 9] (never all zero) and offsets making
// `inside` strictly interior with slack in [1, 20].
inline Polyhedron random_cell_around(std::mt19937& random, std::size_t dim, std::size_t count,
                                     const RationalVector& inside) {
  std::uniform_int_distribution<long> entry(-9, 9);
  std::uniform_int_distribution<long> margin(1, 20);
  Polyhedron cell{dim, {}};
  for (std::size_t i = 0; i < count; ++i) {
    Constraint c;
    bool is_zero = true;
    while (is_zero) {
      c.normal.clear();
      for (std::size_t k = 0; k < dim; ++k) {
        c.normal.push_back(Rational(entry(random)));
        is_zero = is_zero && c.normal.back() == 0;
      }
    }
    c.offset = 0;
    c.offset = Rational(margin(random)) - slack_at(c, inside);
    cell.constraints.push_back(std::move(c));
  }
  return cell;
}

inline RationalVector random_point(std::mt19937& random, std::size_t dim) {
  std::uniform_int_distribution<long> numerator(-50, 50);
  std::uniform_int_distribution<long> denominator(1, 7);
  RationalVector point;
  for (std::size_t k = 0; k < dim; ++k) {
    const long d = denominator(random);  // drawn first: a call's argument order is unspecified
    Rational value(numerator(random), d);
    value.canonicalize();
    point.push_back(value);
  }
  return point;
}

// [lo, hi]^dim as 2 dim constraints.
inline Polyhedron box(std::size_t dim, long lo, long hi) {
  Polyhedron cell{dim, {}};
  for (std::size_t k = 0; k < dim; ++k) {
    Constraint lower{RationalVector(dim, Rational(0)), Rational(-lo)};
    lower.normal[k] = 1;
    Constraint upper{RationalVector(dim, Rational(0)), Rational(hi)};
    upper.normal[k] = -1;
    cell.constraints.push_back(lower);
    cell.constraints.push_back(upper);
  }
  return cell;
}

inline Rational power_of_two(unsigned bits) {
  Integer value = 1;
  value <<= bits;
  return Rational(value);
}

}  // namespace pleat::lp::testing
