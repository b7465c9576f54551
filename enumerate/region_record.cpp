#include "enumerate/region_record.hpp"

namespace pleat {

RegionRecord make_region_record(const Network& network, Region region) {
  lp::Polyhedron closed{network.input_dim, {}};
  for (const auto& facet : region.facets) closed.constraints.push_back(lp::Constraint{facet.normal, facet.offset});
  RegionRecord record;
  record.vertices = lp::vertex_representation(closed, region.interior.point);
  if (record.vertices.is_bounded() && network.input_dim <= max_volume_dimension)
    record.volume = network.input_dim == 2 ? lp::polygon_area(lp::Polygon{record.vertices.points})
                                           : lp::polytope_volume(closed, record.vertices.points);
  record.rank = rank_contribution(network, region.pattern);
  record.region = std::move(region);
  return record;
}


}  // namespace pleat
