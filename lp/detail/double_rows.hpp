// The double image of a polyhedron the filter LPs run on: each constraint
// scaled by a power of two (so huge or tiny exact coefficients never overflow)
// and then to 1-norm 1 in double. Proposals only; nothing here decides.
#pragma once

#include "lp/polyhedron.hpp"

#include <cstddef>
#include <vector>

namespace pleat::lp::detail {

struct DoubleRows {
  std::size_t dim = 0;
  std::size_t count = 0;
  std::vector<double> normals;   // count x dim, row-major; each row has 1-norm 1
  std::vector<double> offsets;   // count
  std::vector<long> exponents;   // row i in double ~ row i exact * 2^-exponents[i] / norms[i]
  std::vector<double> norms;
  bool is_finite = true;         // false when some offset overflowed: skip the filter

  const double* normal(std::size_t i) const { return normals.data() + i * dim; }
  // An exact positive weight w_i (a dyadic rational) with w_i * row i ~ the double row i.
  Rational exact_weight(std::size_t i) const;
};

DoubleRows to_double_rows(const Polyhedron& cell);

// value ~ mantissa * 2^exponent with |mantissa| in (1/2, 2); zero gives (0, 0).
double split_exponent(const Rational& value, long& exponent);

}  // namespace pleat::lp::detail
