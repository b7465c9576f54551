#include "enumerate/detail/crossing.hpp"

#include "core/errors.hpp"
#include "core/filtered_sign.hpp"
#include "core/stop.hpp"
#include "enumerate/detail/walk_helpers.hpp"

#include <algorithm>
#include <string>

namespace pleat::detail {
namespace {

// A crossing point where more than this many neurons are transversal on the far
// side would need 2^n candidate patterns; no sane network gets close.
constexpr std::size_t max_branching_neurons = 16;

// True when row r of m equals lambda * v for some lambda (v != 0).
bool is_row_parallel(const RationalMatrix& m, std::size_t r, const RationalVector& v) {
  std::size_t pivot = 0;
  while (pivot < v.size() && v[pivot] == 0) ++pivot;
  const Rational lambda = m(r, pivot) / v[pivot];
  for (std::size_t c = 0; c < v.size(); ++c)
    if (m(r, c) != lambda * v[c]) return false;
  return true;
}

// What a crossing at q needs: the near side's pre-activation maps (valid on
// the near region's closure, so they give every neuron's true value at q) and
// the direction to the far side.
struct Crossing {
  const Network& network;
  const PatternMaps& near_maps;
  std::vector<std::vector<int>> signs_at_q;  // per ReLU layer, the sign of each pre-activation at q
  const RationalVector& direction;
  const RationalVector& facet_normal;
};

// The far side's pre-activation map of layer k, from the near maps below the
// first layer whose states changed and the far states (in `pattern`) above it.
AffineMap far_preactivation(const Crossing& crossing, std::size_t k, std::size_t first_changed,
                            const ActivationPattern& near_pattern, const ActivationPattern& pattern) {
  const Network& network = crossing.network;
  AffineMap post = first_changed == 0
                       ? identity_map(network.input_dim)
                       : apply_states(crossing.near_maps.preactivation[first_changed - 1],
                                      std::span(near_pattern.states)
                                          .subspan(network.first_neuron_of_layer(first_changed - 1),
                                                   network.layers[first_changed - 1].width()));
  for (std::size_t j = first_changed; j < k; ++j, poll_stop())
    post = apply_states(compose_layer(network.layers[j], post),
                        std::span(pattern.states).subspan(network.first_neuron_of_layer(j), network.layers[j].width()));
  return compose_layer(network.layers[k], post);
}

// Decides the far-side states of layers k, k+1, ... given those below (in
// `pattern`) and appends every completed pattern to `out`. Neurons nonzero at
// q keep their sign; only a layer with a neuron that vanishes at q needs its
// far-side map, and that map is the near one while no layer below changed
// (the common case: no exact map is recomputed at all).
void extend_across(const Crossing& crossing, std::size_t k, std::size_t first_changed,
                   const ActivationPattern& near_pattern, ActivationPattern& pattern,
                   std::vector<ActivationPattern>& out) {
  const Network& network = crossing.network;
  if (k == relu_layers(network)) {
    out.push_back(pattern);
    return;
  }
  poll_stop();
  const std::vector<int>& values = crossing.signs_at_q[k];
  const std::size_t first = network.first_neuron_of_layer(k);
  const bool has_vanishing = std::any_of(values.begin(), values.end(), [](int v) { return v == 0; });
  std::optional<AffineMap> recomputed;
  if (has_vanishing && first_changed < k)
    recomputed = far_preactivation(crossing, k, first_changed, near_pattern, pattern);
  const AffineMap& pre = recomputed ? *recomputed : crossing.near_maps.preactivation[k];
  std::vector<std::size_t> transversal;
  for (std::size_t i = 0; i < values.size(); ++i) {
    NeuronState& state = pattern.states[first + i];
    if (values[i] > 0) state = NeuronState::on;
    else if (values[i] < 0) state = NeuronState::off;
    else if (is_zero_row(pre.linear, i)) state = NeuronState::zero_on_region;
    else if (is_row_parallel(pre.linear, i, crossing.facet_normal))
      state = dot(pre.linear.row(i), crossing.direction) > 0 ? NeuronState::on : NeuronState::off;
    else transversal.push_back(i);
  }
  if (transversal.size() > max_branching_neurons)
    throw limit_error("crossing a facet: " + std::to_string(transversal.size()) +
                      " bent hyperplanes meet transversally at one facet point; pleat branches over at most " +
                      std::to_string(max_branching_neurons) + " (2^n candidate regions)");
  const std::size_t combinations = std::size_t{1} << transversal.size();
  for (std::size_t mask = 0; mask < combinations; ++mask) {
    for (std::size_t b = 0; b < transversal.size(); ++b)
      pattern.states[first + transversal[b]] = (mask >> b) & 1 ? NeuronState::on : NeuronState::off;
    const bool is_unchanged = std::equal(pattern.states.begin() + static_cast<std::ptrdiff_t>(first),
                                         pattern.states.begin() + static_cast<std::ptrdiff_t>(first + values.size()),
                                         near_pattern.states.begin() + static_cast<std::ptrdiff_t>(first));
    const std::size_t changed = first_changed < k ? first_changed : (is_unchanged ? no_index : k);
    extend_across(crossing, k + 1, changed, near_pattern, pattern, out);
  }
}

// sign(row r of map at q), exactly.
int exact_sign_at(const AffineMap& map, std::size_t r, const RationalVector& q) {
  Rational sum = map.offset[r];
  for (std::size_t c = 0; c < q.size(); ++c)
    if (sgn(map.linear(r, c)) != 0) sum += map.linear(r, c) * q[c];
  return sgn(sum);
}

// The sign of every pre-activation at q per ReLU layer: filtered against the
// images when given (exact where the filter cannot decide), else exact.
std::vector<std::vector<int>> signs_at(const Network& network, const PatternMaps& maps, const MapImages* images,
                                       const RationalVector& q) {
  std::vector<double> x(q.size());
  if (images)
    for (std::size_t c = 0; c < q.size(); ++c) x[c] = filter_image(q[c]);
  std::vector<std::vector<int>> signs(relu_layers(network));
  for (std::size_t k = 0; k < signs.size(); ++k) {
    const AffineMap& map = maps.preactivation[k];
    const std::size_t width = q.size() + 1;
    signs[k].resize(map.offset.size());
    for (std::size_t r = 0; r < map.offset.size(); ++r) {
      std::optional<int> sign;
      if (images) {
        const double* row = images->layers[k].data() + r * width;
        sign = filtered_affine_sign(row, x.data(), q.size(), row[q.size()]);
      }
      signs[k][r] = sign ? *sign : exact_sign_at(map, r, q);
    }
  }
  return signs;
}

}  // namespace

MapImages map_images(const Network& network, const PatternMaps& maps) {
  MapImages images;
  for (std::size_t k = 0; k < relu_layers(network); ++k) {
    const AffineMap& map = maps.preactivation[k];
    const std::size_t width = map.linear.cols() + 1;
    std::vector<double> values(map.offset.size() * width);
    for (std::size_t r = 0; r < map.offset.size(); ++r) {
      for (std::size_t c = 0; c + 1 < width; ++c) values[r * width + c] = filter_image(map.linear(r, c));
      values[r * width + width - 1] = filter_image(map.offset[r]);
    }
    images.layers.push_back(std::move(values));
  }
  return images;
}

std::vector<ActivationPattern> patterns_across_filtered(const Network& network, const ActivationPattern& near_pattern,
                                                        const PatternMaps& near_maps, const MapImages* images,
                                                        const RationalVector& q, const RationalVector& direction,
                                                        const RationalVector& facet_normal) {
  Crossing crossing{network, near_maps, signs_at(network, near_maps, images, q), direction, facet_normal};
  ActivationPattern pattern = near_pattern;
  std::vector<ActivationPattern> out;
  extend_across(crossing, 0, no_index, near_pattern, pattern, out);
  std::sort(out.begin(), out.end());
  out.erase(std::unique(out.begin(), out.end()), out.end());
  return out;
}

namespace {

// b parallel to a (every 2 x 2 minor zero), exactly.
bool is_parallel(const Integer* b, std::span<const Integer* const> a) {
  for (std::size_t i = 0; i < a.size(); ++i)
    for (std::size_t k = i + 1; k < a.size(); ++k)
      if (b[i] * *a[k] != b[k] * *a[i]) return false;
  return true;
}

}  // namespace

std::optional<ActivationPattern> pattern_across_in_integers(const Network& network, const std::vector<IntegerMap>& maps,
                                                            const ActivationPattern& near,
                                                            const std::vector<char>& vanishing,
                                                            std::span<const Integer* const> facet_normal) {
  const std::size_t n = facet_normal.size();
  ActivationPattern far = near;
  bool changed_below = false;
  for (std::size_t k = 0; k < relu_layers(network); ++k) {
    const IntegerMap& pre = maps[k];
    const std::size_t first = network.first_neuron_of_layer(k);
    bool changed_here = false;
    for (std::size_t r = 0; r < pre.rows; ++r) {
      // Every other neuron is nonzero at q and keeps its sign.
      if (!vanishing[first + r] && near.states[first + r] != NeuronState::zero_on_region) continue;
      if (changed_below) return std::nullopt;  // the far side's map differs: extend_across
      const Integer* b = pre.linear.data() + n * r;
      NeuronState state;
      if (is_zero_linear(pre, r)) {
        state = NeuronState::zero_on_region;
      } else if (is_parallel(b, facet_normal)) {
        // Parallel to the facet's normal a; across is the direction -a.
        Integer along = 0;
        for (std::size_t c = 0; c < n; ++c) along += b[c] * *facet_normal[c];
        state = sgn(along) < 0 ? NeuronState::on : NeuronState::off;
      } else {
        return std::nullopt;  // transversal: both states occur, extend_across branches
      }
      NeuronState& slot = far.states[first + r];
      if (slot != state) changed_here = true;
      slot = state;
    }
    changed_below = changed_below || changed_here;
  }
  return far;
}

}  // namespace pleat::detail
