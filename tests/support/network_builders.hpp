// Building small networks by hand in unit tests: the layer builders every
// test folder used to copy. Header-only; include as
// "tests/support/network_builders.hpp".
#pragma once

#include "core/network.hpp"

#include <cstddef>
#include <initializer_list>
#include <string>
#include <utility>
#include <vector>

namespace pleat::test {

// A layer whose weight rows are given (all the same non-zero length).
inline Layer make_layer(const std::vector<RationalVector>& rows, RationalVector bias, Activation activation) {
  Layer layer;
  layer.weights = RationalMatrix(rows.size(), rows.front().size());
  for (std::size_t r = 0; r < rows.size(); ++r) layer.weights.set_row(r, rows[r]);
  layer.bias = std::move(bias);
  layer.activation = activation;
  return layer;
}

// A width x fan_in layer of zero weights and biases, to be filled in.
inline Layer zero_layer(std::size_t width, std::size_t fan_in, Activation activation) {
  Layer layer;
  layer.weights = RationalMatrix(width, fan_in);
  layer.bias = RationalVector(width, Rational(0));
  layer.activation = activation;
  return layer;
}

// A layer from exact numbers written as text ("1/2", "-3"), canonicalised.
inline Layer layer_from_text(const std::vector<std::vector<std::string>>& weights, const std::vector<std::string>& bias,
                             Activation activation) {
  Layer layer;
  layer.weights = RationalMatrix(weights.size(), weights.empty() ? 0 : weights[0].size());
  for (std::size_t r = 0; r < weights.size(); ++r)
    for (std::size_t c = 0; c < weights[r].size(); ++c) {
      layer.weights(r, c) = Rational(weights[r][c]);
      layer.weights(r, c).canonicalize();
    }
  for (const std::string& value : bias) {
    layer.bias.emplace_back(value);
    layer.bias.back().canonicalize();
  }
  layer.activation = activation;
  return layer;
}

// Integers as an exact vector.
inline RationalVector integers(std::initializer_list<long> values) {
  RationalVector out;
  for (long x : values) out.push_back(Rational(x));
  return out;
}

}  // namespace pleat::test
