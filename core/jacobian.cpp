#include "core/jacobian.hpp"

#include <gmp.h>
#include <flint/flint.h>
#include <flint/nmod.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <string>

namespace pleat {
namespace {

// ---- One walk for three kinds of numbers ------------------------------------
// The forward and backward passes below are written once over an arithmetic
// policy: Rational (exact), residues mod p (word arithmetic), double.

struct ExactArithmetic {
  using Value = Rational;
  Value zero() const { return Value(0); }
  Value one() const { return Value(1); }
  Value add(const Value& a, const Value& b) const { return a + b; }
  Value multiply(const Value& a, const Value& b) const { return a * b; }
  Value negate(const Value& a) const { return -a; }
  bool is_zero(const Value& a) const { return sgn(a) == 0; }
  // x -> factor * x, for many x.
  auto times(const Value& factor) const {
    return [&factor](const Value& x) { return factor * x; };
  }
};

struct DoubleArithmetic {
  using Value = double;
  Value zero() const { return 0.0; }
  Value one() const { return 1.0; }
  Value add(Value a, Value b) const { return a + b; }
  Value multiply(Value a, Value b) const { return a * b; }
  Value negate(Value a) const { return -a; }
  bool is_zero(Value a) const { return a == 0.0; }
  auto times(Value factor) const {
    return [factor](Value x) { return factor * x; };
  }
};

struct ModularArithmetic {
  using Value = std::uint64_t;
  nmod_t modulus;
  explicit ModularArithmetic(std::uint64_t prime) { nmod_init(&modulus, prime); }
  Value zero() const { return 0; }
  Value one() const { return 1; }
  Value add(Value a, Value b) const { return nmod_add(a, b, modulus); }
  Value multiply(Value a, Value b) const { return nmod_mul(a, b, modulus); }
  Value negate(Value a) const { return nmod_neg(a, modulus); }
  bool is_zero(Value a) const { return a == 0; }
  // Shoup's product with a precomputed quotient of the fixed factor: two
  // word multiplications instead of a reduction by the prime per product
  // (the same residue; Shoup's method needs p < 2^63, which reduce_modulo
  // ensures; a network reduced otherwise takes nmod_mul).
  auto times(Value factor) const {
    const bool is_shoup = modulus.n < (std::uint64_t{1} << 63);
    const Value precomputed = is_shoup ? n_mulmod_precomp_shoup(factor, modulus.n) : 0;
    return [factor, precomputed, is_shoup, modulus = modulus](Value x) {
      return is_shoup ? n_mulmod_shoup(factor, x, precomputed, modulus.n) : nmod_mul(factor, x, modulus);
    };
  }
};

// The layers of any of the three network types, seen through pointers.
template <class T>
struct LayersView {
  std::size_t input_dim = 0;
  std::vector<const Matrix<T>*> weights;
  std::vector<const std::vector<T>*> bias;
  bool has_output_relu = false;

