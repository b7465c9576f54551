// JSON records of walks (shared/spec/outputs.md: pleat-walk/1 and
// pleat-regions/1). Writers only: they print what the walker decided.
#pragma once

#include "cli/common.hpp"
#include "core/network.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

namespace pleat::cli {

Json domain_to_json(const Domain& domain);
// The first line of a regions file.
Json regions_header(const Network& network, const Domain& domain, const std::string& network_source);
// A facet's entry in a region line and in inspect's record: neurons, their
// 1-based layers when with_layers, side, normal, offset, neighbor and
// other_neighbors (when any). The point is the caller's to add.
Json facet_to_json(const Network& network, const RegionFacet& facet, bool with_layers);
// One region line; certificates only when the region carries them.
Json region_to_json(const Network& network, const Region& region);
// The pleat-walk/1 summary.
Json walk_summary_to_json(const Network& network, const Domain& domain, const WalkSummary& summary,
                          bool with_patterns);

}  // namespace pleat::cli
