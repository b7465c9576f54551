#include "enumerate/walker.hpp"

#include "core/filtered_sign.hpp"
#include "core/jacobian.hpp"
#include "core/errors.hpp"
#include "lp/plane_cell.hpp"
#include "lp/space_cell.hpp"

#include <algorithm>
#include <array>
#include <chrono>
#include <condition_variable>
#include <limits>
#include <map>
#include <mutex>
#include <numeric>
#include <set>
#include <span>
#include <thread>
#include <unordered_map>
#include <unordered_set>
#include <variant>

namespace pleat {
namespace {

constexpr std::size_t no_index = std::numeric_limits<std::size_t>::max();
// A crossing point where more than this many neurons are transversal on the far
// side would need 2^n candidate patterns; no sane network gets close.
constexpr std::size_t max_branching_neurons = 16;

bool is_zero_row(const RationalMatrix& m, std::size_t row) {
  for (std::size_t c = 0; c < m.cols(); ++c)
    if (m(row, c) != 0) return false;
  return true;
}

Rational dot(const RationalVector& a, const RationalVector& b) {
  Rational sum = 0;
  for (std::size_t i = 0; i < a.size(); ++i) sum += a[i] * b[i];
  return sum;
}

// True when row r of m equals lambda * v for some lambda (v != 0).
bool is_row_parallel(const RationalMatrix& m, std::size_t r, const RationalVector& v) {
  std::size_t pivot = 0;
  while (pivot < v.size() && v[pivot] == 0) ++pivot;
  const Rational lambda = m(r, pivot) / v[pivot];
  for (std::size_t c = 0; c < v.size(); ++c)
    if (m(r, c) != lambda * v[c]) return false;
  return true;
}

// Scales (normal, offset) by one positive factor so that the normal becomes a
// primitive integer vector.
void make_primitive(RationalVector& normal, Rational& offset) {
  Integer denominators_lcm = 1;
  for (const auto& v : normal) mpz_lcm(denominators_lcm.get_mpz_t(), denominators_lcm.get_mpz_t(), v.get_den_mpz_t());
  Integer numerators_gcd = 0;
  for (const auto& v : normal) {
    Integer scaled = v.get_num() * (denominators_lcm / v.get_den());
    mpz_gcd(numerators_gcd.get_mpz_t(), numerators_gcd.get_mpz_t(), scaled.get_mpz_t());
  }
  const Rational factor = Rational(denominators_lcm) / Rational(numerators_gcd);
  for (auto& v : normal) v *= factor;
  offset *= factor;
}

std::size_t relu_layers(const Network& network) { return network.relu_layer_count(); }

// The network's layers over one common denominator each, for fraction-free
// layer maps: layer k is (weights / denominator, bias / denominator) with
// integer weights and bias. Built once per walk.
struct IntegerLayer {
  std::size_t rows = 0, cols = 0;
  std::vector<Integer> weights;  // rows x cols, row-major
  std::vector<Integer> bias;
  Integer denominator = 1;
  bool is_relu = true;
};

std::vector<IntegerLayer> integer_layers(const Network& network) {
  std::vector<IntegerLayer> layers;
  for (const Layer& layer : network.layers) {
    IntegerLayer out;
    out.rows = layer.weights.rows();
    out.cols = layer.weights.cols();
    out.is_relu = layer.activation == Activation::relu;
    for (std::size_t r = 0; r < out.rows; ++r) {
      for (std::size_t c = 0; c < out.cols; ++c)
        mpz_lcm(out.denominator.get_mpz_t(), out.denominator.get_mpz_t(), layer.weights(r, c).get_den_mpz_t());
      mpz_lcm(out.denominator.get_mpz_t(), out.denominator.get_mpz_t(), layer.bias[r].get_den_mpz_t());
    }
    const auto scaled = [&](const Rational& value) { return Integer(value.get_num() * (out.denominator / value.get_den())); };
    for (std::size_t r = 0; r < out.rows; ++r)
      for (std::size_t c = 0; c < out.cols; ++c) out.weights.push_back(scaled(layer.weights(r, c)));
    for (std::size_t r = 0; r < out.rows; ++r) out.bias.push_back(scaled(layer.bias[r]));
    layers.push_back(std::move(out));
  }
  return layers;
}

// An affine map of x with integer entries over one positive denominator.
struct IntegerMap {
  std::size_t rows = 0, cols = 0;
  std::vector<Integer> linear;  // rows x cols
  std::vector<Integer> offset;
  Integer denominator = 1;
};

// Layer k's pre-activation from the previous post-activation, without a gcd:
// (M (P x + p) / E + B) / D = (M P x + M p + E B) / (D E).
void compose_integer(const IntegerLayer& layer, const IntegerMap& input, IntegerMap& out) {
  out.rows = layer.rows;
  out.cols = input.cols;
  out.linear.assign(out.rows * out.cols, Integer(0));
  out.offset.assign(out.rows, Integer(0));
  // Rows of neurons that are off contribute nothing: skip them.
  std::vector<char> is_zero_row(input.rows, 1);
  for (std::size_t t = 0; t < input.rows; ++t) {
    if (mpz_sgn(input.offset[t].get_mpz_t()) != 0) is_zero_row[t] = 0;
    for (std::size_t c = 0; c < input.cols && is_zero_row[t]; ++c)
      if (mpz_sgn(input.linear[t * input.cols + c].get_mpz_t()) != 0) is_zero_row[t] = 0;
  }
  for (std::size_t r = 0; r < layer.rows; ++r) {
    mpz_ptr offset = out.offset[r].get_mpz_t();
    mpz_mul(offset, input.denominator.get_mpz_t(), layer.bias[r].get_mpz_t());
    for (std::size_t t = 0; t < layer.cols; ++t) {
      mpz_srcptr weight = layer.weights[r * layer.cols + t].get_mpz_t();
      if (is_zero_row[t] || mpz_sgn(weight) == 0) continue;
      mpz_addmul(offset, weight, input.offset[t].get_mpz_t());
      for (std::size_t c = 0; c < input.cols; ++c)
        mpz_addmul(out.linear[r * out.cols + c].get_mpz_t(), weight, input.linear[t * input.cols + c].get_mpz_t());
    }
  }
  out.denominator = layer.denominator * input.denominator;
}

// Fraction-free layer maps in 128-bit integers, when a bound proves they fit:
// with S_k = max_r sum_t |W_k[r][t]| and E_k the product of the denominators
// of layers 1..k, every entry of layer k's linear part is at most
// L_k = S_k L_(k-1) (L_0 = 1) and every offset at most
// O_k = E_(k-1) max_r |b_k[r]| + S_k O_(k-1) (O_0 = 0), whatever the pattern
// (a neuron that is off only drops terms); each partial sum of a row is
// bounded the same way. All of them below 2^125 and every product below is
// exact in __int128.
__extension__ typedef __int128 Wide;
__extension__ typedef unsigned __int128 UnsignedWide;

struct WideLayers {
  std::vector<std::vector<Wide>> weights;  // per layer, rows x cols
  std::vector<std::vector<Wide>> bias;
  std::vector<Wide> input_denominator;     // per layer: E_(k-1)
  std::vector<Integer> map_denominator;    // per layer: E_k
};

std::optional<WideLayers> wide_layers(const std::vector<IntegerLayer>& layers) {
  const Integer limit = Integer(1) << 125;
  Integer linear_bound = 1, offset_bound = 0, denominator = 1;
  WideLayers wide;
  const auto narrow = [](const Integer& value) {
    Integer magnitude = abs(value);
    const Wide low = static_cast<Wide>(mpz_get_ui(magnitude.get_mpz_t()));
    magnitude >>= 64;
    const Wide result = (static_cast<Wide>(mpz_get_ui(magnitude.get_mpz_t())) << 64) | low;
    return sgn(value) < 0 ? -result : result;
  };
  for (const IntegerLayer& layer : layers) {
    Integer row_sum_bound = 0, bias_bound = 0;
    for (std::size_t r = 0; r < layer.rows; ++r) {
      Integer row_sum = 0;
      for (std::size_t t = 0; t < layer.cols; ++t) row_sum += abs(layer.weights[r * layer.cols + t]);
      row_sum_bound = std::max(row_sum_bound, row_sum);
      bias_bound = std::max(bias_bound, Integer(abs(layer.bias[r])));
    }
    linear_bound *= row_sum_bound;
    offset_bound = denominator * bias_bound + row_sum_bound * offset_bound;
    if (linear_bound >= limit || offset_bound >= limit || denominator >= limit) return std::nullopt;
    std::vector<Wide> weights(layer.weights.size()), bias(layer.bias.size());
    for (std::size_t i = 0; i < weights.size(); ++i) weights[i] = narrow(layer.weights[i]);
    for (std::size_t i = 0; i < bias.size(); ++i) bias[i] = narrow(layer.bias[i]);
    wide.weights.push_back(std::move(weights));
    wide.bias.push_back(std::move(bias));
    wide.input_denominator.push_back(narrow(denominator));
    denominator *= layer.denominator;
    if (denominator >= limit) return std::nullopt;
    wide.map_denominator.push_back(denominator);
  }
  return wide;
}

// Layer k's pre-activation rows (n linear entries, then the offset) from the
// previous layer's rows, only those with active[t] (neurons that are on).
void compose_wide(const IntegerLayer& layer, const WideLayers& wide, std::size_t k, std::size_t n,
                  const std::vector<Wide>& input, const std::vector<char>& active, std::vector<Wide>& out) {
  const std::size_t width = n + 1;
  out.assign(layer.rows * width, 0);
  const std::vector<Wide>& weights = wide.weights[k];
  for (std::size_t r = 0; r < layer.rows; ++r) {
    Wide* row = out.data() + r * width;
    row[n] = wide.input_denominator[k] * wide.bias[k][r];
    for (std::size_t t = 0; t < layer.cols; ++t) {
      const Wide weight = weights[r * layer.cols + t];
      if (!active[t] || weight == 0) continue;
      const Wide* from = input.data() + t * width;
      for (std::size_t c = 0; c < width; ++c) row[c] += weight * from[c];
    }
  }
}

void set_integer(Integer& out, Wide value) {
  const bool is_negative = value < 0;
  const UnsignedWide magnitude = is_negative ? -static_cast<UnsignedWide>(value) : static_cast<UnsignedWide>(value);
  const auto high = static_cast<unsigned long>(magnitude >> 64);
  const auto low = static_cast<unsigned long>(magnitude);
  mpz_ptr target = out.get_mpz_t();
  if (high == 0) {
    mpz_set_ui(target, low);
  } else {
    mpz_set_ui(target, high);
    mpz_mul_2exp(target, target, 64);
    mpz_add_ui(target, target, low);
  }
  if (is_negative) mpz_neg(target, target);
}

// compose_integer with the input's rows limited to those with active[t]
// (the neurons that are on): the post-activation map without building it.
// Reuses out's integers (no allocation once the buffers have grown).
void compose_active(const IntegerLayer& layer, const IntegerMap& input, const std::vector<char>& active,
                    IntegerMap& out) {
  out.rows = layer.rows;
  out.cols = input.cols;
  out.linear.resize(out.rows * out.cols);
  out.offset.resize(out.rows);
  for (Integer& value : out.linear) value = 0;
  for (std::size_t r = 0; r < layer.rows; ++r) {
    mpz_ptr offset = out.offset[r].get_mpz_t();
    mpz_mul(offset, input.denominator.get_mpz_t(), layer.bias[r].get_mpz_t());
    for (std::size_t t = 0; t < layer.cols; ++t) {
      mpz_srcptr weight = layer.weights[r * layer.cols + t].get_mpz_t();
      if (!active[t] || mpz_sgn(weight) == 0) continue;
      mpz_addmul(offset, weight, input.offset[t].get_mpz_t());
      for (std::size_t c = 0; c < input.cols; ++c)
        mpz_addmul(out.linear[r * out.cols + c].get_mpz_t(), weight, input.linear[t * input.cols + c].get_mpz_t());
    }
  }
  mpz_mul(out.denominator.get_mpz_t(), layer.denominator.get_mpz_t(), input.denominator.get_mpz_t());
}

AffineMap to_rational_map(const IntegerMap& map) {
  AffineMap out{RationalMatrix(map.rows, map.cols), RationalVector(map.rows)};
  for (std::size_t r = 0; r < map.rows; ++r) {
    for (std::size_t c = 0; c < map.cols; ++c) {
      Rational& value = out.linear(r, c);
      mpq_set_num(value.get_mpq_t(), map.linear[r * map.cols + c].get_mpz_t());
      mpq_set_den(value.get_mpq_t(), map.denominator.get_mpz_t());
      mpq_canonicalize(value.get_mpq_t());
    }
    mpq_set_num(out.offset[r].get_mpq_t(), map.offset[r].get_mpz_t());
    mpq_set_den(out.offset[r].get_mpq_t(), map.denominator.get_mpz_t());
    mpq_canonicalize(out.offset[r].get_mpq_t());
  }
  return out;
}

// maps_on_pattern (core/evaluate.hpp) with the same exact values, computed in
// integers over one denominator per layer: one gcd per entry instead of one per
// product, which makes the walk's per-region maps several times cheaper.
PatternMaps maps_on_pattern_fraction_free(const std::vector<IntegerLayer>& layers, std::size_t input_dim,
                                          const ActivationPattern& pattern) {
  PatternMaps maps;
  maps.preactivation.reserve(layers.size());
  IntegerMap post{input_dim, input_dim, std::vector<Integer>(input_dim * input_dim, Integer(0)),
                  std::vector<Integer>(input_dim, Integer(0)), Integer(1)};
  for (std::size_t k = 0; k < input_dim; ++k) post.linear[k * input_dim + k] = 1;
  IntegerMap pre;
  std::size_t first_neuron = 0;
  for (const IntegerLayer& layer : layers) {
    poll_stop();  // deep networks: one region's maps can take many seconds
    compose_integer(layer, post, pre);
    maps.preactivation.push_back(to_rational_map(pre));
    if (layer.is_relu) {
      for (std::size_t r = 0; r < pre.rows; ++r) {
        if (pattern.states[first_neuron + r] == NeuronState::on) continue;
        for (std::size_t c = 0; c < pre.cols; ++c) pre.linear[r * pre.cols + c] = 0;
        pre.offset[r] = 0;
      }
      first_neuron += layer.rows;
    }
    std::swap(post, pre);
  }
  maps.output = layers.back().is_relu ? to_rational_map(post) : maps.preactivation.back();
  return maps;
}

}  // namespace

namespace {

// build_pattern_cell given the pattern's maps (however they were computed).
std::optional<PatternCell> cell_from_maps(const Network& network, const Domain& domain,
                                          const ActivationPattern& pattern, PatternMaps maps) {
  PatternCell result;
  result.maps = std::move(maps);
  result.cell.dim = network.input_dim;
  for (std::size_t k = 0; k < relu_layers(network); ++k) {
    const AffineMap& pre = result.maps.preactivation[k];
    const std::size_t first = network.first_neuron_of_layer(k);
    for (std::size_t i = 0; i < pre.offset.size(); ++i) {
      const NeuronState state = pattern.states[first + i];
      const bool identically_zero = is_zero_row(pre.linear, i) && pre.offset[i] == 0;
      if (state == NeuronState::zero_at_point) throw usage_error("build_pattern_cell: '=' is not a region state");
      if (state == NeuronState::zero_on_region) {
        if (!identically_zero) return std::nullopt;
        continue;
      }
      if (identically_zero) return std::nullopt;  // canonical pattern would say 'z'
      const int sign = state == NeuronState::on ? 1 : -1;
      if (is_zero_row(pre.linear, i)) {
        if (sign * pre.offset[i] > 0) continue;  // constant and satisfied everywhere
        return std::nullopt;
      }
      lp::Constraint constraint{pre.linear.row(i), pre.offset[i]};
      if (sign < 0) {
        for (auto& v : constraint.normal) v = -v;
        constraint.offset = -constraint.offset;
      }
      result.cell.constraints.push_back(std::move(constraint));
      result.constraint_neuron.push_back(first + i);
      result.constraint_domain_side.push_back(no_index);
    }
  }
  for (std::size_t s = 0; s < domain.constraints.size(); ++s) {
    result.cell.constraints.push_back(domain.constraints[s]);
    result.constraint_neuron.push_back(no_index);
    result.constraint_domain_side.push_back(s);
  }
  return result;
}

}  // namespace

std::optional<PatternCell> build_pattern_cell(const Network& network, const Domain& domain,
                                              const ActivationPattern& pattern) {
  if (pattern.states.size() != network.relu_neuron_count())
    throw usage_error("build_pattern_cell: pattern has the wrong number of neurons");
  return cell_from_maps(network, domain, pattern, maps_on_pattern(network, pattern));
}

std::optional<ActivationPattern> region_pattern_at(const Network& network, const RationalVector& point) {
  if (point.size() != network.input_dim) throw usage_error("region_pattern_at: point has the wrong dimension");
  ActivationPattern pattern = pattern_around_point(network, point);
  for (NeuronState state : pattern.states)
    if (state == NeuronState::zero_at_point) return std::nullopt;  // on a bent hyperplane
  return pattern;
}

namespace {

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

}  // namespace

namespace {

// Double images (core/filtered_sign.hpp) of a region's pre-activation maps,
// per ReLU layer: each row's linear part, then its offset. For filtered signs
// at crossing points; built once per region.
struct MapImages {
  std::vector<std::vector<double>> layers;
};

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

}  // namespace

std::vector<ActivationPattern> patterns_across(const Network& network, const ActivationPattern& near_pattern,
                                               const PatternMaps& near_maps, const RationalVector& q,
                                               const RationalVector& direction, const RationalVector& facet_normal) {
  return patterns_across_filtered(network, near_pattern, near_maps, nullptr, q, direction, facet_normal);
}

std::vector<ActivationPattern> patterns_across(const Network& network, const ActivationPattern& near_pattern,
                                               const RationalVector& q, const RationalVector& direction,
                                               const RationalVector& facet_normal) {
  return patterns_across(network, near_pattern, maps_on_pattern(network, near_pattern), q, direction, facet_normal);
}

namespace {

// The open cone of a candidate's cell at a point q of its closure: the
// constraints that vanish at q, made homogeneous. The candidate touches q with
// interior iff this cone has interior.
lp::Polyhedron tangent_cone_at(const lp::Polyhedron& cell, const RationalVector& q) {
  lp::Polyhedron cone{cell.dim, {}};
  for (const auto& c : cell.constraints)
    if (dot(c.normal, q) + c.offset == 0) cone.constraints.push_back(lp::Constraint{c.normal, Rational(0)});
  return cone;
}

struct Processed {
  Region region;
  bool is_region = false;
  std::size_t degenerate_crossings = 0;
};

class RegionProcessor {
 public:
  RegionProcessor(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only = false,
                  bool is_plane_path_allowed = true)
      : network_(network),
        domain_(domain),
        keep_certificates_(keep_certificates),
        exact_only_(exact_only),
        layers_(integer_layers(network)),
        oracle_(lp::FilterTolerances{.exact_only = exact_only}) {
    const std::size_t n = network.input_dim;
    is_plane_path_ = n == 2 && !exact_only && is_plane_path_allowed;
    is_space_path_ = n == 3 && !exact_only && is_plane_path_allowed;
    if (!is_plane_path_ && !is_space_path_) return;
    wide_ = wide_layers(layers_);
    wide_identity_.assign(n * (n + 1), 0);
    identity_ = IntegerMap{n, n, std::vector<Integer>(n * n, Integer(0)), std::vector<Integer>(n, Integer(0)), Integer(1)};
    for (std::size_t k = 0; k < n; ++k) {
      wide_identity_[k * (n + 1) + k] = 1;  // row k: e_k | 0
      identity_.linear[k * n + k] = 1;
    }
    for (const lp::Constraint& side : domain.constraints) {
      // Scaled by the denominators' lcm: the same half-space with integer coefficients.
      Integer scale = 1;
      for (const Rational& value : side.normal) mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), value.get_den_mpz_t());
      mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), side.offset.get_den_mpz_t());
      const auto scaled = [&](const Rational& value) { return Integer(value.get_num() * (scale / value.get_den())); };
      if (n == 2) {
        domain_rows_.push_back(lp::PlaneRow{scaled(side.normal[0]), scaled(side.normal[1]), scaled(side.offset)});
      } else {
        domain_space_rows_.push_back(
            lp::SpaceRow{{scaled(side.normal[0]), scaled(side.normal[1]), scaled(side.normal[2])}, scaled(side.offset)});
      }
    }
  }

  Processed process(const ActivationPattern& pattern) {
    if (pattern.states.size() != network_.relu_neuron_count())
      throw usage_error("build_pattern_cell: pattern has the wrong number of neurons");
    if (is_plane_path_)
      if (std::optional<Processed> result = process_in_plane(pattern)) return std::move(*result);
    if (is_space_path_)
      if (std::optional<Processed> result = process_in_space(pattern)) return std::move(*result);
    return process_with_oracle(pattern);
  }

  lp::QueryCounts counts() const {
    lp::QueryCounts total = oracle_.counts();
    total += plane_counts_;
    return total;
  }

 private:
  // The general path: rational cell, lp::Oracle queries (any dimension).
  Processed process_with_oracle(const ActivationPattern& pattern) {
    Processed result;
    auto cell = build_cell(pattern);
    if (!cell) return result;
    auto centre = oracle_.find_centre(cell->cell, Rational(1));
    auto* interior = std::get_if<lp::InteriorPoint>(&centre);
    if (!interior) return result;
    result.is_region = true;
    Region& region = result.region;
    region.pattern = pattern;
    region.point = interior->point;
    region.affine = cell->maps.output;
    lp::FacetClassification classification = oracle_.classify_facets(cell->cell, *interior, keep_certificates_);
    std::optional<MapImages> images;
    region.facets.reserve(static_cast<std::size_t>(std::count_if(
        classification.groups.begin(), classification.groups.end(), [](const lp::FacetGroup& g) { return g.is_facet(); })));
    for (const auto& group : classification.groups) {
      if (!group.is_facet()) continue;
      region.facets.push_back(make_facet(*cell, pattern, group, images, result.degenerate_crossings));
      if (region.facets.back().domain_side) region.touches_domain_boundary = true;
    }
    std::optional<lp::BoundednessVerdict> boundedness = decide_boundedness(*cell, region.bounded);
    if (has_zero_on_region(pattern)) region.nonsmooth_neurons = nonsmooth_neurons(network_, pattern);
    if (keep_certificates_)
      region.certificates = RegionCertificates{cell->cell, cell->constraint_neuron, std::move(classification),
                                               std::move(boundedness)};
    return result;
  }

  // ---- the plane path (2 inputs, not exact only) -----------------------------
  //
  // Integer layer maps (fraction-free, buffers reused between regions), the
  // cell as integer rows, lp::describe_plane_cell (polygon proposes, exact
  // signs prove), crossings decided on the integer maps. Whatever it cannot
  // prove (nullopt) goes to process_with_oracle, which decides everything.

  // Every layer's pre-activation map for the pattern, into pre_ (all layers).
  void compute_integer_maps(const ActivationPattern& pattern) {
    pre_.resize(layers_.size());
    if (wide_) {
      compute_wide_maps(pattern);
      return;
    }
    const IntegerMap* input = &identity_;
    std::size_t first_neuron = 0;
    for (std::size_t k = 0; k < layers_.size(); ++k) {
      poll_stop();
      active_.assign(input->rows, 1);
      if (k > 0 && layers_[k - 1].is_relu) {
        for (std::size_t t = 0; t < input->rows; ++t)
          active_[t] = pattern.states[first_neuron + t] == NeuronState::on;
        first_neuron += input->rows;
      }
      compose_active(layers_[k], *input, active_, pre_[k]);
      input = &pre_[k];
    }
  }

  // compute_integer_maps in 128-bit integers (wide_ proves they fit), then
  // each entry set into pre_'s GMP integers.
  void compute_wide_maps(const ActivationPattern& pattern) {
    const std::size_t n = network_.input_dim;
    wide_pre_.resize(layers_.size());
    const std::vector<Wide>* input = &wide_identity_;
    std::size_t first_neuron = 0;
    for (std::size_t k = 0; k < layers_.size(); ++k) {
      active_.assign(k == 0 ? n : layers_[k - 1].rows, 1);
      if (k > 0) {
        for (std::size_t t = 0; t < active_.size(); ++t)
          active_[t] = pattern.states[first_neuron + t] == NeuronState::on;
        first_neuron += active_.size();
      }
      compose_wide(layers_[k], *wide_, k, n, *input, active_, wide_pre_[k]);
      input = &wide_pre_[k];
      IntegerMap& map = pre_[k];
      map.rows = layers_[k].rows;
      map.cols = n;
      map.linear.resize(map.rows * n);
      map.offset.resize(map.rows);
      for (std::size_t r = 0; r < map.rows; ++r) {
        const Wide* row = wide_pre_[k].data() + r * (n + 1);
        for (std::size_t c = 0; c < n; ++c) set_integer(map.linear[r * n + c], row[c]);
        set_integer(map.offset[r], row[n]);
      }
      map.denominator = wide_->map_denominator[k];
    }
  }

  static bool is_zero_linear(const IntegerMap& map, std::size_t r) {
    for (std::size_t c = 0; c < map.cols; ++c)
      if (sgn(map.linear[r * map.cols + c]) != 0) return false;
    return true;
  }

  // Row i of a pre-activation map as a cell row, negated for a neuron that is off.
  static void set_row(lp::PlaneRow& row, const IntegerMap& pre, std::size_t i, bool negate) {
    row.a0 = pre.linear[i * 2];
    row.a1 = pre.linear[i * 2 + 1];
    row.c = pre.offset[i];
    if (!negate) return;
    for (Integer* value : {&row.a0, &row.a1, &row.c}) mpz_neg(value->get_mpz_t(), value->get_mpz_t());
  }
  static void set_row(lp::SpaceRow& row, const IntegerMap& pre, std::size_t i, bool negate) {
    for (std::size_t c = 0; c < 3; ++c) row.a[c] = pre.linear[i * 3 + c];
    row.c = pre.offset[i];
    if (!negate) return;
    for (Integer* value : {&row.a[0], &row.a[1], &row.a[2], &row.c}) mpz_neg(value->get_mpz_t(), value->get_mpz_t());
  }

  // The cell's rows (neurons, then domain sides) from pre_, as cell_from_maps
  // builds them; false when the pattern is inconsistent with its maps.
  template <class Row>
  bool build_rows(const ActivationPattern& pattern, std::vector<Row>& rows, const std::vector<Row>& domain_rows) {
    std::size_t count = 0;
    row_neuron_.clear();
    for (std::size_t k = 0; k < relu_layers(network_); ++k) {
      const IntegerMap& pre = pre_[k];
      const std::size_t first = network_.first_neuron_of_layer(k);
      for (std::size_t i = 0; i < pre.rows; ++i) {
        const NeuronState state = pattern.states[first + i];
        const bool zero_linear = is_zero_linear(pre, i);
        const bool identically_zero = zero_linear && sgn(pre.offset[i]) == 0;
        if (state == NeuronState::zero_at_point) throw usage_error("build_pattern_cell: '=' is not a region state");
        if (state == NeuronState::zero_on_region) {
          if (!identically_zero) return false;
          continue;
        }
        if (identically_zero) return false;
        const int sign = state == NeuronState::on ? 1 : -1;
        if (zero_linear) {
          if (sign * sgn(pre.offset[i]) > 0) continue;
          return false;
        }
        if (rows.size() <= count) rows.resize(count + 1);
        set_row(rows[count++], pre, i, sign < 0);
        row_neuron_.push_back(first + i);
      }
    }
    neuron_rows_ = count;
    rows.resize(count);
    rows.insert(rows.end(), domain_rows.begin(), domain_rows.end());
    return true;
  }

  std::optional<Processed> process_in_plane(const ActivationPattern& pattern) {
    compute_integer_maps(pattern);
    if (!build_rows(pattern, rows_, domain_rows_)) return Processed{};  // not a region (as process_with_oracle says)
    if (rows_.empty()) return std::nullopt;  // the whole plane: the general path
    std::optional<lp::PlaneCell> plane = lp::describe_plane_cell(rows_);
    if (!plane) return std::nullopt;
    Processed result;
    Region& region = result.region;
    region.pattern = pattern;
    // Boundedness on the neuron rows (as a subset of R^2).
    std::optional<bool> bounded = false;
    if (neuron_rows_ > 0) {
      neuron_only_.assign(rows_.begin(), rows_.begin() + static_cast<std::ptrdiff_t>(neuron_rows_));
      bounded = lp::is_plane_cell_bounded(neuron_only_);
      if (!bounded) return std::nullopt;
    }
    region.bounded = *bounded;
    region.point = plane->interior;
    region.affine = output_map(pattern);
    std::optional<PatternMaps> rational_maps;  // only for degenerate crossings
    map_images_.clear();
    // Reserved: RegionFacet's move is not noexcept (gmpxx), so growth would copy.
    region.facets.reserve(static_cast<std::size_t>(
        std::count_if(plane->groups.begin(), plane->groups.end(), [](const lp::PlaneGroup& g) { return g.is_facet; })));
    for (lp::PlaneGroup& group : plane->groups) {
      if (!group.is_facet) continue;
      const lp::PlaneRow& row = rows_[group.rows.front()];
      const std::array<const Integer*, 2> normal{&row.a0, &row.a1};
      RegionFacet facet =
          integer_facet(pattern, group.rows, group.point, normal, row.c, rational_maps, result.degenerate_crossings);
      if (facet.domain_side) region.touches_domain_boundary = true;
      region.facets.push_back(std::move(facet));
    }
    if (has_zero_on_region(pattern)) region.nonsmooth_neurons = nonsmooth_neurons(network_, pattern);
    if (keep_certificates_ && !attach_plane_certificates(pattern, *plane, region)) return std::nullopt;
    // Counted as the general path counts: the centre, one per group, boundedness.
    const std::uint64_t queries = 1 + plane->groups.size() + (neuron_rows_ > 0 && !keep_certificates_ ? 1 : 0);
    plane_counts_.lp_queries += queries;
    plane_counts_.filter_settled += queries;
    result.is_region = true;
    return result;
  }

  // ---- the space path (3 inputs, not exact only) ----------------------------
  //
  // As the plane path, with lp::describe_space_cell (a clipped polytope
  // proposes, exact signs and determinants prove); boundedness comes with it.

  std::optional<Processed> process_in_space(const ActivationPattern& pattern) {
    compute_integer_maps(pattern);
    if (!build_rows(pattern, space_rows_, domain_space_rows_)) return Processed{};  // not a region
    if (space_rows_.empty()) return std::nullopt;  // the whole space: the general path
    std::optional<lp::SpaceCell> space = lp::describe_space_cell(space_rows_, neuron_rows_);
    if (!space || (neuron_rows_ > 0 && !space->bounded)) return std::nullopt;
    Processed result;
    Region& region = result.region;
    region.pattern = pattern;
    region.bounded = neuron_rows_ > 0 && *space->bounded;
    region.point = space->interior;
    region.affine = output_map(pattern);
    std::optional<PatternMaps> rational_maps;  // only for degenerate crossings
    map_images_.clear();
    region.facets.reserve(static_cast<std::size_t>(
        std::count_if(space->groups.begin(), space->groups.end(), [](const lp::SpaceGroup& g) { return g.is_facet; })));
    for (const lp::SpaceGroup& group : space->groups) {
      if (!group.is_facet) continue;
      const lp::SpaceRow& row = space_rows_[group.rows.front()];
      const std::array<const Integer*, 3> normal{&row.a[0], &row.a[1], &row.a[2]};
      RegionFacet facet =
          integer_facet(pattern, group.rows, group.point, normal, row.c, rational_maps, result.degenerate_crossings);
      if (facet.domain_side) region.touches_domain_boundary = true;
      region.facets.push_back(std::move(facet));
    }
    if (has_zero_on_region(pattern)) region.nonsmooth_neurons = nonsmooth_neurons(network_, pattern);
    if (keep_certificates_ && !attach_space_certificates(pattern, *space, region)) return std::nullopt;
    // Counted as the general path counts: the centre, one per group, boundedness.
    const std::uint64_t queries = 1 + space->groups.size() + (neuron_rows_ > 0 && !keep_certificates_ ? 1 : 0);
    plane_counts_.lp_queries += queries;
    plane_counts_.filter_settled += queries;
    result.is_region = true;
    return result;
  }

  // With --certificates: the rational cell and the certificates of the space
  // path's verdicts (the same points, multipliers from its supports).
  bool attach_space_certificates(const ActivationPattern& pattern, const lp::SpaceCell& space, Region& region) {
    return attach_fast_path_certificates(pattern, space_rows_.size(), space.groups, region,
                                         [](const lp::Polyhedron& cell, const lp::SpaceGroup& group) {
                                           return lp::space_redundancy_certificate(cell, group.rows.front(),
                                                                                   group.support);
                                         });
  }

  // The network's output map on the region, exact.
  AffineMap output_map(const ActivationPattern& pattern) const {
    const IntegerMap& last = pre_.back();
    if (!layers_.back().is_relu) return to_rational_map(last);
    IntegerMap out = last;
    const std::size_t first = network_.relu_neuron_count() - last.rows;
    for (std::size_t r = 0; r < out.rows; ++r) {
      if (pattern.states[first + r] == NeuronState::on) continue;
      for (std::size_t c = 0; c < out.cols; ++c) out.linear[r * out.cols + c] = 0;
      out.offset[r] = 0;
    }
    return to_rational_map(out);
  }

  // A facet of the integer-row paths: its neurons or domain side, its
  // primitive normal, and the neighbour across it at `point`. normal and
  // offset are the group representative's row.
  RegionFacet integer_facet(const ActivationPattern& pattern, const std::vector<std::size_t>& group_rows,
                            const RationalVector& point, std::span<const Integer* const> normal, const Integer& offset,
                            std::optional<PatternMaps>& rational_maps, std::size_t& degenerate_crossings) {
    RegionFacet facet;
    for (std::size_t c : group_rows) {
      if (c < neuron_rows_) facet.neurons.push_back(row_neuron_[c]);
      else if (!facet.domain_side) facet.domain_side = c - neuron_rows_;
    }
    std::sort(facet.neurons.begin(), facet.neurons.end());
    Integer divisor = 0;
    for (const Integer* value : normal) mpz_gcd(divisor.get_mpz_t(), divisor.get_mpz_t(), value->get_mpz_t());
    for (const Integer* value : normal) facet.normal.push_back(Rational(*value / divisor));
    facet.offset = Rational(offset, divisor);
    facet.offset.canonicalize();
    facet.point = point;
    if (facet.domain_side) return facet;
    std::vector<ActivationPattern> candidates;
    if (std::optional<ActivationPattern> far = pattern_across_in_integers(pattern, facet.point, normal)) {
      candidates.push_back(std::move(*far));
    } else {
      if (!rational_maps) rational_maps = maps_on_pattern_fraction_free(layers_, network_.input_dim, pattern);
      RationalVector row_normal, direction;
      for (const Integer* value : normal) {
        row_normal.push_back(Rational(*value));
        direction.push_back(Rational(-*value));
      }
      std::optional<MapImages> images;
      if (!exact_only_) images = map_images(network_, *rational_maps);
      candidates = patterns_across_filtered(network_, pattern, *rational_maps, images ? &*images : nullptr,
                                            facet.point, direction, row_normal);
    }
    name_neighbours(facet, std::move(candidates), degenerate_crossings);
    return facet;
  }

  // The far side's pattern at q in the common case, from the integer maps:
  // every neuron keeps its sign unless it vanishes at q; a vanishing neuron
  // is 'z' (zero linear part) or takes the sign of its derivative across the
  // facet (linear part parallel to the facet's normal). nullopt when the
  // crossing needs more (a vanishing neuron above a layer that changed, or
  // one crossed transversally): extend_across decides those.
  std::optional<ActivationPattern> pattern_across_in_integers(const ActivationPattern& near, const RationalVector& q,
                                                              std::span<const Integer* const> facet_normal) {
    const std::size_t n = q.size();
    const std::size_t width = n + 1;
    if (map_images_.empty()) {
      for (std::size_t k = 0; k < relu_layers(network_); ++k) {
        const IntegerMap& pre = pre_[k];
        std::vector<double> images(pre.rows * width);
        for (std::size_t r = 0; r < pre.rows; ++r) {
          for (std::size_t c = 0; c < n; ++c) images[width * r + c] = filter_image(pre.linear[n * r + c]);
          images[width * r + n] = filter_image(pre.offset[r]);
        }
        map_images_.push_back(std::move(images));
      }
    }
    Integer denominator = 1;
    for (const Rational& x : q) mpz_lcm(denominator.get_mpz_t(), denominator.get_mpz_t(), x.get_den_mpz_t());
    scaled_point_.resize(n);
    for (std::size_t c = 0; c < n; ++c) scaled_point_[c] = q[c].get_num() * (denominator / q[c].get_den());
    double x[3];
    for (std::size_t c = 0; c < n; ++c) x[c] = filter_image(q[c]);
    ActivationPattern far = near;
    bool changed_below = false;
    for (std::size_t k = 0; k < relu_layers(network_); ++k) {
      const IntegerMap& pre = pre_[k];
      const std::size_t first = network_.first_neuron_of_layer(k);
      bool changed_here = false;
      for (std::size_t r = 0; r < pre.rows; ++r) {
        const double* image = map_images_[k].data() + width * r;
        const Integer* b = pre.linear.data() + n * r;
        std::optional<int> sign = filtered_affine_sign(image, x, n, image[n]);
        if (!sign) {
          Integer sum = pre.offset[r] * denominator;
          for (std::size_t c = 0; c < n; ++c) sum += b[c] * scaled_point_[c];
          sign = sgn(sum);
        }
        NeuronState state;
        if (*sign > 0) {
          state = NeuronState::on;
        } else if (*sign < 0) {
          state = NeuronState::off;
        } else {
          if (changed_below) return std::nullopt;  // the far side's map differs: extend_across
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
        }
        NeuronState& slot = far.states[first + r];
        if (slot != state) changed_here = true;
        slot = state;
      }
      changed_below = changed_below || changed_here;
    }
    return far;
  }

  // b parallel to a (every 2 x 2 minor zero), exactly.
  static bool is_parallel(const Integer* b, std::span<const Integer* const> a) {
    for (std::size_t i = 0; i < a.size(); ++i)
      for (std::size_t k = i + 1; k < a.size(); ++k)
        if (b[i] * *a[k] != b[k] * *a[i]) return false;
    return true;
  }

  // With --certificates: the rational cell and the certificates of the plane
  // path's verdicts (the same points, multipliers from its supports).
  bool attach_plane_certificates(const ActivationPattern& pattern, const lp::PlaneCell& plane, Region& region) {
    return attach_fast_path_certificates(pattern, rows_.size(), plane.groups, region,
                                         [](const lp::Polyhedron& cell, const lp::PlaneGroup& group) {
                                           return lp::plane_redundancy_certificate(cell, group.rows.front(),
                                                                                   group.support[0], group.support[1]);
                                         });
  }

  // Shared by the plane and space paths: the rational cell of the pattern
  // (row_count rows, in the fast path's order), a facet point per facet group,
  // certify_non_facet's multipliers per other group, and the boundedness
  // certificate, which must agree with the fast path's verdict. False when
  // any of it cannot be given (the caller then takes the oracle path).
  template <class Group, class CertifyNonFacet>
  bool attach_fast_path_certificates(const ActivationPattern& pattern, std::size_t row_count,
                                     const std::vector<Group>& groups, Region& region,
                                     CertifyNonFacet&& certify_non_facet) {
    std::optional<PatternCell> cell = build_cell(pattern);
    if (!cell || cell->cell.constraints.size() != row_count) return false;
    lp::FacetClassification classification;
    for (const Group& group : groups) {
      if (group.is_facet) {
        classification.groups.push_back(lp::FacetGroup{group.rows, lp::FacetPoint{group.point}});
        continue;
      }
      std::optional<lp::NonFacetCertificate> certificate = certify_non_facet(cell->cell, group);
      if (!certificate) return false;
      classification.groups.push_back(lp::FacetGroup{group.rows, std::move(*certificate)});
    }
    bool bounded = false;
    std::optional<lp::BoundednessVerdict> boundedness = decide_boundedness(*cell, bounded);
    if (bounded != region.bounded) return false;
    region.certificates = RegionCertificates{std::move(cell->cell), std::move(cell->constraint_neuron),
                                             std::move(classification), std::move(boundedness)};
    return true;
  }

  static bool has_zero_on_region(const ActivationPattern& pattern) {
    return std::any_of(pattern.states.begin(), pattern.states.end(),
                       [](NeuronState s) { return s == NeuronState::zero_on_region; });
  }

  // Boundedness as a subset of R^n0: the neuron constraints only.
  std::optional<lp::BoundednessVerdict> decide_boundedness(const PatternCell& cell, bool& bounded) {
    lp::Polyhedron neurons_only{cell.cell.dim, {}};
    for (std::size_t i = 0; i < cell.cell.constraints.size(); ++i)
      if (cell.constraint_neuron[i] != no_index) neurons_only.constraints.push_back(cell.cell.constraints[i]);
    if (neurons_only.constraints.empty()) {  // all of R^n0: any direction recedes
      bounded = false;
      RationalVector direction(cell.cell.dim, Rational(0));
      direction[0] = 1;
      return lp::BoundednessVerdict{lp::RecessionDirection{direction}};
    }
    auto verdict = oracle_.decide_boundedness(neurons_only);
    bounded = std::holds_alternative<lp::BoundednessCertificate>(verdict);
    return verdict;
  }

  RegionFacet make_facet(const PatternCell& cell, const ActivationPattern& pattern, const lp::FacetGroup& group,
                         std::optional<MapImages>& images, std::size_t& degenerate_crossings) {
    RegionFacet facet;
    for (std::size_t c : group.constraints) {
      if (cell.constraint_neuron[c] != no_index) facet.neurons.push_back(cell.constraint_neuron[c]);
      else if (!facet.domain_side) facet.domain_side = cell.constraint_domain_side[c];
    }
    std::sort(facet.neurons.begin(), facet.neurons.end());
    const lp::Constraint& representative = cell.cell.constraints[group.constraints.front()];
    facet.normal = representative.normal;
    facet.offset = representative.offset;
    make_primitive(facet.normal, facet.offset);
    facet.point = std::get<lp::FacetPoint>(group.verdict).point;
    if (facet.domain_side) return facet;  // the far side is outside the domain

    RationalVector direction = representative.normal;
    for (auto& v : direction) v = -v;
    // The maps' double images, once per region, unless every sign must be exact.
    if (!exact_only_ && !images) images = map_images(network_, cell.maps);
    name_neighbours(facet, patterns_across_filtered(network_, pattern, cell.maps, images ? &*images : nullptr,
                                                    facet.point, direction, representative.normal),
                    degenerate_crossings);
    return facet;
  }

  // The facet's neighbour(s) from the far-side candidates at its point: of
  // several (a degenerate crossing, counted), those with interior next to it.
  void name_neighbours(RegionFacet& facet, std::vector<ActivationPattern> candidates,
                       std::size_t& degenerate_crossings) {
    if (candidates.size() > 1) {
      ++degenerate_crossings;
      candidates = keep_touching(candidates, facet.point);
    }
    if (!candidates.empty()) {
      facet.neighbor = candidates.front();
      facet.other_neighbors.assign(candidates.begin() + 1, candidates.end());
    }
  }

  // Of several far-side candidates at q, those whose cell has interior next to q.
  std::vector<ActivationPattern> keep_touching(const std::vector<ActivationPattern>& candidates,
                                               const RationalVector& q) {
    std::vector<ActivationPattern> kept;
    for (const auto& candidate : candidates) {
      auto cell = build_cell(candidate);
      if (!cell) continue;
      lp::Polyhedron cone = tangent_cone_at(cell->cell, q);
      if (cone.constraints.empty() ||
          std::holds_alternative<lp::InteriorPoint>(oracle_.decide_open_cell(cone)))
        kept.push_back(candidate);
    }
    return kept;
  }

  // build_pattern_cell, with the maps computed fraction-free.
  std::optional<PatternCell> build_cell(const ActivationPattern& pattern) const {
    if (pattern.states.size() != network_.relu_neuron_count())
      throw usage_error("build_pattern_cell: pattern has the wrong number of neurons");
    return cell_from_maps(network_, domain_, pattern,
                          maps_on_pattern_fraction_free(layers_, network_.input_dim, pattern));
  }

  const Network& network_;
  const Domain& domain_;
  bool keep_certificates_;
  bool exact_only_;  // no double filter anywhere, the signs at crossings included
  std::vector<IntegerLayer> layers_;
  lp::Oracle oracle_;
  // The plane path's state (buffers reused between regions).
  bool is_plane_path_ = false;
  IntegerMap identity_;
  std::optional<WideLayers> wide_;         // the layers in 128 bits, when every map provably fits
  std::vector<Wide> wide_identity_;
  std::vector<std::vector<Wide>> wide_pre_;
  std::vector<lp::PlaneRow> domain_rows_;  // the domain's sides as integer rows
  std::vector<IntegerMap> pre_;            // per layer, this region's pre-activation map
  std::vector<char> active_;
  std::vector<lp::PlaneRow> rows_;         // this region's cell: neurons, then domain sides
  std::vector<lp::PlaneRow> neuron_only_;
  std::vector<std::size_t> row_neuron_;    // neuron id per neuron row
  std::size_t neuron_rows_ = 0;
  std::vector<std::vector<double>> map_images_;  // per ReLU layer, filter images of pre_ (lazy)
  std::vector<Integer> scaled_point_;            // a crossing point's numerators over one denominator
  // The space path's state (3 inputs).
  bool is_space_path_ = false;
  std::vector<lp::SpaceRow> domain_space_rows_;
  std::vector<lp::SpaceRow> space_rows_;
  lp::QueryCounts plane_counts_;
};

