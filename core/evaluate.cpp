// Exact and double evaluation; affine maps of a network on one pattern.
#include "core/evaluate.hpp"

#include "core/stop.hpp"

#include <string>

namespace pleat {

namespace {

bool feeds_relu(const Layer& layer) { return layer.activation == Activation::relu; }

// Neurons followed by a ReLU, counted here from the layers themselves so that
// the check does not depend on anything but the layer list.
std::size_t count_relu_neurons(const Network& network) {
  std::size_t count = 0;
  for (const Layer& layer : network.layers)
    if (feeds_relu(layer)) count += layer.width();
  return count;
}

void check_layer_shape(const Layer& layer, std::size_t index) {
  if (layer.weights.rows() != layer.bias.size())
    throw usage_error("layer " + std::to_string(index) + ": weights have " +
                      std::to_string(layer.weights.rows()) + " rows but the bias has " +
                      std::to_string(layer.bias.size()) + " entries");
}

}  // namespace

AffineMap identity_map(std::size_t n) {
  AffineMap map{RationalMatrix(n, n), RationalVector(n, Rational(0))};
  for (std::size_t i = 0; i < n; ++i) map.linear(i, i) = 1;
  return map;
}

AffineMap compose_layer(const Layer& layer, const AffineMap& input) {
  if (input.linear.rows() != layer.fan_in() || input.offset.size() != layer.fan_in())
    throw usage_error("compose_layer: the layer takes " + std::to_string(layer.fan_in()) +
                      " inputs but the map has " + std::to_string(input.linear.rows()) +
                      " rows");
  AffineMap out{product(layer.weights, input.linear), product(layer.weights, input.offset)};
  for (std::size_t i = 0; i < out.offset.size(); ++i) out.offset[i] += layer.bias[i];
  return out;
}

AffineMap apply_states(const AffineMap& preactivation, std::span<const NeuronState> states) {
  if (states.size() != preactivation.linear.rows())
    throw usage_error("apply_states: " + std::to_string(states.size()) + " states for " +
                      std::to_string(preactivation.linear.rows()) + " neurons");
  AffineMap out = preactivation;
  for (std::size_t i = 0; i < states.size(); ++i) {
    if (states[i] == NeuronState::on) continue;
    for (std::size_t c = 0; c < out.linear.cols(); ++c) out.linear(i, c) = 0;
    out.offset[i] = 0;
  }
  return out;
}

PatternMaps maps_on_pattern(const Network& network, const ActivationPattern& pattern) {
  if (pattern.states.size() != count_relu_neurons(network))
    throw usage_error("maps_on_pattern: the pattern has " +
                      std::to_string(pattern.states.size()) + " states, the network " +
                      std::to_string(count_relu_neurons(network)) + " ReLU neurons");
  PatternMaps maps;
  maps.preactivation.reserve(network.depth());
  AffineMap current = identity_map(network.input_dim);
  std::size_t first_neuron = 0;
  for (std::size_t k = 0; k < network.depth(); ++k) {
    poll_stop();  // deep networks: one region's maps can take minutes of exact work
    const Layer& layer = network.layers[k];
    check_layer_shape(layer, k);
    maps.preactivation.push_back(compose_layer(layer, current));
    if (feeds_relu(layer)) {
      std::span<const NeuronState> states(pattern.states.data() + first_neuron, layer.width());
      current = apply_states(maps.preactivation.back(), states);
      first_neuron += layer.width();
    } else {
      current = maps.preactivation.back();
    }
  }
  maps.output = std::move(current);
  return maps;
}

Evaluation evaluate_exact(const Network& network, const RationalVector& x) {
  if (x.size() != network.input_dim)
    throw usage_error("evaluate_exact: the point has " + std::to_string(x.size()) +
                      " coordinates, the network " + std::to_string(network.input_dim) +
                      " inputs");
  Evaluation result;
  result.preactivation.reserve(network.depth());
  RationalVector current = x;
  for (std::size_t k = 0; k < network.depth(); ++k) {
    poll_stop();
    const Layer& layer = network.layers[k];
    check_layer_shape(layer, k);
    RationalVector z = product(layer.weights, current);
    for (std::size_t i = 0; i < z.size(); ++i) z[i] += layer.bias[i];
    current = z;
    if (feeds_relu(layer)) {
      for (Rational& value : current) {
        const int sign = sgn(value);
        result.pattern.states.push_back(sign > 0   ? NeuronState::on
                                        : sign < 0 ? NeuronState::off
                                                   : NeuronState::zero_at_point);
        if (sign < 0) value = 0;
      }
    }
    result.preactivation.push_back(std::move(z));
  }
  result.output = std::move(current);
  return result;
}

IntegerPatternEvaluator::IntegerPatternEvaluator(const Network& network) : input_dim_(network.input_dim) {
  for (std::size_t k = 0; k < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    check_layer_shape(layer, k);
    IntegerLayer out;
    out.rows = layer.weights.rows();
    out.cols = layer.weights.cols();
    out.relu = feeds_relu(layer);
    out.scale = 1;
    for (std::size_t r = 0; r < out.rows; ++r) {
      for (std::size_t c = 0; c < out.cols; ++c)
        mpz_lcm(out.scale.get_mpz_t(), out.scale.get_mpz_t(), layer.weights(r, c).get_den_mpz_t());
      mpz_lcm(out.scale.get_mpz_t(), out.scale.get_mpz_t(), layer.bias[r].get_den_mpz_t());
    }
    for (std::size_t r = 0; r < out.rows; ++r) {
      for (std::size_t c = 0; c < out.cols; ++c)
        out.weights.push_back(layer.weights(r, c).get_num() * (out.scale / layer.weights(r, c).get_den()));
      out.bias.push_back(layer.bias[r].get_num() * (out.scale / layer.bias[r].get_den()));
    }
    layers_.push_back(std::move(out));
  }
}

ActivationPattern IntegerPatternEvaluator::pattern_at(const RationalVector& x) const {
  if (x.size() != input_dim_)
    throw usage_error("IntegerPatternEvaluator::pattern_at: the point has " + std::to_string(x.size()) +
                      " coordinates, the network " + std::to_string(input_dim_) + " inputs");
  // x = values / denominator with denominator > 0.
  Integer denominator = 1;
  for (const Rational& v : x) mpz_lcm(denominator.get_mpz_t(), denominator.get_mpz_t(), v.get_den_mpz_t());
  std::vector<Integer> values(x.size()), next;
  for (std::size_t i = 0; i < x.size(); ++i) values[i] = x[i].get_num() * (denominator / x[i].get_den());
  ActivationPattern pattern;
  for (const IntegerLayer& layer : layers_) {
    poll_stop();
    if (layer.cols != values.size()) throw usage_error("IntegerPatternEvaluator: layer widths do not chain");
    next.assign(layer.rows, Integer(0));
    for (std::size_t r = 0; r < layer.rows; ++r) {
      mpz_ptr sum = next[r].get_mpz_t();
      mpz_mul(sum, layer.bias[r].get_mpz_t(), denominator.get_mpz_t());
      const Integer* row = layer.weights.data() + r * layer.cols;
      for (std::size_t c = 0; c < layer.cols; ++c)
        if (sgn(values[c]) != 0) mpz_addmul(sum, row[c].get_mpz_t(), values[c].get_mpz_t());
      if (layer.relu) {
        const int sign = mpz_sgn(sum);
        pattern.states.push_back(sign > 0 ? NeuronState::on : sign < 0 ? NeuronState::off : NeuronState::zero_at_point);
        if (sign < 0) mpz_set_ui(sum, 0);
      }
    }
    denominator *= layer.scale;
    values.swap(next);
  }
  return pattern;
}

ActivationPattern pattern_around_point(const Network& network, const RationalVector& x) {
  ActivationPattern pattern = evaluate_exact(network, x).pattern;  // checks x.size()
  // Layer by layer: a zero value is 'z' when the pre-activation's map on the
  // states decided so far is the zero map; stop at the first true crossing.
  AffineMap post = identity_map(network.input_dim);
  for (std::size_t k = 0; k < network.relu_layer_count(); ++k) {
    poll_stop();
    const AffineMap pre = compose_layer(network.layers[k], post);
    const std::size_t first = network.first_neuron_of_layer(k);
    bool has_crossing = false;
    for (std::size_t i = 0; i < pre.offset.size(); ++i) {
      NeuronState& state = pattern.states[first + i];
      if (state != NeuronState::zero_at_point) continue;
      bool is_zero_map = pre.offset[i] == 0;
      for (std::size_t j = 0; is_zero_map && j < pre.linear.cols(); ++j) is_zero_map = pre.linear(i, j) == 0;
      if (is_zero_map) state = NeuronState::zero_on_region;
      else has_crossing = true;
    }
    if (has_crossing) break;
    post = apply_states(pre, std::span(pattern.states).subspan(first, pre.offset.size()));
  }
  return pattern;
}

DoubleNetwork to_double(const Network& network) {
  DoubleNetwork out;
  out.input_dim = network.input_dim;
  for (const Layer& layer : network.layers) {
    DoubleMatrix weights(layer.weights.rows(), layer.weights.cols());
    for (std::size_t r = 0; r < weights.rows(); ++r)
      for (std::size_t c = 0; c < weights.cols(); ++c)
        weights(r, c) = to_double(layer.weights(r, c));
    out.weights.push_back(std::move(weights));
    DoubleVector bias;
    bias.reserve(layer.bias.size());
    for (const Rational& value : layer.bias) bias.push_back(to_double(value));
    out.bias.push_back(std::move(bias));
    out.activation.push_back(layer.activation);
  }
  return out;
}

EvaluationDouble evaluate_double(const DoubleNetwork& network, const DoubleVector& x) {
  if (x.size() != network.input_dim)
    throw usage_error("evaluate_double: the point has " + std::to_string(x.size()) +
                      " coordinates, the network " + std::to_string(network.input_dim) +
                      " inputs");
  EvaluationDouble result;
  DoubleVector current = x;
  for (std::size_t k = 0; k < network.weights.size(); ++k) {
    DoubleVector z = product(network.weights[k], current);
    for (std::size_t i = 0; i < z.size(); ++i) z[i] += network.bias[k][i];
    current = z;
    if (network.activation[k] == Activation::relu)
      for (double& value : current)
        if (value < 0) value = 0;
    result.preactivation.push_back(std::move(z));
  }
  result.output = std::move(current);
  return result;
}

}  // namespace pleat
