#include "enumerate/detail/point_region.hpp"

#include "core/jacobian.hpp"

#include <algorithm>
#include <vector>

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

bool deeper_neuron_stable_at(const std::vector<std::span<const PointRegion>>& batches, std::size_t first_deeper) {
  std::vector<char> seen_on, seen_off;  // per neuron from first_deeper
  for (const std::span<const PointRegion> regions : batches) {
    for (const PointRegion& region : regions) {
      if (region.verdict != PointVerdict::smooth) continue;
      const std::vector<NeuronState>& states = region.pattern.states;
      if (states.size() <= first_deeper) return false;  // no neuron past the first hidden layer
      seen_on.resize(states.size() - first_deeper, 0);
      seen_off.resize(states.size() - first_deeper, 0);
      for (std::size_t i = first_deeper; i < states.size(); ++i) {
        seen_on[i - first_deeper] |= static_cast<char>(states[i] == NeuronState::on);
        seen_off[i - first_deeper] |= static_cast<char>(states[i] == NeuronState::off);
      }
    }
  }
  for (std::size_t i = 0; i < seen_on.size(); ++i)
    if (seen_on[i] != seen_off[i]) return true;  // one state only ('z' at every point: neither)
  return false;
}

}  // namespace pleat::detail
