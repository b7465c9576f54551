// The 3-input figure of pleat draw: regions as closed polytope surfaces in
// the OFF format.
#pragma once

#include "cli/figures/figure_scene.hpp"
#include "core/network.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace pleat::cli {

struct RegionMesh {
  std::string off;    // the OFF file
  std::string table;  // face,region,pattern: which region each face (in file order) bounds
  std::size_t vertices = 0, faces = 0, regions = 0;  // regions drawn (with volume in the view)
};

// Three inputs: every region clipped to the view box as a closed polytope
// surface in the OFF format (vertices from cddlib's exact enumeration, faces
// ordered counter-clockwise seen from outside), one colour per region from a
// greedy colouring of the walk's facet adjacency.
// Precondition: network.input_dim == 3 and a 3-D view. The vertices are
// exact (cddlib's enumeration); only the written coordinates are doubles.
RegionMesh region_mesh(const Network& network, const std::vector<Region>& regions, const View& view,
                       bool with_domain_sides);

}  // namespace pleat::cli