  std::size_t depth() const { return weights.size(); }
  std::size_t output_dim() const { return bias.back()->size(); }
  bool feeds_relu(std::size_t k) const { return k + 1 < depth() || has_output_relu; }
  std::size_t parameter_offset(std::size_t k) const {
    std::size_t offset = 0;
    for (std::size_t i = 0; i < k; ++i) offset += (weights[i]->cols() + 1) * weights[i]->rows();
    return offset;
  }
  std::size_t relu_neuron_count() const {
    std::size_t count = 0;
    for (std::size_t k = 0; k < depth(); ++k)
      if (feeds_relu(k)) count += weights[k]->rows();
    return count;
  }
};

LayersView<Rational> view_of(const Network& network) {
  LayersView<Rational> view;
  view.input_dim = network.input_dim;
  for (const Layer& layer : network.layers) {
    view.weights.push_back(&layer.weights);
    view.bias.push_back(&layer.bias);
  }
  view.has_output_relu = network.has_output_relu();
  return view;
}

LayersView<std::uint64_t> view_of(const ModularNetwork& network) {
  LayersView<std::uint64_t> view;
  view.input_dim = network.input_dim;
  for (std::size_t k = 0; k < network.weights.size(); ++k) {
    view.weights.push_back(&network.weights[k]);
    view.bias.push_back(&network.bias[k]);
  }
  view.has_output_relu = network.has_output_relu;
  return view;
}

LayersView<double> view_of(const DoubleNetwork& network) {
  LayersView<double> view;
  view.input_dim = network.input_dim;
  for (std::size_t k = 0; k < network.weights.size(); ++k) {
    view.weights.push_back(&network.weights[k]);
    view.bias.push_back(&network.bias[k]);
  }
  view.has_output_relu = !network.activation.empty() && network.activation.back() == Activation::relu;
  return view;
}

template <class T>
void check_view(const LayersView<T>& view, const ActivationPattern& pattern, const char* where) {
  if (view.depth() == 0) throw usage_error(std::string(where) + ": the network has no layers");
  if (pattern.states.size() != view.relu_neuron_count())
    throw usage_error(std::string(where) + ": the pattern has " +
                      std::to_string(pattern.states.size()) + " states, the network " +
                      std::to_string(view.relu_neuron_count()) + " ReLU neurons");
  for (std::size_t neuron = 0; neuron < pattern.states.size(); ++neuron)
    if (pattern.states[neuron] == NeuronState::zero_at_point)
      throw usage_error(std::string(where) + ": neuron " + std::to_string(neuron) +
                        " has state '=', which names a point, not a region");
}

// Whether each neuron of layer k passes its value on (state on, or no ReLU).
template <class T>
std::vector<std::vector<bool>> passing_neurons(const LayersView<T>& view,
                                               const ActivationPattern& pattern) {
  std::vector<std::vector<bool>> passing(view.depth());
  std::size_t neuron = 0;
  for (std::size_t k = 0; k < view.depth(); ++k) {
    const std::size_t width = view.weights[k]->rows();
    passing[k].assign(width, true);
    if (!view.feeds_relu(k)) continue;
    for (std::size_t i = 0; i < width; ++i) passing[k][i] = pattern.is_on(neuron++);
  }
  return passing;
}

// The input of every layer as an affine map of x on the pattern:
// inputs[k] = (P_{k}, p_{k}) feeds layer k (inputs[0] is the identity).
template <class Arithmetic>
struct LayerInput {
  Matrix<typename Arithmetic::Value> linear;  // fan_in x n0
  std::vector<typename Arithmetic::Value> offset;
};

template <class Arithmetic>
std::vector<LayerInput<Arithmetic>> forward_inputs(const LayersView<typename Arithmetic::Value>& view,
                                                   const std::vector<std::vector<bool>>& passing,
                                                   const Arithmetic& arithmetic) {
  using Value = typename Arithmetic::Value;
  const std::size_t n0 = view.input_dim;
  std::vector<LayerInput<Arithmetic>> inputs(view.depth());
  inputs[0].linear = Matrix<Value>(n0, n0);
  for (std::size_t t = 0; t < n0; ++t) inputs[0].linear(t, t) = arithmetic.one();
  inputs[0].offset.assign(n0, arithmetic.zero());
  for (std::size_t k = 0; k + 1 < view.depth(); ++k) {
    const Matrix<Value>& weights = *view.weights[k];
    const LayerInput<Arithmetic>& in = inputs[k];
    LayerInput<Arithmetic>& out = inputs[k + 1];
    out.linear = Matrix<Value>(weights.rows(), n0);
    out.offset.assign(weights.rows(), arithmetic.zero());
    for (std::size_t i = 0; i < weights.rows(); ++i) {
      if (!passing[k][i]) continue;  // off or 'z': its output is 0 on the region
      Value offset = (*view.bias[k])[i];
      for (std::size_t j = 0; j < weights.cols(); ++j) {
        const Value& w = weights(i, j);
        if (arithmetic.is_zero(w)) continue;
        offset = arithmetic.add(offset, arithmetic.multiply(w, in.offset[j]));
        for (std::size_t t = 0; t < n0; ++t)
          out.linear(i, t) = arithmetic.add(out.linear(i, t), arithmetic.multiply(w, in.linear(j, t)));
      }
      out.offset[i] = offset;
    }
  }
  return inputs;
}

// The same modulo p, each entry's sum of products accumulated exactly in 192
// bits (a 128-bit sum and a count of its wrap-arounds) and reduced once,
// instead of a reduction per product. The same residues.
std::vector<LayerInput<ModularArithmetic>> forward_inputs(const LayersView<std::uint64_t>& view,
                                                          const std::vector<std::vector<bool>>& passing,
                                                          const ModularArithmetic& arithmetic) {
  __extension__ typedef unsigned __int128 Wide;  // GCC/Clang: exact 64 x 64 -> 128 products
  const nmod_t& modulus = arithmetic.modulus;
  const std::size_t n0 = view.input_dim;
  std::vector<LayerInput<ModularArithmetic>> inputs(view.depth());
  inputs[0].linear = Matrix<std::uint64_t>(n0, n0);
  for (std::size_t t = 0; t < n0; ++t) inputs[0].linear(t, t) = 1;
  inputs[0].offset.assign(n0, 0);
  std::vector<Wide> sums(n0 + 1);
  std::vector<std::uint64_t> wraps(n0 + 1);
  const auto reduce = [&](std::size_t slot) {
    return n_lll_mod_preinv(wraps[slot] % modulus.n, static_cast<std::uint64_t>(sums[slot] >> 64),
                            static_cast<std::uint64_t>(sums[slot]), modulus.n, modulus.ninv);
  };
  for (std::size_t k = 0; k + 1 < view.depth(); ++k) {
    const Matrix<std::uint64_t>& weights = *view.weights[k];
    const LayerInput<ModularArithmetic>& in = inputs[k];
    LayerInput<ModularArithmetic>& out = inputs[k + 1];
    out.linear = Matrix<std::uint64_t>(weights.rows(), n0);
    out.offset.assign(weights.rows(), 0);
    for (std::size_t i = 0; i < weights.rows(); ++i) {
      if (!passing[k][i]) continue;  // off or 'z': its output is 0 on the region
      std::fill(sums.begin(), sums.end(), 0);
      std::fill(wraps.begin(), wraps.end(), 0);
      const auto add = [&](std::size_t slot, std::uint64_t a, std::uint64_t b) {
        const Wide product = static_cast<Wide>(a) * b;
        sums[slot] += product;
        wraps[slot] += static_cast<std::uint64_t>(sums[slot] < product);
      };
      for (std::size_t j = 0; j < weights.cols(); ++j) {
        const std::uint64_t w = weights(i, j);
        if (w == 0) continue;
        add(n0, w, in.offset[j]);
        for (std::size_t t = 0; t < n0; ++t) add(t, w, in.linear(j, t));
      }
      out.offset[i] = nmod_add((*view.bias[k])[i], reduce(n0), modulus);
      for (std::size_t t = 0; t < n0; ++t) out.linear(i, t) = reduce(t);
    }
  }
  return inputs;
}

// Backward signals. reaching[k] (nd x n_k) is dF/dz_k as if every neuron of
// layer k passed; signal[k] is reaching[k] with the columns of non-passing
// neurons set to 0 (the G_k of the header).
template <class Arithmetic>
struct BackwardSignals {
  std::vector<Matrix<typename Arithmetic::Value>> reaching;
  std::vector<Matrix<typename Arithmetic::Value>> signal;
};

template <class Arithmetic>
BackwardSignals<Arithmetic> backward_signals(const LayersView<typename Arithmetic::Value>& view,
                                             const std::vector<std::vector<bool>>& passing,
                                             const Arithmetic& arithmetic) {
  using Value = typename Arithmetic::Value;
  const std::size_t d = view.depth();
  const std::size_t nd = view.output_dim();
  BackwardSignals<Arithmetic> result;
  result.reaching.resize(d);
  result.signal.resize(d);
  result.reaching[d - 1] = Matrix<Value>(nd, nd);
  for (std::size_t o = 0; o < nd; ++o) result.reaching[d - 1](o, o) = arithmetic.one();
  for (std::size_t k = d; k-- > 0;) {
    if (k + 1 < d) {
      const Matrix<Value>& next_signal = result.signal[k + 1];
      const Matrix<Value>& next_weights = *view.weights[k + 1];  // n_{k+1} x n_k
      Matrix<Value> reaching(nd, next_weights.cols());
      for (std::size_t o = 0; o < nd; ++o)
        for (std::size_t m = 0; m < next_weights.rows(); ++m) {
          const Value& g = next_signal(o, m);
          if (arithmetic.is_zero(g)) continue;
          for (std::size_t i = 0; i < next_weights.cols(); ++i)
            reaching(o, i) = arithmetic.add(reaching(o, i), arithmetic.multiply(g, next_weights(m, i)));
        }
      result.reaching[k] = std::move(reaching);
    }
    result.signal[k] = result.reaching[k];
    for (std::size_t i = 0; i < passing[k].size(); ++i)
      if (!passing[k][i])
        for (std::size_t o = 0; o < nd; ++o) result.signal[k](o, i) = arithmetic.zero();
  }
  return result;
}

template <class Arithmetic>
Matrix<typename Arithmetic::Value> coefficient_blocks_of(const LayersView<typename Arithmetic::Value>& view,
                                                        const ActivationPattern& pattern,
                                                        const Arithmetic& arithmetic) {
  using Value = typename Arithmetic::Value;
  const auto passing = passing_neurons(view, pattern);
  const auto inputs = forward_inputs(view, passing, arithmetic);
  const auto backward = backward_signals(view, passing, arithmetic);
  const std::size_t n0 = view.input_dim;
  const std::size_t nd = view.output_dim();
  Matrix<Value> blocks(nd * (n0 + 1), view.parameter_offset(view.depth()));
  for (std::size_t k = 0; k < view.depth(); ++k) {
    const std::size_t width = view.weights[k]->rows();
    const std::size_t fan_in = view.weights[k]->cols();
    const std::size_t offset = view.parameter_offset(k);
    const Matrix<Value>& signal = backward.signal[k];
    const LayerInput<Arithmetic>& in = inputs[k];
    for (std::size_t o = 0; o < nd; ++o) {
      const std::size_t offset_row = o * (n0 + 1);
      for (std::size_t i = 0; i < width; ++i) {
        const Value& g = signal(o, i);
        if (arithmetic.is_zero(g)) continue;
        blocks(offset_row, offset + width * fan_in + i) = g;  // d c_o / d b_k[i]
        const auto times_g = arithmetic.times(g);
        for (std::size_t j = 0; j < fan_in; ++j) {
          const std::size_t column = offset + i * fan_in + j;
          blocks(offset_row, column) = times_g(in.offset[j]);
          for (std::size_t t = 0; t < n0; ++t) blocks(offset_row + 1 + t, column) = times_g(in.linear(j, t));
        }
      }
    }
  }
  return blocks;
}

// J(x)[o] = dc_o/dtheta + sum_t x_t dA[o,t]/dtheta.
template <class Arithmetic>
Matrix<typename Arithmetic::Value> jacobian_from_blocks(const Matrix<typename Arithmetic::Value>& blocks,
                                                       const std::vector<typename Arithmetic::Value>& x,
                                                       std::size_t output_dim,
                                                       const Arithmetic& arithmetic) {
  using Value = typename Arithmetic::Value;
  const std::size_t n0 = x.size();
  Matrix<Value> jacobian(output_dim, blocks.cols());
  for (std::size_t o = 0; o < output_dim; ++o)
    for (std::size_t c = 0; c < blocks.cols(); ++c) {
      Value value = blocks(o * (n0 + 1), c);
      for (std::size_t t = 0; t < n0; ++t) {
        const Value& slope = blocks(o * (n0 + 1) + 1 + t, c);
        if (!arithmetic.is_zero(slope)) value = arithmetic.add(value, arithmetic.multiply(x[t], slope));
      }
      jacobian(o, c) = value;
    }
  return jacobian;
}

std::string neuron_description(const Network& network, std::size_t neuron) {
  std::size_t k = 0;
  while (k + 1 < network.depth() && neuron >= network.first_neuron_of_layer(k + 1)) ++k;
  return "neuron " + std::to_string(neuron) + " (layer " + std::to_string(k + 1) + ", index " +
         std::to_string(neuron - network.first_neuron_of_layer(k)) + ")";
}

}  // namespace

// ---- Coefficient blocks (exact) ---------------------------------------------

std::size_t coefficient_row_of_offset(const Network& network, std::size_t output) {
  if (output >= network.output_dim()) throw usage_error("coefficient_row_of_offset: no such output");
  return output * (network.input_dim + 1);
}

std::size_t coefficient_row_of_slope(const Network& network, std::size_t output, std::size_t input) {
  if (output >= network.output_dim() || input >= network.input_dim)
    throw usage_error("coefficient_row_of_slope: no such output or input");
  return output * (network.input_dim + 1) + 1 + input;
}

RationalMatrix coefficient_blocks(const Network& network, const ActivationPattern& pattern) {
  const auto view = view_of(network);
  check_view(view, pattern, "coefficient_blocks");
  return coefficient_blocks_of(view, pattern, ExactArithmetic{});
}

std::vector<std::size_t> nonsmooth_neurons(const Network& network, const ActivationPattern& pattern) {
  const auto view = view_of(network);
  check_view(view, pattern, "nonsmooth_neurons");
  std::vector<std::size_t> result;
  bool has_zero_state = false;
  for (NeuronState state : pattern.states) has_zero_state |= state == NeuronState::zero_on_region;
  if (!has_zero_state) return result;
  const ExactArithmetic arithmetic;
  const auto passing = passing_neurons(view, pattern);
  const auto backward = backward_signals(view, passing, arithmetic);
  std::size_t neuron = 0;
  for (std::size_t k = 0; k < view.depth(); ++k) {
    if (!view.feeds_relu(k)) continue;
    const Matrix<Rational>& reaching = backward.reaching[k];
    for (std::size_t i = 0; i < reaching.cols(); ++i, ++neuron) {
      if (pattern.states[neuron] != NeuronState::zero_on_region) continue;
      for (std::size_t o = 0; o < reaching.rows(); ++o)
        if (sgn(reaching(o, i)) != 0) {
          result.push_back(neuron);
          break;
        }
    }
  }
  return result;
}

// ---- Modulo a prime ---------------------------------------------------------

std::optional<ModularNetwork> reduce_modulo(const Network& network, std::uint64_t prime) {
  if (prime < 2 || prime >= (std::uint64_t{1} << 63))
    throw usage_error("reduce_modulo: prime must lie in [2, 2^63)");
  ModularNetwork out;
  out.prime = prime;
  out.input_dim = network.input_dim;
  out.has_output_relu = network.has_output_relu();
  for (const Layer& layer : network.layers) {
    auto weights = reduce_modulo(layer.weights, prime);
    if (!weights) return std::nullopt;
    auto bias = reduce_modulo(layer.bias, prime);
    if (!bias) return std::nullopt;
    out.weights.push_back(std::move(*weights));
    out.bias.push_back(std::move(*bias));
  }
  return out;
}

ModularNetwork reduce_modulo_some_prime(const Network& network, std::uint64_t preferred_prime) {
  // The walk's prime is known prime (tests/core/rank_test.cpp): no
  // primality test for it, whose first call in a process cost certify about
  // 15 us before its walk (FLINT's BPSW code paged in).
  const bool is_prime = preferred_prime == primary_prime() || n_is_prime(preferred_prime);
  std::uint64_t prime = is_prime ? preferred_prime : next_prime_after(preferred_prime);
  // Each denominator has finitely many prime factors, so this ends quickly.
  while (true) {
    if (auto reduced = reduce_modulo(network, prime)) return std::move(*reduced);
    prime = next_prime_after(prime);
  }
}

ModularMatrix coefficient_blocks_mod(const ModularNetwork& network, const ActivationPattern& pattern) {
  const auto view = view_of(network);
  check_view(view, pattern, "coefficient_blocks_mod");
  return coefficient_blocks_of(view, pattern, ModularArithmetic(network.prime));
}

// ---- Jacobians at points ----------------------------------------------------

RationalMatrix parameter_jacobian_exact(const Network& network, const RationalVector& x) {
  const ActivationPattern pattern = pattern_around_point(network, x);  // checks x.size()
  for (std::size_t neuron = 0; neuron < pattern.states.size(); ++neuron)
    if (pattern.states[neuron] == NeuronState::zero_at_point)
      throw input_error("the point lies on the bent hyperplane of " +
                        neuron_description(network, neuron) +
                        ": its pre-activation is 0 there, so F is not differentiable in the parameters");
  // A neuron identically zero around x is smooth there only when no change of
  // it reaches the output (spec: zero backward signal).
  const std::vector<std::size_t> blocking = nonsmooth_neurons(network, pattern);
  if (!blocking.empty())
    throw input_error("the point lies in a region where " + neuron_description(network, blocking.front()) +
                      " is identically zero with a nonzero backward signal: F has no smooth point there");
  const ExactArithmetic arithmetic;
  const auto blocks = coefficient_blocks_of(view_of(network), pattern, arithmetic);
  return jacobian_from_blocks(blocks, x, network.output_dim(), arithmetic);
}

DoubleMatrix parameter_jacobian_double(const DoubleNetwork& network, const DoubleVector& x) {
  const EvaluationDouble evaluation = evaluate_double(network, x);  // checks x.size()
  ActivationPattern pattern;
  for (std::size_t k = 0; k < network.weights.size(); ++k) {
    if (network.activation[k] != Activation::relu) continue;
    for (double z : evaluation.preactivation[k])
      pattern.states.push_back(z > 0 ? NeuronState::on : NeuronState::off);
  }
  const DoubleArithmetic arithmetic;
  const auto blocks = coefficient_blocks_of(view_of(network), pattern, arithmetic);
  return jacobian_from_blocks(blocks, x, network.bias.back().size(), arithmetic);
}

// ---- Scaling symmetry -------------------------------------------------------

RationalMatrix scaling_directions(const Network& network) {
  RationalMatrix directions(network.hidden_neuron_count(), network.parametric_dimension());
  std::size_t neuron = 0;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const Layer& next = network.layers[k + 1];
    const std::size_t offset = network.parameter_offset(k);
    const std::size_t next_offset = network.parameter_offset(k + 1);
    for (std::size_t i = 0; i < layer.width(); ++i, ++neuron) {
      for (std::size_t j = 0; j < layer.fan_in(); ++j)
        directions(neuron, offset + i * layer.fan_in() + j) = layer.weights(i, j);
      directions(neuron, offset + layer.width() * layer.fan_in() + i) = layer.bias[i];
      for (std::size_t m = 0; m < next.width(); ++m)
        directions(neuron, next_offset + m * next.fan_in() + i) = -next.weights(m, i);
    }
  }
  return directions;
}

