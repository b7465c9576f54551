// Exact geometry of single regions of a network: the regions whose closures
// meet at a point, and a region's rank contribution. The network-free
// polyhedral geometry (polygons, V-representation, volumes, faces) is
// lp/vertex_geometry.hpp. Everything here is exact; nothing prints.
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/domain.hpp"
#include "lp/polyhedron.hpp"
#include "lp/vertex_geometry.hpp"

#include <cstddef>
#include <vector>

namespace pleat {

// ---- Networks ---------------------------------------------------------------

// The regions whose closures contain the point, and the neurons that vanish
// there. Candidates come from choosing the states of the vanishing neurons
// layer by layer ('z' when identically zero under the earlier states, else on
// and off); a candidate is kept when its cell has interior on the domain. The
// closure of every kept cell contains the point (the vanishing neurons are 0
// there whatever their state). Preconditions: point.size() == input_dim ==
// domain.dim, and the point lies in the closed domain (throws input_error
// otherwise). At most 16 vanishing neurons (throws limit_error, a documented limit). Exact.
struct PointIncidence {
  std::vector<std::size_t> vanishing_neurons;  // ids, increasing
  std::vector<ActivationPattern> regions;      // sorted
};
[[nodiscard]]
PointIncidence regions_at_point(const Network& network, const Domain& domain, const RationalVector& point);

// How many independent rows a region adds to the functional-dimension rank
// when it is taken first: the exact rank of its coefficient blocks, 0 for a
// region that has no smooth points. Precondition: a region pattern ('=' not
// allowed). Exact.
[[nodiscard]] std::size_t rank_contribution(const Network& network, const ActivationPattern& pattern);

}  // namespace pleat
