#include "enumerate/slice.hpp"

#include <utility>

namespace pleat {
namespace {

// Coordinates of v other than `axis`, in order.
RationalVector without(const RationalVector& v, std::size_t axis) {
  RationalVector out;
  for (std::size_t i = 0; i < v.size(); ++i)
    if (i != axis) out.push_back(v[i]);
  return out;
}

}  // namespace

Network restrict_to_slice(const Network& network, std::size_t axis, const Rational& value) {
  if (network.input_dim < 2 || axis >= network.input_dim)
    throw usage_error("restrict_to_slice: needs at least 2 inputs and an axis below input_dim");
  Network slice = network;
  slice.input_dim = network.input_dim - 1;
  const Layer& first = network.layers.front();
  Layer& layer = slice.layers.front();
  layer.weights = RationalMatrix(first.weights.rows(), slice.input_dim);
  for (std::size_t r = 0; r < first.weights.rows(); ++r) {
    std::size_t c_out = 0;
    for (std::size_t c = 0; c < first.weights.cols(); ++c) {
      if (c == axis) layer.bias[r] += first.weights(r, c) * value;
      else layer.weights(r, c_out++) = first.weights(r, c);
    }
  }
  return slice;
}

Domain slice_domain(const Domain& domain, std::size_t axis, const Rational& value) {
  if (axis >= domain.dim || domain.dim < 2) throw usage_error("slice_domain: axis out of range");
  switch (domain.kind) {
    case Domain::Kind::whole_space:
      return make_whole_space(domain.dim - 1);
    case Domain::Kind::box:
      if (!(domain.lower[axis] < value && value < domain.upper[axis]))
        throw input_error("the slice x" + std::to_string(axis + 1) + " = " + format_rational_brief(value) +
                          " misses the box's interior (" + format_rational_brief(domain.lower[axis]) + ", " +
                          format_rational_brief(domain.upper[axis]) + ")");
      return make_box(without(domain.lower, axis), without(domain.upper, axis));
    case Domain::Kind::polytope: {
      std::vector<lp::Constraint> sides;
      for (const auto& c : domain.constraints) {
        RationalVector normal = without(c.normal, axis);
        const Rational offset = c.offset + c.normal[axis] * value;
        bool is_zero = true;
        for (const auto& entry : normal) is_zero = is_zero && entry == 0;
        if (is_zero) {  // a side parallel to the plane: the plane is inside it or misses the domain
          if (offset > 0) continue;
          throw input_error("the slice x" + std::to_string(axis + 1) + " = " + format_rational_brief(value) +
                            " misses the domain's interior");
        }
        sides.push_back(lp::Constraint{std::move(normal), offset});
      }
      if (sides.empty()) return make_whole_space(domain.dim - 1);
      try {
        return make_polytope(domain.dim - 1, std::move(sides));
      } catch (const input_error&) {
        throw input_error("the slice x" + std::to_string(axis + 1) + " = " + format_rational_brief(value) +
                          " misses the domain's interior");
      }
    }
  }
  return domain;
}

}  // namespace pleat