// Union-find over region ids, for merging adjacent regions with one affine map.
class DisjointSets {
 public:
  explicit DisjointSets(std::size_t n) : parent_(n) { std::iota(parent_.begin(), parent_.end(), 0); }
  std::size_t find(std::size_t i) {
    while (parent_[i] != i) i = parent_[i] = parent_[parent_[i]];
    return i;
  }
  void unite(std::size_t a, std::size_t b) { parent_[find(a)] = find(b); }
  std::size_t count_roots() {
    std::size_t roots = 0;
    for (std::size_t i = 0; i < parent_.size(); ++i) roots += find(i) == i;
    return roots;
  }

 private:
  std::vector<std::size_t> parent_;
};

// For p(t) = sum_i a_i t^i not identically zero, a k >= 1 such that p has no
// root in (0, 2^-k]: with a_m the lowest nonzero coefficient and M the largest
// |a_i| above it, a root 0 < t < 1 has |a_m| <= M (t + t^2 + ...) = M t / (1 - t),
// so t >= |a_m| / (|a_m| + M). Exact.
std::size_t root_free_exponent(const RationalVector& coefficients) {
  std::size_t m = 0;
  while (coefficients[m] == 0) ++m;
  Rational largest_above = 0;
  for (std::size_t i = m + 1; i < coefficients.size(); ++i) largest_above = std::max(largest_above, Rational(abs(coefficients[i])));
  if (largest_above == 0) return 1;
  const Rational lowest = abs(coefficients[m]);
  const Rational ratio = lowest / (lowest + largest_above);  // in (0, 1)
  // ratio >= 2^(bits(num) - 1 - bits(den)) > 2^-k for k below.
  const std::size_t numerator_bits = mpz_sizeinbase(ratio.get_num_mpz_t(), 2);
  const std::size_t denominator_bits = mpz_sizeinbase(ratio.get_den_mpz_t(), 2);
  return denominator_bits + 2 - std::min(numerator_bits, denominator_bits + 1);
}

