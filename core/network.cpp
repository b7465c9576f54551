// Neuron numbering, parameter order and invariants of the network model
// (spec: network-format.md).
#include "core/network.hpp"

#include <string>

namespace pleat {
namespace {

std::size_t parameter_count(const Layer& layer) { return (layer.fan_in() + 1) * layer.width(); }

std::string layer_path(std::size_t k) { return "layers[" + std::to_string(k) + "]"; }

}  // namespace

std::size_t Network::relu_layer_count() const {
  if (layers.empty()) return 0;
  return has_output_relu() ? depth() : depth() - 1;
}

std::size_t Network::hidden_neuron_count() const {
  std::size_t count = 0;
  for (std::size_t k = 0; k + 1 < layers.size(); ++k) count += layers[k].width();
  return count;
}

std::size_t Network::relu_neuron_count() const {
  std::size_t count = 0;
  for (std::size_t k = 0; k < relu_layer_count(); ++k) count += layers[k].width();
  return count;
}

std::size_t Network::first_neuron_of_layer(std::size_t k) const {
  if (k > layers.size()) throw usage_error("first_neuron_of_layer: no such layer");
  std::size_t first = 0;
  for (std::size_t i = 0; i < k; ++i) first += layers[i].width();
  return first;
}

std::size_t Network::layer_of_neuron(std::size_t neuron) const {
  std::size_t layer = 0;
  while (layer + 1 < relu_layer_count() && first_neuron_of_layer(layer + 1) <= neuron) ++layer;
  return layer;
}

std::size_t Network::parametric_dimension() const { return parameter_offset(layers.size()); }

std::size_t Network::parameter_offset(std::size_t k) const {
  if (k > layers.size()) throw usage_error("parameter_offset: no such layer");
  std::size_t offset = 0;
  for (std::size_t i = 0; i < k; ++i) offset += parameter_count(layers[i]);
  return offset;
}

std::string Network::parameter_name(std::size_t index) const {
  std::size_t offset = 0;
  for (std::size_t k = 0; k < layers.size(); ++k) {
    const Layer& layer = layers[k];
    if (index < offset + parameter_count(layer)) {
      const std::size_t local = index - offset;
      const std::string number = std::to_string(k + 1);
      const std::size_t weight_count = layer.width() * layer.fan_in();
      if (local < weight_count)
        return "W" + number + "[" + std::to_string(local / layer.fan_in()) + "," +
               std::to_string(local % layer.fan_in()) + "]";
      return "b" + number + "[" + std::to_string(local - weight_count) + "]";
    }
    offset += parameter_count(layer);
  }
  throw usage_error("parameter_name: index " + std::to_string(index) + " is not below D = " +
                    std::to_string(offset));
}

void Network::validate() const {
  if (input_dim == 0) throw input_error("input_dim: must be a positive integer");
  if (layers.empty()) throw input_error("layers: empty network (no layers)");
  std::size_t previous_width = input_dim;
  for (std::size_t k = 0; k < layers.size(); ++k) {
    const Layer& layer = layers[k];
    const std::string path = layer_path(k);
    if (layer.weights.rows() == 0) throw input_error(path + ".weights: layer has no neurons");
    if (layer.weights.cols() != previous_width)
      throw input_error(path + ".weights: expected " + std::to_string(previous_width) +
                        " columns, found " + std::to_string(layer.weights.cols()));
    if (layer.bias.size() != layer.weights.rows())
      throw input_error(path + ".bias: expected " + std::to_string(layer.weights.rows()) +
                        " numbers, found " + std::to_string(layer.bias.size()));
    if (k + 1 < layers.size() && layer.activation != Activation::relu)
      throw input_error(path + ".activation: a hidden layer must be \"relu\"");
    previous_width = layer.width();
  }
}

}  // namespace pleat
