// Exact helpers shared by the checker and the oracle (no solver in here).
#pragma once

#include "lp/polyhedron.hpp"

#include <cstddef>
#include <vector>

namespace pleat::lp::detail {

// The public helpers of lp/polyhedron.hpp, under the names lp's own files use.
using lp::is_positive_multiple;
using lp::slack;

// True when every normal has size dim and none is all zero.
[[nodiscard]] bool is_well_formed(const Polyhedron& cell);

// Throws usage_error naming the caller unless is_well_formed(cell).
void require_well_formed(const Polyhedron& cell, const char* caller);

// sum_i weights[i] * normal_i (weights.size() == constraints.size()).
RationalVector weighted_normal_sum(const Polyhedron& cell, const RationalVector& weights);

// sum_i weights[i] * offset_i.
Rational weighted_offset_sum(const Polyhedron& cell, const RationalVector& weights);

// The simplest rational (smallest denominator, then numerator) in [low, high].
// Precondition: low <= high.
Rational simplest_between(const Rational& low, const Rational& high);

// A rational with a short denominator within radius of value (radius <= 0:
// value itself): the first continued-fraction convergent of value that is
// that close, else the simplest rational in the interval. Only a proposal:
// callers check the point exactly. Precondition: value finite.
Rational short_rational_near(double value, double radius);

}  // namespace pleat::lp::detail
