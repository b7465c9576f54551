#include "enumerate/region_geometry.hpp"

#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "enumerate/walker.hpp"
#include "lp/oracle.hpp"

#include <algorithm>
#include <string>
#include <variant>

namespace pleat {
namespace {

constexpr std::size_t max_vanishing_choices = 16;

void choose_vanishing_states(const Network& network, const Evaluation& at_point, std::size_t k,
                             const AffineMap& post, ActivationPattern& pattern,
                             std::vector<ActivationPattern>& out) {
  if (k == network.relu_layer_count()) {
    out.push_back(pattern);
    return;
  }
  const AffineMap pre = compose_layer(network.layers[k], post);
  const std::size_t first = network.first_neuron_of_layer(k);
  std::vector<std::size_t> free_neurons;
  for (std::size_t i = 0; i < pre.offset.size(); ++i) {
    const Rational& value = at_point.preactivation[k][i];
    NeuronState& state = pattern.states[first + i];
    const RationalVector row = pre.linear.row(i);
    const bool is_constant = std::all_of(row.begin(), row.end(), [](const Rational& x) { return x == 0; });
    if (value > 0) state = NeuronState::on;
    else if (value < 0) state = NeuronState::off;
    else if (is_constant) state = NeuronState::zero_on_region;
    else free_neurons.push_back(i);
  }
  const std::size_t combinations = std::size_t{1} << free_neurons.size();
  for (std::size_t mask = 0; mask < combinations; ++mask) {
    for (std::size_t b = 0; b < free_neurons.size(); ++b)
      pattern.states[first + free_neurons[b]] = (mask >> b) & 1 ? NeuronState::on : NeuronState::off;
    const AffineMap next = apply_states(pre, std::span(pattern.states).subspan(first, pre.offset.size()));
    choose_vanishing_states(network, at_point, k + 1, next, pattern, out);
  }
}

}  // namespace

PointIncidence regions_at_point(const Network& network, const Domain& domain, const RationalVector& point) {
  if (point.size() != network.input_dim || domain.dim != network.input_dim)
    throw usage_error("regions_at_point: dimensions differ");
  for (std::size_t s = 0; s < domain.constraints.size(); ++s)
    if (lp::slack(domain.constraints[s], point) < 0)
      throw input_error("the point lies outside the domain " + domain.describe());
  const Evaluation at_point = evaluate_exact(network, point);
  PointIncidence result;
  for (std::size_t id = 0; id < at_point.pattern.states.size(); ++id)
    if (at_point.pattern.states[id] == NeuronState::zero_at_point ||
        at_point.pattern.states[id] == NeuronState::zero_on_region)
      result.vanishing_neurons.push_back(id);
  if (result.vanishing_neurons.size() > max_vanishing_choices)
    throw limit_error(std::to_string(result.vanishing_neurons.size()) + " neurons vanish at the point; pleat looks at " +
                      "most " + std::to_string(max_vanishing_choices) + " at one point (2^" +
                      std::to_string(max_vanishing_choices) + " candidate patterns)");

  ActivationPattern pattern;
  pattern.states.resize(network.relu_neuron_count());
  std::vector<ActivationPattern> candidates;
  choose_vanishing_states(network, at_point, 0, identity_map(network.input_dim), pattern, candidates);
  lp::Oracle oracle;
  for (const auto& candidate : candidates) {
    auto cell = build_pattern_cell(network, domain, candidate);
    if (!cell) continue;
    if (cell->cell.constraints.empty() ||
        std::holds_alternative<lp::InteriorPoint>(oracle.decide_open_cell(cell->cell)))
      result.regions.push_back(candidate);
  }
  std::sort(result.regions.begin(), result.regions.end());
  result.regions.erase(std::unique(result.regions.begin(), result.regions.end()), result.regions.end());
  return result;
}

std::size_t rank_contribution(const Network& network, const ActivationPattern& pattern) {
  if (!nonsmooth_neurons(network, pattern).empty()) return 0;
  return rank_exact(coefficient_blocks(network, pattern));
}

}  // namespace pleat
