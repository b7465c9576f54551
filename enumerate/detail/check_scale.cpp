// The check's scale and bounds (CheckScale), and sparse rational rows
// (declared in kernel_check.hpp).
#include "enumerate/detail/kernel_check.hpp"

#include <algorithm>
#include <optional>
#include <vector>

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

// The bounds' arithmetic in GMP integers (never refuses a value)...
struct BigNumbers {
  using Number = Integer;
  bool scaled_absolute(const Rational& value, const Integer& lcm, Number& out) const {
    mpz_divexact(out.get_mpz_t(), lcm.get_mpz_t(), value.get_den_mpz_t());
    out *= abs(value.get_num());
    return true;
  }
  bool from(const Integer& value, Number& out) const {
    out = value;
    return true;
  }
  bool add_product(Number& sum, const Number& a, const Number& b) const {
    mpz_addmul(sum.get_mpz_t(), a.get_mpz_t(), b.get_mpz_t());
    return true;
  }
  Integer to_integer(const Number& value) const { return value; }
};

// ... and in 128-bit words, refused (false) as soon as a value reaches
// 2^127: the small networks' bounds without a GMP call per product (on
// 2,5,5,5,5,1 seed 1 those took 34 us of certify after its walk).
struct WordNumbers {
  __extension__ typedef unsigned __int128 Number;
  static constexpr Number limit = Number{1} << 127;
  // |value| in a word when below 2^126, read off its limbs (no copy: the
  // Integer temporaries of abs() and get_den() were an allocation each, two
  // per parameter per pass).
  static bool fits(mpz_srcptr value, Number& out) {
    if (mpz_sizeinbase(value, 2) > 126) return false;
    out = (static_cast<Number>(mpz_getlimbn(value, 1)) << 64) | mpz_getlimbn(value, 0);
    return true;
  }
  static bool fits(const Integer& value, Number& out) { return sgn(value) >= 0 && fits(value.get_mpz_t(), out); }
  bool scaled_absolute(const Rational& value, const Integer& lcm, Number& out) const {
    Number l = 0, den = 0, num = 0;
    if (!fits(lcm, l) || !fits(value.get_den_mpz_t(), den) || !fits(value.get_num_mpz_t(), num)) return false;
    return !__builtin_mul_overflow(l / den, num, &out) && out < limit;  // den divides L
  }
  bool from(const Integer& value, Number& out) const { return fits(value, out); }
  bool add_product(Number& sum, const Number& a, const Number& b) const {
    Number product;
    return !__builtin_mul_overflow(a, b, &product) && !__builtin_add_overflow(sum, product, &sum) && sum < limit;
  }
  Integer to_integer(const Number& value) const {
    Integer out;
    const mp_limb_t limbs[2] = {static_cast<mp_limb_t>(value), static_cast<mp_limb_t>(value >> 64)};
    mpz_import(out.get_mpz_t(), 2, -1, sizeof(mp_limb_t), 0, 0, limbs);
    return out;
  }
};

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
// nonnegative, so a column's largest entry is max_o H times max_t X. Exact;
// nullopt when the arithmetic refuses a value (WordNumbers only).
template <typename Arithmetic>
std::optional<std::vector<Integer>> scaled_coefficient_bounds(const Network& network, const Integer& lcm,
                                                              const Arithmetic& arithmetic) {
  using Number = typename Arithmetic::Number;
  const std::size_t depth = network.depth(), n0 = network.input_dim;
  std::vector<Number> power(depth);  // L^k
  {
    Integer value = 1;
    for (std::size_t k = 0; k < depth; ++k, value *= lcm)
      if (!arithmetic.from(value, power[k])) return std::nullopt;
  }
  const Number zero = 0, one = 1;
  // The largest offset or slope of each layer's inputs, max_t X_k[j]_t.
  std::vector<std::vector<Number>> input_max(depth);
  std::vector<std::vector<Number>> inputs(n0, std::vector<Number>(n0 + 1, zero));  // X_k[j]: offset, slopes
  for (std::size_t j = 0; j < n0; ++j) inputs[j][1 + j] = one;
  Number weight = 0;
  for (std::size_t k = 0; k < depth; ++k) {
    const Layer& layer = network.layers[k];
    input_max[k].resize(inputs.size());
    for (std::size_t j = 0; j < inputs.size(); ++j)
      input_max[k][j] = *std::max_element(inputs[j].begin(), inputs[j].end());
    if (k + 1 == depth) break;
    std::vector<std::vector<Number>> next(layer.width(), std::vector<Number>(n0 + 1, zero));
    for (std::size_t i = 0; i < layer.width(); ++i) {
      if (!arithmetic.scaled_absolute(layer.bias[i], lcm, weight) || !arithmetic.add_product(next[i][0], weight, power[k]))
        return std::nullopt;
      for (std::size_t j = 0; j < layer.fan_in(); ++j) {
        if (!arithmetic.scaled_absolute(layer.weights(i, j), lcm, weight)) return std::nullopt;
        for (std::size_t t = 0; t <= n0; ++t)
          if (!arithmetic.add_product(next[i][t], weight, inputs[j][t])) return std::nullopt;
      }
    }
    inputs = std::move(next);
  }
  // The largest backward signal of each neuron, max_o H_k[o,i].
  const std::size_t nd = network.layers.back().width();
  std::vector<std::vector<Number>> signal(nd, std::vector<Number>(nd, zero));  // H_{d-1}: o x i
  for (std::size_t o = 0; o < nd; ++o) signal[o][o] = one;
  std::vector<std::vector<Number>> signal_max(depth);
  for (std::size_t k = depth; k-- > 0;) {
    const std::size_t width = network.layers[k].width();
    signal_max[k].assign(width, zero);
    for (std::size_t o = 0; o < nd; ++o)
      for (std::size_t i = 0; i < width; ++i) signal_max[k][i] = std::max(signal_max[k][i], signal[o][i]);
    if (k == 0) break;
    const Layer& layer = network.layers[k];
    std::vector<std::vector<Number>> previous(nd, std::vector<Number>(layer.fan_in(), zero));
    for (std::size_t m = 0; m < width; ++m)
      for (std::size_t i = 0; i < layer.fan_in(); ++i) {
        if (!arithmetic.scaled_absolute(layer.weights(m, i), lcm, weight)) return std::nullopt;
        for (std::size_t o = 0; o < nd; ++o)
          if (!arithmetic.add_product(previous[o][i], signal[o][m], weight)) return std::nullopt;
      }
    signal = std::move(previous);
  }
  std::vector<Integer> bounds;
  bounds.reserve(network.parametric_dimension());
  for (std::size_t k = 0; k < depth; ++k) {
    const Layer& layer = network.layers[k];
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j) {
        Number bound = zero;
        if (!arithmetic.add_product(bound, signal_max[k][i], input_max[k][j])) return std::nullopt;
        bounds.push_back(arithmetic.to_integer(bound));
      }
    for (std::size_t i = 0; i < layer.width(); ++i) {
      Number bound = zero;
      if (!arithmetic.add_product(bound, signal_max[k][i], power[k])) return std::nullopt;
      bounds.push_back(arithmetic.to_integer(bound));
    }
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
  // In words when every value stays below 2^127, else (the same numbers) in GMP integers.
  std::optional<std::vector<Integer>> bounds = scaled_coefficient_bounds(network, lcm, WordNumbers());
  scaled_bounds = bounds ? std::move(*bounds) : *scaled_coefficient_bounds(network, lcm, BigNumbers());
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
