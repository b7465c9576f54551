#include "enumerate/detail/extra_naming.hpp"

#include "core/stop.hpp"
#include "enumerate/detail/parallel_for.hpp"

#include <algorithm>
#include <optional>

namespace pleat::detail {
namespace {

bool is_proportional_row(const Layer& layer, std::size_t a, std::size_t b) {
  // (W[a,:], b[a]) = lambda (W[b,:], b[b]) with lambda > 0. Read in place:
  // copies of the two rows cost a GMP allocation per entry for every pair
  // of a layer (0.3 ms of certify's serial naming on 2,15,15,15,1), where
  // most pairs differ at their second entry.
  const std::size_t fan_in = layer.fan_in();
  auto entry = [&](std::size_t row, std::size_t c) -> const Rational& {
    return c < fan_in ? layer.weights(row, c) : layer.bias[row];
  };
  // A positive lambda keeps every sign, and a sign costs no division: on
  // random weights most pairs differ in sign within two entries.
  for (std::size_t c = 0; c <= fan_in; ++c)
    if (sgn(entry(a, c)) != sgn(entry(b, c))) return false;
  std::optional<Rational> lambda;
  for (std::size_t c = 0; c <= fan_in; ++c) {
    const Rational &x = entry(a, c), &y = entry(b, c);
    if (x == 0) continue;
    const Rational ratio = x / y;
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

// Hidden neuron n's parameters, in four parts: incoming (W_k[i,:] and
// b_k[i]), its bias b_k[i] alone, outgoing (W_{k+1}[:,i]) and the next
// layer's biases b_{k+1}[:].
enum Part : unsigned { incoming = 1, bias = 2, outgoing = 4, next_biases = 8 };

// One mechanism: which hidden neurons may carry it and which of their
// parameters it may move. A direction has it exactly when every column of
// its support is such a parameter of such a neuron; its neurons are those
// whose parameters meet the support. covering[c]: those neurons for column
// c, increasing.
struct MechanismCover {
  Mechanism mechanism;
  std::vector<std::vector<std::size_t>> covering;
};

MechanismCover mechanism_cover(const Network& network, Mechanism mechanism, unsigned parts,
                               const std::vector<char>& qualifies) {
  MechanismCover cover{mechanism, std::vector<std::vector<std::size_t>>(network.parametric_dimension())};
  std::size_t n = 0;  // hidden neurons in order
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const Layer& next = network.layers[k + 1];
    const std::size_t offset = network.parameter_offset(k);
    const std::size_t next_offset = network.parameter_offset(k + 1);
    for (std::size_t i = 0; i < layer.width(); ++i, ++n) {
      if (!qualifies[n]) continue;
      auto add = [&](std::size_t c) {
        std::vector<std::size_t>& neurons = cover.covering[c];
        if (neurons.empty() || neurons.back() != n) neurons.push_back(n);
      };
      if (parts & incoming)
        for (std::size_t j = 0; j < layer.fan_in(); ++j) add(offset + i * layer.fan_in() + j);
      if (parts & (incoming | bias)) add(offset + layer.width() * layer.fan_in() + i);
      for (std::size_t o = 0; o < next.width(); ++o) {
        if (parts & outgoing) add(next_offset + o * next.fan_in() + i);
        if (parts & next_biases) add(next_offset + next.width() * next.fan_in() + o);
      }
    }
  }
  return cover;
}

// The four mechanisms in the order they are tried.
std::vector<MechanismCover> mechanism_covers(const Network& network, const NeuronActivity& activity) {
  const std::vector<char> duplicated = duplicated_neurons(network);
  std::vector<char> zero_outgoing, dead, always_active;
  std::size_t n = 0;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& next = network.layers[k + 1];
    for (std::size_t i = 0; i < network.layers[k].width(); ++i, ++n) {
      bool is_zero = true;
      for (std::size_t o = 0; o < next.width() && is_zero; ++o) is_zero = next.weights(o, i) == 0;
      zero_outgoing.push_back(is_zero ? 1 : 0);
      dead.push_back(activity.ever_on[n] ? 0 : 1);
      always_active.push_back(activity.ever_not_on[n] ? 0 : 1);
    }
  }
  std::vector<MechanismCover> covers;
  covers.push_back(mechanism_cover(network, Mechanism::zero_outgoing_weights, incoming, zero_outgoing));
  covers.push_back(mechanism_cover(network, Mechanism::dead_neuron, incoming | outgoing, dead));
  covers.push_back(mechanism_cover(network, Mechanism::always_active_neuron, bias | next_biases, always_active));
  covers.push_back(mechanism_cover(network, Mechanism::duplicate_neurons, incoming | outgoing, duplicated));
  return covers;
}

// Names the mechanism behind one extra kernel vector by its support: the
// first mechanism that covers every column of it.
void recognise_mechanism(const std::vector<MechanismCover>& covers, const std::vector<std::size_t>& support,
                         ExtraKernelDirection& direction) {
  if (support.empty()) return;
  for (const MechanismCover& cover : covers) {
    std::vector<std::size_t> neurons;
    bool is_covered = true;
    for (std::size_t c : support) {
      const std::vector<std::size_t>& covering = cover.covering[c];
      if (covering.empty()) {
        is_covered = false;
        break;
      }
      neurons.insert(neurons.end(), covering.begin(), covering.end());
    }
    if (!is_covered) continue;
    std::sort(neurons.begin(), neurons.end());
    neurons.erase(std::unique(neurons.begin(), neurons.end()), neurons.end());
    direction.mechanism = cover.mechanism;
    direction.neurons = std::move(neurons);
    return;
  }
}

}  // namespace

std::vector<ExtraKernelDirection> name_extra_directions(const Network& network, const NeuronActivity& activity,
                                                        SparseRationalRows&& extra, unsigned threads,
                                                        const std::function<void(std::size_t)>& progress) {
  const std::vector<MechanismCover> covers = mechanism_covers(network, activity);
  const std::size_t rows = extra.rows.size();
  std::vector<ExtraKernelDirection> named(rows);
  const std::size_t chunk = 64 * static_cast<std::size_t>(std::max(1u, threads));
  for (std::size_t start = 0; start < rows; start += chunk) {
    poll_stop();
    progress(start);
    const std::size_t count = std::min(chunk, rows - start);
    parallel_for(count, threads, [&](std::size_t i) {
      const std::size_t r = start + i;
      ExtraKernelDirection& direction = named[r];
      std::vector<std::size_t> support;
      for (const auto& entry : extra.rows[r]) support.push_back(entry.first);
      direction.entries = std::move(extra.rows[r]);  // each row is read by this call only
      direction.length = extra.cols;
      recognise_mechanism(covers, support, direction);
    });
  }
  return named;
}

}  // namespace pleat::detail
