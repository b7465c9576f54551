// The check's scale and bounds (CheckScale), and sparse rational rows
// (declared in kernel_check.hpp).
#include "enumerate/detail/kernel_check.hpp"

#include <algorithm>

namespace pleat::detail {
namespace {

// The least common multiple of every parameter's denominator.
Integer denominator_lcm(const Network& network) {
  Integer lcm = 1;
  for (const Layer& layer : network.layers) {
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < layer.weights.cols(); ++c)
        mpz_lcm(lcm.get_mpz_t(), lcm.get_mpz_t(), layer.weights(r, c).get_den_mpz_t());
    for (const Rational& b : layer.bias) mpz_lcm(lcm.get_mpz_t(), lcm.get_mpz_t(), b.get_den_mpz_t());
  }
  return lcm;
}

// L^(d-1) B_c with |row_c| <= B_c for every coefficient-block row of every
// pattern: the entries are sums of products of parameters
// (core/jacobian.hpp: only additions and multiplications, patterns only
// drop terms), so the blocks of the network of |theta| with every neuron on
// bound them entrywise; B_c is the largest entry of column c there. Those
// blocks from their factors in integers (no gcds): with P_k = L |W_k|, the
// layer inputs X_k = L^k x_k (offset and slopes; X_0 the identity's) and
// the backward signals H_k = L^(d-1-k) G_k,
//   X_{k+1}[i] = sum_j P_k[i,j] X_k[j] + L^(k+1) |b_k[i]| on the offset,
//   H_{d-1} = I, H_k = H_{k+1} P_{k+1},
// and the scaled entry at W_k[i,j] on row (o, t) is H_k[o,i] X_k[j]_t, at
// b_k[i] H_k[o,i] L^k on the offset row (0 on the slopes). Every factor is
// nonnegative, so a column's largest entry is max_o H times max_t X. Exact.
std::vector<Integer> scaled_coefficient_bounds(const Network& network, const Integer& lcm) {
  const std::size_t depth = network.depth(), n0 = network.input_dim;
  auto scaled_absolute = [&](const Rational& value) {
    Integer out;
    mpz_divexact(out.get_mpz_t(), lcm.get_mpz_t(), value.get_den_mpz_t());
    out *= abs(value.get_num());
    return out;
  };
  std::vector<Integer> power(depth, 1);  // L^k
  for (std::size_t k = 1; k < depth; ++k) power[k] = power[k - 1] * lcm;
  // The largest offset or slope of each layer's inputs, max_t X_k[j]_t.
  std::vector<std::vector<Integer>> input_max(depth);
  std::vector<std::vector<Integer>> inputs(n0, std::vector<Integer>(n0 + 1, 0));  // X_k[j]: offset, slopes
  for (std::size_t j = 0; j < n0; ++j) inputs[j][1 + j] = 1;
  for (std::size_t k = 0; k < depth; ++k) {
    const Layer& layer = network.layers[k];
    input_max[k].resize(inputs.size());
    for (std::size_t j = 0; j < inputs.size(); ++j)
      input_max[k][j] = *std::max_element(inputs[j].begin(), inputs[j].end());
    if (k + 1 == depth) break;
    std::vector<std::vector<Integer>> next(layer.width(), std::vector<Integer>(n0 + 1, 0));
    Integer weight;
    for (std::size_t i = 0; i < layer.width(); ++i) {
      next[i][0] = scaled_absolute(layer.bias[i]) * power[k];
      for (std::size_t j = 0; j < layer.fan_in(); ++j) {
        weight = scaled_absolute(layer.weights(i, j));
        for (std::size_t t = 0; t <= n0; ++t)
          mpz_addmul(next[i][t].get_mpz_t(), weight.get_mpz_t(), inputs[j][t].get_mpz_t());
      }
    }
    inputs = std::move(next);
  }
  // The largest backward signal of each neuron, max_o H_k[o,i].
  const std::size_t nd = network.layers.back().width();
  std::vector<std::vector<Integer>> signal(nd, std::vector<Integer>(nd, 0));  // H_{d-1}: o x i
  for (std::size_t o = 0; o < nd; ++o) signal[o][o] = 1;
  std::vector<std::vector<Integer>> signal_max(depth);
  for (std::size_t k = depth; k-- > 0;) {
    const std::size_t width = network.layers[k].width();
    signal_max[k].assign(width, 0);
    for (std::size_t o = 0; o < nd; ++o)
      for (std::size_t i = 0; i < width; ++i) signal_max[k][i] = std::max(signal_max[k][i], signal[o][i]);
    if (k == 0) break;
    const Layer& layer = network.layers[k];
    std::vector<std::vector<Integer>> previous(nd, std::vector<Integer>(layer.fan_in(), 0));
    Integer weight;
    for (std::size_t m = 0; m < width; ++m)
      for (std::size_t i = 0; i < layer.fan_in(); ++i) {
        weight = scaled_absolute(layer.weights(m, i));
        for (std::size_t o = 0; o < nd; ++o)
          mpz_addmul(previous[o][i].get_mpz_t(), signal[o][m].get_mpz_t(), weight.get_mpz_t());
      }
    signal = std::move(previous);
  }
  std::vector<Integer> bounds;
  bounds.reserve(network.parametric_dimension());
  for (std::size_t k = 0; k < depth; ++k) {
    const Layer& layer = network.layers[k];
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j) bounds.push_back(signal_max[k][i] * input_max[k][j]);
    for (std::size_t i = 0; i < layer.width(); ++i) bounds.push_back(signal_max[k][i] * power[k]);
  }
  return bounds;
}

}  // namespace

CheckScale::CheckScale(const Network& network) {
  // Every entry is a sum of products of at most depth - 1 parameters (one
  // per layer but its own column's) with integer coefficients: L^(depth-1)
  // clears every denominator.
  lcm = denominator_lcm(network);
  for (std::size_t k = 1; k < network.depth(); ++k) scale *= lcm;
  scaled_bounds = scaled_coefficient_bounds(network, lcm);
}

SparseRationalRows SparseRationalRows::from_dense(const RationalMatrix& dense) {
  SparseRationalRows out{dense.cols(), std::vector<Row>(dense.rows())};
  for (std::size_t r = 0; r < dense.rows(); ++r)
    for (std::size_t c = 0; c < dense.cols(); ++c)
      if (sgn(dense(r, c)) != 0) out.rows[r].emplace_back(c, dense(r, c));
  return out;
}

RationalMatrix SparseRationalRows::dense() const {
  RationalMatrix out(rows.size(), cols);
  for (std::size_t r = 0; r < rows.size(); ++r)
    for (const auto& [c, value] : rows[r]) out(r, c) = value;
  return out;
}

}  // namespace pleat::detail
