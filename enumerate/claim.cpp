#include "enumerate/claim.hpp"

#include "core/jacobian.hpp"
#include "enumerate/walker.hpp"

#include <algorithm>

namespace pleat {
namespace {

std::string point_text(const RationalVector& point) {
  std::string text = "(";
  for (std::size_t i = 0; i < point.size(); ++i) text += (i ? ", " : "") + format_rational(point[i]);
  return text + ")";
}

}  // namespace

ClaimVerdict judge_claim(std::uint64_t value, const FunctionalDimensionResult& result) {
  if (value > result.parametric_dimension)
    return {Verdict::impossible, "exceeds the parametric dimension " + std::to_string(result.parametric_dimension)};
  if (value > result.upper_bound)
    return {Verdict::impossible, "exceeds the proved upper bound " + std::to_string(result.upper_bound) +
                              (result.upper_bound == result.scaling_bound
                                   ? " (the scaling bound: every hidden neuron's rescaling leaves the function unchanged)"
                                   : " (an exact kernel checked on every region)")};
  if (value < result.lower_bound)
    return {Verdict::too_low, "below the proved lower bound " + std::to_string(result.lower_bound) + " by " +
                           std::to_string(result.lower_bound - value) +
                           " (a sampled estimate that misses regions or rounds away rank falls short like this)"};
  return {Verdict::consistent, result.certified ? "equals the certified functional dimension"
                                         : "within the proved bounds [" + std::to_string(result.lower_bound) + ", " +
                                               std::to_string(result.upper_bound) + "]"};
}

ClaimVerdict judge_claim_at_points(std::uint64_t value, std::size_t lower, std::size_t upper) {
  if (lower < upper) {
    const std::string bounds = " of the rank at these points (stopped before it was exact)";
    if (value > upper)
      return {Verdict::impossible, "exceeds the proved upper bound " + std::to_string(upper) + bounds};
    if (value < lower)
      return {Verdict::too_low, "below the proved lower bound " + std::to_string(lower) + bounds + " by " +
                                    std::to_string(lower - value)};
    return {Verdict::consistent,
            "within the proved bounds [" + std::to_string(lower) + ", " + std::to_string(upper) + "]" + bounds};
  }
  const std::size_t batch_rank = lower;
  const std::string rank = std::to_string(batch_rank);
  if (value > batch_rank)
    return {Verdict::impossible, "exceeds the exact rank at these points, " + rank +
                              " (a floating-point rank above it was invented by rounding)"};
  if (value < batch_rank)
    return {Verdict::too_low, "below the exact rank at these points, " + rank + ", by " + std::to_string(batch_rank - value) +
                           " (rounding or the SVD tolerance lost rank)"};
  return {Verdict::consistent, "equals the exact rank at these points"};
}

std::vector<MechanismGroup> mechanism_groups(const FunctionalDimensionResult& result) {
  std::vector<MechanismGroup> groups;
  for (const auto& direction : result.extra_kernel) {
    auto same = [&](const MechanismGroup& g) { return g.mechanism == direction.mechanism && g.neurons == direction.neurons; };
    auto found = std::find_if(groups.begin(), groups.end(), same);
    if (found == groups.end()) found = groups.insert(groups.end(), {direction.mechanism, direction.neurons, 0});
    ++found->directions;
  }
  return groups;
}

std::optional<RegionLimit> region_limit(const Network& network, const FunctionalDimensionResult& result) {
  if (!result.walk_complete) return std::nullopt;
  const RegionLimit limit{result.regions_walked - result.nonsmooth_regions.size(),
                          network.output_dim() * (network.input_dim + 1)};
  if (limit.smooth_regions * limit.rows_per_region >= result.scaling_bound) return std::nullopt;
  return limit;
}

ActivationPattern batch_point_pattern(const Network& network, const Domain& domain, const RationalVector& point,
                                     const std::string& place, const IntegerPatternEvaluator* evaluator) {
  const Placement placement = placement_in(domain, point);
  if (placement == Placement::outside)
    throw input_error(place + ": " + point_text(point) + " lies outside the domain " + domain.describe());
  if (placement == Placement::on_boundary)
    throw input_error(place + ": " + point_text(point) + " lies on the boundary of the domain " + domain.describe() +
                      ", not strictly inside it");
  if (evaluator) {  // a point on no bent hyperplane: its evaluation's pattern, in integers
    ActivationPattern evaluated = evaluator->pattern_at(point);
    if (std::find(evaluated.states.begin(), evaluated.states.end(), NeuronState::zero_at_point) ==
        evaluated.states.end())
      return evaluated;
  }
  const auto pattern = region_pattern_at(network, point);
  if (!pattern || !nonsmooth_neurons(network, *pattern).empty()) {
    try {
      (void)parameter_jacobian_exact(network, point);  // throws the reason
    } catch (const input_error& fault) {
      throw input_error(place + ": " + fault.what());
    }
  }
  return *pattern;
}

}  // namespace pleat
