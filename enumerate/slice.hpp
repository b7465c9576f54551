// A network restricted to an axis-parallel affine plane of its input space
// (one input held at a value): itself a network with one input fewer, whose
// regions are exactly the full-dimensional sections of the original regions
// by that plane. So a 2-D slice of a 3-input network is walked and drawn like
// any 2-input network. Exact.
#pragma once

#include "core/network.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"

#include <cstddef>

namespace pleat {

// The network x' -> F(x) where x is x' with `value` inserted at coordinate
// `axis`: the first layer's column `axis` times value moves into its bias.
// Each neuron keeps its id and layer, so activation patterns read the same,
// except that a neuron whose pre-activation is constant on the plane is
// identically that constant there. Preconditions: input_dim >= 2 and
// axis < input_dim (usage_error otherwise). Exact.
Network restrict_to_slice(const Network& network, std::size_t axis, const Rational& value);

// The domain's section by the plane x[axis] = value, in the remaining
// coordinates: a box loses that side, a polytope's constraints take the
// value, the whole space stays whole. Throws input_error when the plane does
// not meet the domain's interior. Exact.
Domain slice_domain(const Domain& domain, std::size_t axis, const Rational& value);

}  // namespace pleat
