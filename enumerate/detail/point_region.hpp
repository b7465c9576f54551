// The region an exact interior point lands in, for certify's no-walk path
// (enumerate/functional_dimension.cpp's points and lines phases). Internal to
// enumerate/ (not installed).
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"

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

}  // namespace pleat::detail