// The affine function normal . x + offset along the moment curve
// x(t) = centre + (t, t^2, ..., t^n), as the coefficients of a polynomial in t.
RationalVector along_moment_curve(const RationalVector& normal, const Rational& offset, const RationalVector& centre) {
  RationalVector coefficients{dot(normal, centre) + offset};
  coefficients.insert(coefficients.end(), normal.begin(), normal.end());
  return coefficients;
}

// A point of the domain off every bent hyperplane, for a domain of any size:
// on the moment curve x(t) = centre + (t, ..., t^n), every pre-activation is,
// layer by layer, a polynomial in t of degree <= n (the states below being
// constant for small t), which is identically zero (a 'z' neuron) or has no
// root in (0, 2^-k] for the k of root_free_exponent; the domain's constraints
// likewise stay positive. So t = 2^-k for the largest such k works. Exact.
RationalVector point_off_bent_hyperplanes(const Network& network, const Domain& domain, const RationalVector& centre) {
  std::size_t exponent = 1;
  for (const auto& side : domain.constraints)
    exponent = std::max(exponent, root_free_exponent(along_moment_curve(side.normal, side.offset, centre)));
  AffineMap post = identity_map(network.input_dim);
  for (std::size_t k = 0; k < relu_layers(network); ++k) {
    poll_stop();
    const AffineMap pre = compose_layer(network.layers[k], post);
    std::vector<NeuronState> states(pre.offset.size());
    for (std::size_t i = 0; i < states.size(); ++i) {
      const RationalVector polynomial = along_moment_curve(pre.linear.row(i), pre.offset[i], centre);
      const auto lowest = std::find_if(polynomial.begin(), polynomial.end(), [](const Rational& a) { return a != 0; });
      if (lowest == polynomial.end()) {
        states[i] = NeuronState::zero_on_region;
        continue;
      }
      states[i] = *lowest > 0 ? NeuronState::on : NeuronState::off;
      exponent = std::max(exponent, root_free_exponent(polynomial));
    }
    post = apply_states(pre, states);
  }
  Rational t = 1;
  mpz_mul_2exp(t.get_den_mpz_t(), t.get_den_mpz_t(), exponent);  // t = 2^-exponent
  RationalVector point = centre;
  Rational power = 1;
  for (auto& coordinate : point) coordinate += (power *= t);
  return point;
}

