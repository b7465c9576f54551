#include "enumerate/detail/integer_maps.hpp"

#include "core/errors.hpp"
#include "core/stop.hpp"
#include "enumerate/detail/walk_helpers.hpp"

#include <algorithm>
#include <array>
#include <cstdint>
#include <limits>
#include <utility>

namespace pleat::detail {

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


namespace {

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

}  // namespace


namespace {

// Precondition: |value| < 2^127.
Wide narrow(const Integer& value) {
  Integer magnitude = abs(value);
  const Wide low = static_cast<Wide>(mpz_get_ui(magnitude.get_mpz_t()));
  magnitude >>= 64;
  const Wide result = (static_cast<Wide>(mpz_get_ui(magnitude.get_mpz_t())) << 64) | low;
  return sgn(value) < 0 ? -result : result;
}

// How many leading layers the bound above keeps below 2^limit_bits (every
// map entry and partial sum of those layers).
std::size_t layers_that_fit(const std::vector<IntegerLayer>& layers, unsigned limit_bits) {
  const Integer limit = Integer(1) << limit_bits;
  Integer linear_bound = 1, offset_bound = 0, denominator = 1;
  for (std::size_t k = 0; k < layers.size(); ++k) {
    const IntegerLayer& layer = layers[k];
    Integer row_sum_bound = 0, bias_bound = 0;
    for (std::size_t r = 0; r < layer.rows; ++r) {
      Integer row_sum = 0;
      for (std::size_t t = 0; t < layer.cols; ++t) row_sum += abs(layer.weights[r * layer.cols + t]);
      row_sum_bound = std::max(row_sum_bound, row_sum);
      bias_bound = std::max(bias_bound, Integer(abs(layer.bias[r])));
    }
    linear_bound *= row_sum_bound;
    offset_bound = denominator * bias_bound + row_sum_bound * offset_bound;
    if (linear_bound >= limit || offset_bound >= limit || denominator >= limit) return k;
    denominator *= layer.denominator;
    if (denominator >= limit) return k;
  }
  return layers.size();
}

bool maps_fit(const std::vector<IntegerLayer>& layers, unsigned limit_bits) {
  return layers_that_fit(layers, limit_bits) == layers.size();
}

// The first `count` layers in 128 bits. Precondition: they fit (layers_that_fit).
FixedLayers<Wide> leading_wide_layers(const std::vector<IntegerLayer>& layers, std::size_t count) {
  FixedLayers<Wide> wide;
  Integer denominator = 1;
  for (std::size_t k = 0; k < count; ++k) {
    const IntegerLayer& layer = layers[k];
    std::vector<Wide> weights(layer.weights.size()), bias(layer.bias.size());
    for (std::size_t i = 0; i < weights.size(); ++i) weights[i] = narrow(layer.weights[i]);
    for (std::size_t i = 0; i < bias.size(); ++i) bias[i] = narrow(layer.bias[i]);
    wide.weights.push_back(std::move(weights));
    wide.bias.push_back(std::move(bias));
    wide.input_denominator.push_back(narrow(denominator));
    denominator *= layer.denominator;
    wide.map_denominator.push_back(denominator);
  }
  return wide;
}

}  // namespace

std::optional<FixedLayers<Wide>> wide_layers(const std::vector<IntegerLayer>& layers) {
  if (!maps_fit(layers, 125)) return std::nullopt;
  return leading_wide_layers(layers, layers.size());
}

std::optional<Layers256> layers_256(const std::vector<IntegerLayer>& layers) {
  if (!maps_fit(layers, 253)) return std::nullopt;
  Layers256 fixed;
  fixed.low = leading_wide_layers(layers, layers_that_fit(layers, 125));
  Integer denominator = 1;
  for (const IntegerLayer& layer : layers) {
    std::vector<std::int64_t> weights(layer.weights.size());
    for (std::size_t i = 0; i < weights.size(); ++i) {
      if (!mpz_fits_slong_p(layer.weights[i].get_mpz_t())) return std::nullopt;
      weights[i] = mpz_get_si(layer.weights[i].get_mpz_t());
    }
    std::vector<Int256> bias_term(layer.rows);
    for (std::size_t r = 0; r < layer.rows; ++r) bias_term[r] = to_int256(Integer(denominator * layer.bias[r]));
    fixed.weights.push_back(std::move(weights));
    fixed.bias_term.push_back(std::move(bias_term));
    denominator *= layer.denominator;
    fixed.map_denominator.push_back(denominator);
  }
  return fixed;
}

void compose_fixed(const IntegerLayer& layer, const FixedLayers<Wide>& fixed, std::size_t k, std::size_t n,
                   const std::vector<Wide>& input, const std::vector<char>& active, std::vector<Wide>& out) {
  const std::size_t width = n + 1;
  out.assign(layer.rows * width, 0);
  const std::vector<Wide>& weights = fixed.weights[k];
  for (std::size_t r = 0; r < layer.rows; ++r) {
    Wide* row = out.data() + r * width;
    row[n] = fixed.input_denominator[k] * fixed.bias[k][r];
    for (std::size_t t = 0; t < layer.cols; ++t) {
      const Wide weight = weights[r * layer.cols + t];
      if (!active[t] || weight == 0) continue;
      const Wide* from = input.data() + t * width;
      for (std::size_t c = 0; c < width; ++c) row[c] += weight * from[c];
    }
  }
}

void compose_fixed(const IntegerLayer& layer, const Layers256& fixed, std::size_t k, std::size_t n,
                   const std::vector<Int256>& input, const std::vector<char>& active, std::vector<Int256>& out) {
  const std::size_t width = n + 1;
  out.assign(layer.rows * width, Int256{});
  const std::vector<std::int64_t>& weights = fixed.weights[k];
  for (std::size_t r = 0; r < layer.rows; ++r) {
    Int256* row = out.data() + r * width;
    row[n] = fixed.bias_term[k][r];
    for (std::size_t t = 0; t < layer.cols; ++t) {
      const std::int64_t weight = weights[r * layer.cols + t];
      if (!active[t] || weight == 0) continue;
      const Int256* from = input.data() + t * width;
      for (std::size_t c = 0; c < width; ++c) add_product(row[c], weight, from[c]);
    }
  }
}

Int256 to_int256(const Integer& value) {
  Int256 out;
  std::size_t count = 0;
  mpz_export(out.limbs.data(), &count, -1, sizeof(std::uint64_t), 0, 0, value.get_mpz_t());  // |value|
  if (sgn(value) < 0) {  // two's complement: invert and add one
    UnsignedWide carry = 1;
    for (std::uint64_t& limb : out.limbs) {
      carry += static_cast<std::uint64_t>(~limb);
      limb = static_cast<std::uint64_t>(carry);
      carry >>= 64;
    }
  }
  return out;
}

Int256 to_int256(Wide value) {
  const auto bits = static_cast<UnsignedWide>(value);
  const std::uint64_t extension = value < 0 ? ~std::uint64_t{0} : 0;
  return Int256{{static_cast<std::uint64_t>(bits), static_cast<std::uint64_t>(bits >> 64), extension, extension}};
}

void set_integer(Integer& out, const Int256& value) {
  const bool is_negative = (value.limbs[3] >> 63) != 0;
  const std::uint64_t extension = is_negative ? ~std::uint64_t{0} : 0;
  if (value.limbs[1] == extension && value.limbs[2] == extension && value.limbs[3] == extension &&
      ((value.limbs[0] >> 63) != 0) == is_negative) {
    mpz_set_si(out.get_mpz_t(), static_cast<long>(static_cast<std::int64_t>(value.limbs[0])));
    return;
  }
  std::array<std::uint64_t, 4> magnitude = value.limbs;
  if (is_negative) {
    UnsignedWide carry = 1;
    for (std::uint64_t& limb : magnitude) {
      carry += static_cast<std::uint64_t>(~limb);
      limb = static_cast<std::uint64_t>(carry);
      carry >>= 64;
    }
  }
  mpz_import(out.get_mpz_t(), magnitude.size(), -1, sizeof(std::uint64_t), 0, 0, magnitude.data());
  if (is_negative) mpz_neg(out.get_mpz_t(), out.get_mpz_t());
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

PatternLayerMaps::PatternLayerMaps(const Network& network, const std::vector<IntegerLayer>& layers)
    : network_(network), layers_(layers), wide_(wide_layers(layers)) {
  const std::size_t n = network.input_dim;
  if (!wide_) wide256_ = layers_256(layers);
  wide_identity_.assign(n * (n + 1), 0);
  wide256_identity_.assign(n * (n + 1), Int256{});
  identity_ = IntegerMap{n, n, std::vector<Integer>(n * n, Integer(0)), std::vector<Integer>(n, Integer(0)), Integer(1)};
  for (std::size_t k = 0; k < n; ++k) {
    wide_identity_[k * (n + 1) + k] = 1;  // row k: e_k | 0
    wide256_identity_[k * (n + 1) + k].limbs[0] = 1;
    identity_.linear[k * n + k] = 1;
  }
}

// Every layer's pre-activation map for the pattern, into pre_ (all layers).
// Layer k's map depends only on the states of layers below k, so the maps
// of the previous pattern this processor saw are kept up to the first layer
// whose states differ (the walk hands each thread patterns in sorted order,
// so neighbours in that order share long prefixes).
const std::vector<IntegerMap>& PatternLayerMaps::compute(const ActivationPattern& pattern) {
  pre_.resize(layers_.size());
  const std::size_t start = first_layer_to_compute(pattern);
  maps_pattern_.states.clear();  // invalid until every layer is done (a stop may cut this short)
  if (wide_) compute_fixed_maps(pattern, start, *wide_, wide_identity_, wide_pre_);
  else if (wide256_) compute_mixed_maps(pattern, start);
  else compute_gmp_maps(pattern, start);
  maps_pattern_ = pattern;
  return pre_;
}

// The first layer whose map differs from the one in pre_ (layers_.size() when none does).
std::size_t PatternLayerMaps::first_layer_to_compute(const ActivationPattern& pattern) const {
  if (maps_pattern_.states.size() != pattern.states.size()) return 0;
  const auto mismatch = std::mismatch(pattern.states.begin(), pattern.states.end(), maps_pattern_.states.begin());
  if (mismatch.first == pattern.states.end()) return layers_.size();
  const auto neuron = static_cast<std::size_t>(mismatch.first - pattern.states.begin());
  std::size_t layer = 0;
  while (neuron >= network_.first_neuron_of_layer(layer) + layers_[layer].rows) ++layer;
  return layer + 1;  // the maps of layers 0..layer depend only on states below them
}

// Which rows of layer k's input are on: all inputs for k = 0, else layer k-1's neurons.
void PatternLayerMaps::set_active(const ActivationPattern& pattern, std::size_t k) {
  if (k == 0) {
    active_.assign(network_.input_dim, 1);
    return;
  }
  const std::size_t first = network_.first_neuron_of_layer(k - 1);
  active_.resize(layers_[k - 1].rows);
  for (std::size_t t = 0; t < active_.size(); ++t) active_[t] = pattern.states[first + t] == NeuronState::on;
}

void PatternLayerMaps::compute_gmp_maps(const ActivationPattern& pattern, std::size_t start) {
  for (std::size_t k = start; k < layers_.size(); ++k) {
    poll_stop();
    set_active(pattern, k);
    compose_active(layers_[k], k == 0 ? identity_ : pre_[k - 1], active_, pre_[k]);
  }
}

// compute_gmp_maps in fixed-width integers (fixed proves they fit), then
// each entry set into pre_'s GMP integers.
template <class T, class Layers>
void PatternLayerMaps::compute_fixed_maps(const ActivationPattern& pattern, std::size_t start, const Layers& fixed,
                                          const std::vector<T>& identity, std::vector<std::vector<T>>& fixed_pre) {
  const std::size_t n = network_.input_dim;
  fixed_pre.resize(layers_.size());
  for (std::size_t k = start; k < layers_.size(); ++k) {
    set_active(pattern, k);
    compose_fixed(layers_[k], fixed, k, n, k == 0 ? identity : fixed_pre[k - 1], active_, fixed_pre[k]);
    store_map(k, fixed_pre[k], fixed.map_denominator[k]);
  }
}

// The 256-bit tier: the leading layers whose bound fits 128 bits in Wide
// (several times cheaper), the others in Int256.
void PatternLayerMaps::compute_mixed_maps(const ActivationPattern& pattern, std::size_t start) {
  const Layers256& fixed = *wide256_;
  const std::size_t low = fixed.low.map_denominator.size();
  const std::size_t n = network_.input_dim;
  wide_pre_.resize(low);
  wide256_pre_.resize(layers_.size());
  for (std::size_t k = start; k < layers_.size(); ++k) {
    set_active(pattern, k);
    if (k < low) {
      compose_fixed(layers_[k], fixed.low, k, n, k == 0 ? wide_identity_ : wide_pre_[k - 1], active_, wide_pre_[k]);
      store_map(k, wide_pre_[k], fixed.low.map_denominator[k]);
      continue;
    }
    const std::vector<Int256>* input = k == 0 ? &wide256_identity_ : &wide256_pre_[k - 1];
    if (k > 0 && k - 1 < low) {  // the first 256-bit layer: its input widened
      widened_.resize(wide_pre_[k - 1].size());
      for (std::size_t i = 0; i < widened_.size(); ++i) widened_[i] = to_int256(wide_pre_[k - 1][i]);
      input = &widened_;
    }
    compose_fixed(layers_[k], fixed, k, n, *input, active_, wide256_pre_[k]);
    store_map(k, wide256_pre_[k], fixed.map_denominator[k]);
  }
}

// Layer k's map (rows of n linear entries, then the offset) into pre_[k]'s GMP integers.
template <class T>
void PatternLayerMaps::store_map(std::size_t k, const std::vector<T>& values, const Integer& denominator) {
  const std::size_t n = network_.input_dim;
  IntegerMap& map = pre_[k];
  map.rows = layers_[k].rows;
  map.cols = n;
  map.linear.resize(map.rows * n);
  map.offset.resize(map.rows);
  for (std::size_t r = 0; r < map.rows; ++r) {
    const T* row = values.data() + r * (n + 1);
    for (std::size_t c = 0; c < n; ++c) set_integer(map.linear[r * n + c], row[c]);
    set_integer(map.offset[r], row[n]);
  }
  map.denominator = denominator;
}

}  // namespace pleat::detail
