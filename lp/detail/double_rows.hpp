// The double image of a polyhedron the filter LPs run on: each constraint
// scaled by a power of two (so huge or tiny exact coefficients never overflow)
// and then to 1-norm 1 in double. Proposals only; nothing here decides.
#pragma once

#include "lp/polyhedron.hpp"

#include <array>
#include <cstddef>
#include <optional>
#include <utility>
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

// Boundedness of a plane cell proposed in double from the angles of its
// normals (angle, row index), in any order. The closure is bounded iff the
// normals leave no angular gap of pi or more. Either after_gap names the
// normal b after such a gap (b turned counter-clockwise by a right angle
// proposes a recession direction), or around names three normals round the
// circle, counter-clockwise, each within pi of the next (their Cramer
// determinants propose Stiemke multipliers). nullopt when neither is found.
// Proposes only: the callers check exactly.
struct PlaneBoundednessProposal {
  std::optional<std::size_t> after_gap;
  std::array<std::size_t, 3> around{};
};
std::optional<PlaneBoundednessProposal> propose_plane_boundedness(std::vector<std::pair<double, std::size_t>> angles);

// value ~ mantissa * 2^exponent with |mantissa| in (1/2, 2); zero gives (0, 0).
double split_exponent(const Rational& value, long& exponent);

}  // namespace pleat::lp::detail