ActivationPattern start_pattern(const Network& network, const Domain& domain) {
  const RationalVector centre = domain_centre(domain);
  // The centre may lie on a bent hyperplane; step off it along a fixed family
  // of directions with shrinking steps (kept so that the walks of earlier
  // versions start, and number their regions, as before), then, when those
  // steps all leave a small domain, along the moment curve, which always works.
  for (unsigned attempt = 0; attempt < 4096; ++attempt) {
    RationalVector point = centre;
    if (attempt > 0) {
      const Rational step(1, 8 * (attempt / 16 + 1) + attempt % 16);
      Rational coordinate = step;
      for (std::size_t i = 0; i < point.size(); ++i) {
        point[i] += coordinate;
        coordinate *= Rational(attempt % 7 + 2, 11);
      }
      // Stay inside the domain.
      bool inside = true;
      for (const auto& c : domain.constraints) inside = inside && dot(c.normal, point) + c.offset > 0;
      if (!inside) continue;
    }
    if (auto pattern = region_pattern_at(network, point)) return *pattern;
  }
  if (auto pattern = region_pattern_at(network, point_off_bent_hyperplanes(network, domain, centre))) return *pattern;
  throw std::logic_error("walk: the moment-curve point lies on a bent hyperplane (a bug; please report)");
}

}  // namespace

