// The region an exact interior point lands in, for certify's no-walk path
// (enumerate/functional_dimension.cpp's points and lines phases). Internal to
// enumerate/ (not installed).
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"

#include <span>
#include <vector>

namespace pleat::detail {

// The pattern of the open region around x when x lies on no bent hyperplane
// and that region has smooth points; nullopt otherwise (a bent hyperplane
// through x: nudge it; a region without smooth points: no rows). Exact.
enum class PointVerdict { smooth, on_bent_hyperplane, not_smooth };
struct PointRegion {
  PointVerdict verdict = PointVerdict::on_bent_hyperplane;
  ActivationPattern pattern;
};

PointRegion region_of_point(const Network& network, const IntegerPatternEvaluator& evaluator, const RationalVector& x);

RationalVector rational_from_vector(const DoubleVector& values);

// Whether some neuron past the first hidden layer (ids from first_deeper on)
// is on at every smooth point of the batches, or off at every one: a proposal
// that it is dead or always active on the whole domain, which would put the
// functional dimension below the scaling bound (the dead-neuron and
// always-active-neuron directions). On a plane certify's points then give
// way to the walk (never certify: a neuron stable at the points may still
// turn elsewhere). False with no smooth point. First-layer neurons are left
// out: on the whole plane each turns on a line the points may all miss.
bool deeper_neuron_stable_at(const std::vector<std::span<const PointRegion>>& batches, std::size_t first_deeper);

}  // namespace pleat::detail
