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
// whose parameters meet the support.
struct MechanismCover {
  Mechanism mechanism;
  unsigned parts;
  std::vector<char> qualifies;  // by hidden neuron
};

// Where a column is: W_k[i, j], or b_k[i] (is_bias), and the first hidden
// neuron of each layer.
struct ColumnPlaces {
  std::vector<std::size_t> offset, first_neuron;  // per layer (offset: its first column)
  const Network& network;
  explicit ColumnPlaces(const Network& network_in) : network(network_in) {
    for (std::size_t k = 0, n = 0; k < network.depth(); n += network.layers[k].width(), ++k) {
      offset.push_back(network.parameter_offset(k));
      first_neuron.push_back(n);
    }
  }
};

// Appends to `neurons` the hidden neurons whose parameters in the cover's
// parts hold column c (incoming: W_k[i,:] and b_k[i] of neuron i of layer
// k; bias: b_k[i]; outgoing: W_{k+1}[:,i]; next biases: b_{k+1}[:]);
// false when there are none. Read off the column's place, not from a table
// of every column's neurons built first (four tables of D lists: on
// 2,5,5,5,5,1 most of the naming's time, for 30 directions of one or two
// entries).
bool add_covering(const MechanismCover& cover, const ColumnPlaces& places, std::size_t c,
                  std::vector<std::size_t>& neurons) {
  const Network& network = places.network;
  const std::size_t k = static_cast<std::size_t>(
      std::upper_bound(places.offset.begin(), places.offset.end(), c) - places.offset.begin() - 1);
  const Layer& layer = network.layers[k];
  const std::size_t offset = c - places.offset[k], weights = layer.width() * layer.fan_in();
  const bool is_bias = offset >= weights, is_hidden = k + 1 < network.depth();
  const std::size_t i = is_bias ? offset - weights : offset / layer.fan_in(), j = offset % layer.fan_in();
  const std::size_t before = neurons.size();
  if (k > 0) {  // layer k - 1 is hidden: its neurons' outgoing weights and next biases
    if (!is_bias && (cover.parts & outgoing) && cover.qualifies[places.first_neuron[k - 1] + j])
      neurons.push_back(places.first_neuron[k - 1] + j);
    if (is_bias && (cover.parts & next_biases))
      for (std::size_t m = 0; m < network.layers[k - 1].width(); ++m)
        if (cover.qualifies[places.first_neuron[k - 1] + m]) neurons.push_back(places.first_neuron[k - 1] + m);
  }
  const unsigned own = is_bias ? (incoming | bias) : incoming;
  if (is_hidden && (cover.parts & own) && cover.qualifies[places.first_neuron[k] + i])
    neurons.push_back(places.first_neuron[k] + i);
  return neurons.size() > before;
}

// The four mechanisms in the order they are tried.
std::vector<MechanismCover> mechanism_covers(const Network& network, const NeuronActivity& activity) {
  std::vector<char> duplicated = duplicated_neurons(network);
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
  covers.push_back({Mechanism::zero_outgoing_weights, incoming, std::move(zero_outgoing)});
  covers.push_back({Mechanism::dead_neuron, incoming | outgoing, std::move(dead)});
  covers.push_back({Mechanism::always_active_neuron, bias | next_biases, std::move(always_active)});
  covers.push_back({Mechanism::duplicate_neurons, incoming | outgoing, std::move(duplicated)});
  return covers;
}

// Names the mechanism behind one extra kernel vector by its support: the
// first mechanism that covers every column of it.
void recognise_mechanism(const std::vector<MechanismCover>& covers, const ColumnPlaces& places,
                         const std::vector<std::size_t>& support, ExtraKernelDirection& direction) {
  if (support.empty()) return;
  std::vector<std::size_t> neurons;
  for (const MechanismCover& cover : covers) {
    neurons.clear();
    bool is_covered = true;
    for (std::size_t c : support)
      if (!add_covering(cover, places, c, neurons)) {
        is_covered = false;
        break;
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
  const ColumnPlaces places(network);
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
      recognise_mechanism(covers, places, support, direction);
    });
  }
  return named;
}

}  // namespace pleat::detail