ActivationPattern walk_start_pattern(const Network& network, const Domain& domain) {
  return start_pattern(network, domain);
}

WalkSummary walk_regions(const Network& network, const Domain& domain, const WalkOptions& options) {
  if (domain.dim != network.input_dim) throw usage_error("walk_regions: domain and network dimensions differ");
  using clock = std::chrono::steady_clock;
  const auto started = clock::now();
  auto elapsed = [&] { return std::chrono::duration<double>(clock::now() - started).count(); };
  const unsigned threads = options.threads ? options.threads : std::max(1u, std::thread::hardware_concurrency());

  std::vector<std::unique_ptr<RegionProcessor>> processors;
  for (unsigned t = 0; t < threads; ++t)
    processors.push_back(
        std::make_unique<RegionProcessor>(network, domain, options.keep_certificates, options.exact_only));

  WalkSummary summary;
  // Every pattern is stored once, in `seen` (its elements stay put as it
  // grows); the level, the ids and the neighbour lists point into it.
  std::unordered_set<ActivationPattern, PatternHash> seen;
  std::unordered_map<const ActivationPattern*, std::size_t> id_of;
  std::vector<AffineMap> affine_of;                                   // by region id
  std::vector<std::vector<const ActivationPattern*>> neighbors_of;    // by region id
  // Polled between regions, and inside each region's exact work by the
  // workers (their StopScope), so one slow region cannot hold a stop back.
  const StopRequest stop(options.interrupt, options.time_limit_seconds, started);
  auto stop_requested = [&] { return stop.reason(); };
  std::vector<const ActivationPattern*> level;
  try {
    const StopScope scope(stop);
    level.push_back(&*seen.insert(start_pattern(network, domain)).first);
  } catch (const Stopped& stopped) {
    summary.stop_reason = stopped.reason();  // stopped before the first region: nothing found
  }
  bool anomaly = false;  // a crossing candidate that turned out not to be a region

  while (!level.empty() && summary.stop_reason == StopReason::none) {
    // Process the level in parallel; results are placed by index, so the
    // order of output does not depend on the thread count.
    std::vector<Processed> results(level.size());
    std::vector<char> done(level.size(), 0);
    std::atomic<std::size_t> next{0};
    std::atomic<std::size_t> finished{0};
    std::atomic<bool> halt{false};
    std::mutex error_mutex;
    std::exception_ptr error;
    std::mutex wake_mutex;
    std::condition_variable wake;
    std::atomic<int> stopped_inside{static_cast<int>(StopReason::none)};
    auto work = [&](RegionProcessor& processor) {
      try {
        const StopScope scope(stop);
        for (std::size_t i; !halt && (i = next++) < level.size();) {
          results[i] = processor.process(*level[i]);
          done[i] = 1;
          ++finished;
        }
      } catch (const Stopped& stopped) {  // mid-region: that region stays undone
        stopped_inside = static_cast<int>(stopped.reason());
        halt = true;
      } catch (...) {
        std::lock_guard lock(error_mutex);
        if (!error) error = std::current_exception();
        halt = true;
      }
      std::lock_guard lock(wake_mutex);
      wake.notify_all();
    };
    std::vector<std::thread> pool;
    for (unsigned t = 0; t < threads; ++t) pool.emplace_back(work, std::ref(*processors[t]));
    {
      // Wake when the level is done, or every 0.2 s to report and check limits.
      std::unique_lock lock(wake_mutex);
      while (!wake.wait_for(lock, std::chrono::milliseconds(200),
                            [&] { return finished == level.size() || halt; })) {
        if (StopReason reason = stop_requested(); reason != StopReason::none) {
          summary.stop_reason = reason;
          halt = true;
        }
        if (options.on_progress)
          options.on_progress(WalkProgress{summary.regions + finished, level.size() - finished, elapsed()});
      }
    }
    for (auto& thread : pool) thread.join();
    if (error) std::rethrow_exception(error);
    if (summary.stop_reason == StopReason::none && stopped_inside != static_cast<int>(StopReason::none))
      summary.stop_reason = static_cast<StopReason>(stopped_inside.load());

    std::vector<const ActivationPattern*> next_level;
    for (std::size_t i = 0; i < level.size(); ++i) {
      if (!done[i]) break;  // cut short: keep the processed prefix, in order
      Processed& processed = results[i];
      if (!processed.is_region) {
        anomaly = true;
        continue;
      }
      if (options.max_regions && summary.regions >= options.max_regions) {
        summary.stop_reason = StopReason::max_regions;
        break;
      }
      Region& region = processed.region;
      region.id = summary.regions++;
      summary.bounded_regions += region.bounded;
      summary.degenerate_crossings += processed.degenerate_crossings;
      if (!region.nonsmooth_neurons.empty())
        summary.nonsmooth_regions.emplace_back(region.pattern, region.nonsmooth_neurons);
      id_of.emplace(level[i], region.id);
      neighbors_of.emplace_back();
      const auto add_neighbour = [&](const ActivationPattern& neighbor) {
        const auto [at, is_new] = seen.insert(neighbor);
        neighbors_of.back().push_back(&*at);
        if (is_new) next_level.push_back(&*at);
      };
      for (const auto& facet : region.facets) {
        if (!facet.neighbor) continue;
        add_neighbour(*facet.neighbor);
        for (const auto& other : facet.other_neighbors) add_neighbour(other);
      }
      const bool is_stop_asked = options.on_region && !options.on_region(region);
      affine_of.push_back(std::move(region.affine));  // after on_region, which reads it
      if (is_stop_asked) {
        summary.stop_reason = StopReason::requested;
        break;
      }
    }
    if (summary.stop_reason == StopReason::none) {
      if (StopReason reason = stop_requested(); reason != StopReason::none && !next_level.empty())
        summary.stop_reason = reason;
    }
    std::sort(next_level.begin(), next_level.end(),
              [](const ActivationPattern* a, const ActivationPattern* b) { return *a < *b; });
    level = std::move(next_level);
  }

  for (const auto& processor : processors) summary.counts += processor->counts();
  summary.complete = summary.stop_reason == StopReason::none;

  // Adjacency: facets (unordered pairs) and linear regions (merge equal maps).
  std::set<std::pair<std::size_t, std::size_t>> pairs;
  DisjointSets pieces(summary.regions);
  bool all_neighbors_present = true;
  for (std::size_t id = 0; id < summary.regions; ++id) {
    for (const ActivationPattern* neighbor : neighbors_of[id]) {
      auto found = id_of.find(neighbor);
      if (found == id_of.end()) {
        all_neighbors_present = false;
        continue;
      }
      pairs.emplace(std::min(id, found->second), std::max(id, found->second));
      if (affine_of[id] == affine_of[found->second]) pieces.unite(id, found->second);
    }
  }
  summary.facets = pairs.size();
  summary.linear_regions = pieces.count_roots();

  summary.patterns.reserve(id_of.size());
  for (const auto& [pattern, id] : id_of) summary.patterns.push_back(*pattern);
  std::sort(summary.patterns.begin(), summary.patterns.end());
  for (std::size_t k = 0; k < network.depth(); ++k) {
    // A linear output layer adds no states: its prefix is the whole pattern.
    const std::size_t prefix_end = k < relu_layers(network)
                                       ? network.first_neuron_of_layer(k) + network.layers[k].width()
                                       : network.relu_neuron_count();
    std::set<std::vector<NeuronState>> prefixes;
    for (const auto& pattern : summary.patterns)
      prefixes.emplace(pattern.states.begin(), pattern.states.begin() + static_cast<std::ptrdiff_t>(prefix_end));
    summary.regions_per_layer.push_back(prefixes.size());
  }
  summary.certified = summary.complete && all_neighbors_present && !anomaly;
  summary.seconds = elapsed();
  return summary;
}