RationalMatrix scaling_directions(const Network& network, const std::vector<std::size_t>& neurons) {
  const std::size_t hidden = network.hidden_neuron_count();
  for (std::size_t neuron : neurons)
    if (neuron >= hidden)
      throw usage_error("scaling_directions: neuron " + std::to_string(neuron) + " is not a hidden neuron");
  // Layer k's first neuron and first parameter, computed once (deep networks).
  std::vector<std::size_t> first_neuron{0}, first_parameter{0};
  for (const Layer& layer : network.layers) {
    first_neuron.push_back(first_neuron.back() + layer.width());
    first_parameter.push_back(first_parameter.back() + (layer.fan_in() + 1) * layer.width());
  }
  RationalMatrix directions(neurons.size(), network.parametric_dimension());
  for (std::size_t row = 0; row < neurons.size(); ++row) {
    const std::size_t k =
        static_cast<std::size_t>(std::upper_bound(first_neuron.begin(), first_neuron.end(), neurons[row]) -
                                 first_neuron.begin()) - 1;
    const std::size_t i = neurons[row] - first_neuron[k];
    const Layer& layer = network.layers[k];
    const Layer& next = network.layers[k + 1];
    const std::size_t offset = first_parameter[k];
    const std::size_t next_offset = first_parameter[k + 1];
    for (std::size_t j = 0; j < layer.fan_in(); ++j)
      directions(row, offset + i * layer.fan_in() + j) = layer.weights(i, j);
    directions(row, offset + layer.width() * layer.fan_in() + i) = layer.bias[i];
    for (std::size_t m = 0; m < next.width(); ++m)
      directions(row, next_offset + m * next.fan_in() + i) = -next.weights(m, i);
  }
  return directions;
}

