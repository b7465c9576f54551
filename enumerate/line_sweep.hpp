// Points in the linear pieces a line crosses, for certifying from points
// without a walk (enumerate/functional_dimension.hpp). Along a line
// x(t) = base + t direction every neuron's pre-activation is affine in t until
// the first neuron changes sign, so the next crossing is the smallest
// positive root among them: a sweep reaches thin and far regions that random
// points miss. Double arithmetic only: it proposes points, each of which the
// caller decides exactly.
#pragma once

#include "core/evaluate.hpp"
#include "core/rational.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace pleat {

// One proposed point and its double activation pattern ('0'/'1' per ReLU
// neuron), a cheap key for skipping pieces already proposed. Not exact.
struct SweptPoint {
  DoubleVector point;
  std::string pattern;
};

// A point in each linear piece of the network crossed by base + t direction
// for t in [0, t_max] (t_max may be +infinity: the last piece is unbounded
// and gets the point at 2 t + 1 past its start), in order, at most
// max_points of them. Pieces thinner than about 1e-9 (1 + |t|) may be
// skipped. Precondition: direction is nonzero and sizes match the network.
std::vector<SweptPoint> sweep_line(const DoubleNetwork& network, const DoubleVector& base,
                                   const DoubleVector& direction, double t_max, std::size_t max_points);

}  // namespace pleat