struct RegionWorker::Impl {
  Impl(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only)
      : processor(network, domain, keep_certificates, exact_only) {}
  RegionProcessor processor;
};

RegionWorker::RegionWorker(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only)
    : impl_(domain.dim == network.input_dim
                ? std::make_unique<Impl>(network, domain, keep_certificates, exact_only)
                : throw usage_error("RegionWorker: domain and network dimensions differ")) {}

RegionWorker::~RegionWorker() = default;

RegionWorker::Outcome RegionWorker::process(const ActivationPattern& pattern) {
  Processed processed = impl_->processor.process(pattern);
  Outcome outcome;
  outcome.degenerate_crossings = processed.degenerate_crossings;
  if (processed.is_region) outcome.region = std::move(processed.region);
  return outcome;
}

lp::QueryCounts RegionWorker::counts() const { return impl_->processor.counts(); }

std::optional<Region> describe_region(const Network& network, const Domain& domain,
                                      const ActivationPattern& pattern, bool keep_certificates) {
  if (domain.dim != network.input_dim) throw usage_error("describe_region: domain and network dimensions differ");
  // The oracle path alone: the point is the Chebyshev-style centre of
  // lp::Oracle::find_centre, as `pleat inspect` has always printed it.
  RegionProcessor processor(network, domain, keep_certificates, false, /*is_plane_path_allowed=*/false);
  Processed processed = processor.process(pattern);
  if (!processed.is_region) return std::nullopt;
  return std::move(processed.region);
}

}  // namespace pleat
