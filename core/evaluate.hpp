// Exact and double evaluation, and the affine maps of a network on one
// activation pattern (the walker's building block). Everything taking or
// returning Rational is exact; the _double functions are for filters and
// sampled estimates only. The exact layer loops poll the current thread's
// stop request (core/stop.hpp): with a StopScope installed they may throw
// Stopped; without one they never do.
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"

#include <span>
#include <vector>

namespace pleat {

// x -> linear * x + offset, an affine map from R^n0.
template <class T>
struct AffineMapOf {
  Matrix<T> linear;
  std::vector<T> offset;

  std::vector<T> operator()(const std::vector<T>& x) const {
    auto y = product(linear, x);
    for (std::size_t i = 0; i < y.size(); ++i) y[i] += offset[i];
    return y;
  }
  friend bool operator==(const AffineMapOf&, const AffineMapOf&) = default;
};
using AffineMap = AffineMapOf<Rational>;

// The identity map of R^n (layer 0's "post-activation").
AffineMap identity_map(std::size_t n);

// Layer k's pre-activation W_k y + b_k as an affine map of x, given the
// previous layer's post-activation y = input(x). Precondition:
// input.linear.rows() == layer.fan_in(). Exact.
AffineMap compose_layer(const Layer& layer, const AffineMap& input);

// The post-activation on a fixed pattern: rows of neurons that are on are
// kept, all others become 0 (an identically-zero row is 0 either way).
// Precondition: states.size() == preactivation rows.
AffineMap apply_states(const AffineMap& preactivation, std::span<const NeuronState> states);

// Every layer's pre-activation as an affine map of x on the pattern (index k
// for layer k, the last one is the output layer's pre-activation), and the
// network's output map F = A x + c there (with the output ReLU applied by the
// pattern when the output layer has one). Exact.
struct PatternMaps {
  std::vector<AffineMap> preactivation;
  AffineMap output;
};
PatternMaps maps_on_pattern(const Network& network, const ActivationPattern& pattern);

// Exact forward pass at a rational point: every layer's pre-activation, the
// output, and the pattern ('=' where a pre-activation is exactly 0).
// Precondition: x.size() == input_dim (throws usage_error).
struct Evaluation {
  std::vector<RationalVector> preactivation;
  RationalVector output;
  ActivationPattern pattern;
};
Evaluation evaluate_exact(const Network& network, const RationalVector& x);

// The pattern of the region around x: evaluate_exact's pattern, except that a
// neuron whose pre-activation is identically zero on the region around x
// (its affine map, through the states of the layers below, is 0) is 'z'
// instead of '='. A '=' that remains marks a bent hyperplane through x; the
// layers above the first such neuron keep '=' for their zeros (there is no
// single region around x to decide 'z' in). Precondition: x.size() ==
// input_dim (throws usage_error). Exact.
ActivationPattern pattern_around_point(const Network& network, const RationalVector& x);

// evaluate_exact's pattern in fraction-free integers, for many points of one
// network: each layer's weights and bias are scaled once by the lcm L_k of
// their denominators; a point's coordinates share one denominator; then a
// layer's pre-activation is (W' A + b' d) / (L_k d) with integer A and d > 0,
// so its sign is the sign of an integer sum (no gcds, no fractions). Exact:
// the same pattern as evaluate_exact(network, x).pattern, '=' included.
class IntegerPatternEvaluator {
 public:
  explicit IntegerPatternEvaluator(const Network& network);
  // Precondition: x.size() == the network's input_dim (throws usage_error).
  ActivationPattern pattern_at(const RationalVector& x) const;

 private:
  struct IntegerLayer {
    std::size_t rows = 0, cols = 0;
    std::vector<Integer> weights;  // row-major, L_k W_k
    std::vector<Integer> bias;     // L_k b_k
    Integer scale;                 // L_k
    bool relu = true;
  };
  std::size_t input_dim_ = 0;
  std::vector<IntegerLayer> layers_;
};

// The network's parameters rounded to double once, for repeated double passes.
struct DoubleNetwork {
  std::size_t input_dim = 0;
  std::vector<DoubleMatrix> weights;
  std::vector<DoubleVector> bias;
  std::vector<Activation> activation;
};
DoubleNetwork to_double(const Network& network);

// Double forward pass (pre-activations per layer and output). Not exact.
struct EvaluationDouble {
  std::vector<DoubleVector> preactivation;
  DoubleVector output;
};
EvaluationDouble evaluate_double(const DoubleNetwork& network, const DoubleVector& x);

}  // namespace pleat
