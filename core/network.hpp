// The network model: a feed-forward, fully connected ReLU network R^n0 -> R^nd
// with exact rational parameters (spec: shared/spec/network-format.md).
#pragma once

#include "core/matrix.hpp"
#include "core/rational.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace pleat {

enum class Activation { relu, linear };

// Layer k computes W_k x + b_k (weights: n_k x n_{k-1}), then its activation.
struct Layer {
  RationalMatrix weights;
  RationalVector bias;
  Activation activation = Activation::relu;

  std::size_t width() const { return bias.size(); }
  std::size_t fan_in() const { return weights.cols(); }
  friend bool operator==(const Layer&, const Layer&) = default;
};

// Invariants (established by the reader and by validate()): at least one layer;
// layer 0 has fan_in == input_dim; each layer's fan_in is the previous width;
// weights.rows() == bias.size() > 0; hidden layers are ReLU (the last may be either).
struct Network {
  std::size_t input_dim = 0;
  std::vector<Layer> layers;
  std::string name;       // optional free text ("" when absent)
  std::string meta_json;  // the "meta" value as compact JSON text, numbers kept
                          // as their literal text; "" when absent

  std::size_t depth() const { return layers.size(); }
  std::size_t output_dim() const { return layers.back().width(); }
  bool has_output_relu() const { return layers.back().activation == Activation::relu; }

  // Neurons followed by a ReLU, numbered layer by layer from 0: the hidden
  // neurons, then the output neurons when the output layer has a ReLU.
  std::size_t relu_neuron_count() const;
  std::size_t hidden_neuron_count() const;
  // Layers whose neurons feed a ReLU: depth()-1, or depth() with an output ReLU.
  std::size_t relu_layer_count() const;
  // The first neuron id of layer k (0-based layer index) in that numbering.
  std::size_t first_neuron_of_layer(std::size_t k) const;
  // The 0-based layer of a ReLU neuron id in that numbering (precondition:
  // neuron < relu_neuron_count()).
  std::size_t layer_of_neuron(std::size_t neuron) const;

  // D = sum_k (n_{k-1} + 1) n_k.
  std::size_t parametric_dimension() const;
  // Column offset of layer k's weights in the parameter order (all of W_k
  // row-major, then b_k, layer by layer).
  std::size_t parameter_offset(std::size_t k) const;
  // "W2[0,3]" / "b1[3]" (layers numbered from 1) for parameter index i < D.
  std::string parameter_name(std::size_t index) const;

  // Throws input_error naming the first broken invariant.
  void validate() const;

  friend bool operator==(const Network&, const Network&) = default;
};

}  // namespace pleat
