#include "enumerate/detail/extra_naming.hpp"

#include "core/stop.hpp"
#include "enumerate/detail/parallel_for.hpp"

#include <algorithm>
#include <initializer_list>
#include <optional>
#include <set>

namespace pleat::detail {
namespace {

// Parameter index sets of one hidden neuron.
struct NeuronParameters {
  std::set<std::size_t> incoming;  // W_k[i,:] and b_k[i]
  std::set<std::size_t> bias;      // b_k[i]
  std::set<std::size_t> outgoing;  // W_{k+1}[:,i]
  std::set<std::size_t> next_biases;  // b_{k+1}[:]
};

std::vector<NeuronParameters> hidden_neuron_parameters(const Network& network) {
  std::vector<NeuronParameters> out;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const Layer& next = network.layers[k + 1];
    const std::size_t offset = network.parameter_offset(k);
    const std::size_t next_offset = network.parameter_offset(k + 1);
    for (std::size_t i = 0; i < layer.width(); ++i) {
      NeuronParameters p;
      for (std::size_t j = 0; j < layer.fan_in(); ++j) p.incoming.insert(offset + i * layer.fan_in() + j);
      const std::size_t bias = offset + layer.width() * layer.fan_in() + i;
      p.incoming.insert(bias);
      p.bias.insert(bias);
      for (std::size_t o = 0; o < next.width(); ++o) {
        p.outgoing.insert(next_offset + o * next.fan_in() + i);
        p.next_biases.insert(next_offset + next.width() * next.fan_in() + o);
      }
      out.push_back(std::move(p));
    }
  }
  return out;
}

bool is_subset(const std::set<std::size_t>& support, const std::set<std::size_t>& allowed) {
  return std::includes(allowed.begin(), allowed.end(), support.begin(), support.end());
}

bool is_proportional_row(const Layer& layer, std::size_t a, std::size_t b) {
  // (W[a,:], b[a]) = lambda (W[b,:], b[b]) with lambda > 0.
  RationalVector ra = layer.weights.row(a), rb = layer.weights.row(b);
  ra.push_back(layer.bias[a]);
  rb.push_back(layer.bias[b]);
  std::optional<Rational> lambda;
  for (std::size_t c = 0; c < ra.size(); ++c) {
    if ((ra[c] == 0) != (rb[c] == 0)) return false;
    if (ra[c] == 0) continue;
    const Rational ratio = ra[c] / rb[c];
    if (lambda && *lambda != ratio) return false;
    lambda = ratio;
  }
  return lambda && *lambda > 0;
}

// Hidden neurons with a positively proportional (w, b) in the same layer.
std::vector<char> duplicated_neurons(const Network& network) {
  std::vector<char> duplicated;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const std::size_t first = duplicated.size();
    duplicated.resize(first + layer.width(), 0);
    for (std::size_t a = 0; a < layer.width(); ++a)
      for (std::size_t b = a + 1; b < layer.width(); ++b)
        if (is_proportional_row(layer, a, b)) duplicated[first + a] = duplicated[first + b] = 1;
  }
  return duplicated;
}

// Names the mechanism behind one extra kernel vector by its support.
void recognise_mechanism(const Network& network, const NeuronActivity& activity,
                         const std::vector<NeuronParameters>& parameters, const std::vector<char>& duplicated,
                         ExtraKernelDirection& direction) {
  std::set<std::size_t> support;
  for (std::size_t c = 0; c < direction.vector.size(); ++c)
    if (direction.vector[c] != 0) support.insert(c);
  const std::size_t hidden = parameters.size();

  auto try_union = [&](auto&& qualifies, auto&& parameters_of, Mechanism mechanism) {
    std::set<std::size_t> allowed;
    std::vector<std::size_t> neurons;
    for (std::size_t n = 0; n < hidden; ++n) {
      if (!qualifies(n)) continue;
      const std::set<std::size_t> own = parameters_of(n);
      bool touches = false;
      for (std::size_t c : own) touches = touches || support.contains(c);
      if (!touches) continue;
      allowed.insert(own.begin(), own.end());
      neurons.push_back(n);
    }
    if (neurons.empty() || !is_subset(support, allowed)) return false;
    direction.mechanism = mechanism;
    direction.neurons = neurons;
    return true;
  };
  auto union_of = [&](std::size_t n, std::initializer_list<const std::set<std::size_t>*> parts) {
    std::set<std::size_t> all;
    for (const auto* part : parts) all.insert(part->begin(), part->end());
    (void)n;
    return all;
  };

  auto has_zero_outgoing = [&](std::size_t n) {
    // The neuron's layer and index within it, to read its outgoing weights.
    std::size_t layer = 0, index = n;
    while (index >= network.layers[layer].width()) index -= network.layers[layer++].width();
    const Layer& next = network.layers[layer + 1];
    for (std::size_t o = 0; o < next.width(); ++o)
      if (next.weights(o, index) != 0) return false;
    return true;
  };
  if (try_union(has_zero_outgoing, [&](std::size_t n) { return parameters[n].incoming; }, Mechanism::zero_outgoing_weights))
    return;
  if (try_union([&](std::size_t n) { return !activity.ever_on[n]; },
                [&](std::size_t n) { return union_of(n, {&parameters[n].incoming, &parameters[n].outgoing}); },
                Mechanism::dead_neuron))
    return;
  if (try_union([&](std::size_t n) { return !activity.ever_not_on[n]; },
                [&](std::size_t n) { return union_of(n, {&parameters[n].bias, &parameters[n].next_biases}); },
                Mechanism::always_active_neuron))
    return;
  try_union([&](std::size_t n) { return duplicated[n] != 0; },
            [&](std::size_t n) { return union_of(n, {&parameters[n].incoming, &parameters[n].outgoing}); },
            Mechanism::duplicate_neurons);
}

}  // namespace

std::vector<ExtraKernelDirection> name_extra_directions(const Network& network, const NeuronActivity& activity,
                                                        const RationalMatrix& extra, unsigned threads,
                                                        const std::function<void(std::size_t)>& progress) {
  const auto parameters = hidden_neuron_parameters(network);
  const std::vector<char> duplicated = duplicated_neurons(network);
  std::vector<ExtraKernelDirection> named(extra.rows());
  const std::size_t chunk = 64 * static_cast<std::size_t>(std::max(1u, threads));
  for (std::size_t start = 0; start < extra.rows(); start += chunk) {
    poll_stop();
    progress(start);
    const std::size_t count = std::min(chunk, extra.rows() - start);
    parallel_for(count, threads, [&](std::size_t i) {
      ExtraKernelDirection& direction = named[start + i];
      direction.vector = extra.row(start + i);
      recognise_mechanism(network, activity, parameters, duplicated, direction);
    });
  }
  return named;
}

}  // namespace pleat::detail
