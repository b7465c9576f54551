#include "enumerate/line_sweep.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace pleat {
namespace {

// The state of every ReLU neuron at base + t direction, and the smallest
// s > t at which one of them changes sign with all states held (the end of
// the piece; +infinity when none does).
struct PieceAtT {
  std::string pattern;
  double end = std::numeric_limits<double>::infinity();
};

PieceAtT piece_at(const DoubleNetwork& network, const DoubleVector& base, const DoubleVector& direction,
                  double t) {
  PieceAtT piece;
  DoubleVector value(base.size()), slope = direction;
  for (std::size_t i = 0; i < base.size(); ++i) value[i] = base[i] + t * direction[i];
  for (std::size_t k = 0; k < network.weights.size(); ++k) {
    const DoubleMatrix& weights = network.weights[k];
    DoubleVector next_value(weights.rows()), next_slope(weights.rows());
    for (std::size_t r = 0; r < weights.rows(); ++r) {
      double v = network.bias[k][r], s = 0;
      for (std::size_t c = 0; c < weights.cols(); ++c) {
        v += weights(r, c) * value[c];
        s += weights(r, c) * slope[c];
      }
      if (network.activation[k] == Activation::relu) {
        const bool on = v > 0;
        piece.pattern.push_back(on ? '1' : '0');
        // Heading to zero: crosses at t - v/s.
        if ((v > 0 && s < 0) || (v < 0 && s > 0)) piece.end = std::min(piece.end, t - v / s);
        if (!on) v = s = 0;
      }
      next_value[r] = v;
      next_slope[r] = s;
    }
    value = std::move(next_value);
    slope = std::move(next_slope);
  }
  return piece;
}

}  // namespace

std::vector<SweptPoint> sweep_line(const DoubleNetwork& network, const DoubleVector& base,
                                   const DoubleVector& direction, double t_max, std::size_t max_points) {
  std::vector<SweptPoint> out;
  double t = 0;
  while (out.size() < max_points && t < t_max) {
    PieceAtT piece = piece_at(network, base, direction, t);
    const double end = std::min(piece.end, t_max);
    const double at = std::isinf(end) ? 2 * t + 1 : (t + end) / 2;
    DoubleVector point(base.size());
    for (std::size_t i = 0; i < base.size(); ++i) point[i] = base[i] + at * direction[i];
    out.push_back({std::move(point), std::move(piece.pattern)});
    if (std::isinf(end)) break;
    // Just past the crossing: the next piece.
    t = end + 1e-9 * (1 + std::abs(end));
  }
  return out;
}

}  // namespace pleat
