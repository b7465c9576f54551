// Small exact helpers shared by the walker's parts (enumerate/detail/).
#pragma once

#include "core/network.hpp"
#include "core/rational.hpp"

#include <cstddef>

namespace pleat::detail {

inline bool is_zero_row(const RationalMatrix& m, std::size_t row) {
  for (std::size_t c = 0; c < m.cols(); ++c)
    if (m(row, c) != 0) return false;
  return true;
}

inline Rational dot(const RationalVector& a, const RationalVector& b) {
  Rational sum = 0;
  for (std::size_t i = 0; i < a.size(); ++i) sum += a[i] * b[i];
  return sum;
}

inline std::size_t relu_layers(const Network& network) { return network.relu_layer_count(); }

}  // namespace pleat::detail
