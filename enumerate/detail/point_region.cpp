#include "enumerate/detail/point_region.hpp"

#include "core/jacobian.hpp"

#include <algorithm>

namespace pleat::detail {
namespace {

bool has_zero_at_point(const ActivationPattern& pattern) {
  return std::find(pattern.states.begin(), pattern.states.end(), NeuronState::zero_at_point) != pattern.states.end();
}

}  // namespace

PointRegion region_of_point(const Network& network, const IntegerPatternEvaluator& evaluator,
                            const RationalVector& x) {
  ActivationPattern pattern = evaluator.pattern_at(x);  // evaluate_exact's pattern, in integers
  if (has_zero_at_point(pattern)) {
    pattern = pattern_around_point(network, x);  // identically-zero neurons become 'z'
    if (has_zero_at_point(pattern)) return {PointVerdict::on_bent_hyperplane, {}};
    if (!nonsmooth_neurons(network, pattern).empty()) return {PointVerdict::not_smooth, {}};
  }
  return {PointVerdict::smooth, std::move(pattern)};
}

RationalVector rational_from_vector(const DoubleVector& values) {
  RationalVector out(values.size());
  for (std::size_t i = 0; i < values.size(); ++i) out[i] = rational_from_double(values[i]);
  return out;
}

}  // namespace pleat::detail