namespace {

// Disjoint sets over the vertices of the scaling graph (core/jacobian.hpp).
class DisjointSets {
 public:
  explicit DisjointSets(std::size_t size) : parent_(size) {
    for (std::size_t v = 0; v < size; ++v) parent_[v] = v;
  }
  std::size_t find(std::size_t v) {
    while (parent_[v] != v) v = parent_[v] = parent_[parent_[v]];
    return v;
  }
  // Joins the sets of a and b; false when they were one already.
  bool join(std::size_t a, std::size_t b) {
    a = find(a);
    b = find(b);
    if (a == b) return false;
    parent_[std::max(a, b)] = std::min(a, b);
    return true;
  }

 private:
  std::vector<std::size_t> parent_;
};

}  // namespace

ScalingStructure scaling_structure(const Network& network) {
  const std::size_t hidden = network.hidden_neuron_count();
  const std::size_t ground = hidden;
  DisjointSets sets(hidden + 1);
  ScalingStructure structure;
  // A layer's neuron i as a vertex: itself when hidden, the ground otherwise
  // (the output layer; "the layer before the first" is the input).
  std::vector<std::size_t> first_neuron{0};
  for (const Layer& layer : network.layers) first_neuron.push_back(first_neuron.back() + layer.width());
  auto vertex = [&](std::size_t layer, std::size_t i) {
    return layer + 1 < network.depth() ? first_neuron[layer] + i : ground;
  };
  std::size_t column = 0;
  for (std::size_t k = 0; k < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j, ++column) {
        const std::size_t from = k == 0 ? ground : vertex(k - 1, j);
        if (sgn(layer.weights(i, j)) != 0 && sets.join(vertex(k, i), from)) structure.pivot_columns.push_back(column);
      }
    for (std::size_t i = 0; i < layer.width(); ++i, ++column)
      if (sgn(layer.bias[i]) != 0 && sets.join(vertex(k, i), ground)) structure.pivot_columns.push_back(column);
  }
  structure.rank = structure.pivot_columns.size();
  // The largest neuron of each component without the ground is left out.
  std::vector<std::size_t> largest(hidden + 1, 0);
  for (std::size_t n = 0; n < hidden; ++n) largest[sets.find(n)] = n;
  const std::size_t ground_root = sets.find(ground);
  for (std::size_t n = 0; n < hidden; ++n) {
    const std::size_t root = sets.find(n);
    if (root == ground_root || largest[root] != n) structure.independent_neurons.push_back(n);
  }
  return structure;
}

std::size_t scaling_bound(const Network& network) {
  return network.parametric_dimension() - scaling_structure(network).rank;
}

}  // namespace pleat
