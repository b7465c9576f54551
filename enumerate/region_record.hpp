// The full record of one region, as `pleat inspect` prints it and the Python
// module returns it: the walker's Region (facets, interior point, affine map)
// plus its vertices, volume and rank contribution. Exact.
#pragma once

#include "core/network.hpp"
#include "core/rational.hpp"
#include "enumerate/region_geometry.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <optional>

namespace pleat {

// Volumes are computed up to this many inputs (the exact cone decomposition
// grows quickly with the dimension).
inline constexpr std::size_t max_volume_dimension = 4;

struct RegionRecord {
  Region region;
  lp::VertexRepresentation vertices;  // of the closed region within the domain (its facets)
  std::optional<Rational> volume;  // length/area/volume when bounded and input_dim <= max_volume_dimension
  std::size_t rank = 0;            // rank_contribution of the pattern
};

// Precondition: region is as describe_region returns it (its facets include
// the domain's sides that bound it).
RegionRecord make_region_record(const Network& network, Region region);


}  // namespace pleat
