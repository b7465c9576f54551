#include "cli/figures/figure_region_file.hpp"

#include "cli/formats/output_file.hpp"
#include "cli/formats/region_file_reader.hpp"
#include "core/evaluate.hpp"

#include <set>

namespace pleat::cli {
namespace {

// A figure of part of a walk would show too few regions and state their count
// as the view's, so a file that is not a whole walk is refused: a pattern
// twice, or a neighbour it names that is not in it (a walk cut short by
// --max-regions, --time-limit or an interrupt writes such a file). Nothing
// else is checked (pleat verify does that).
void require_whole_walk(const Network& network, const RegionFile& file) {
  std::set<ActivationPattern> patterns;
  for (const SavedRegion& saved : file.regions)
    if (!patterns.insert(saved.region.pattern).second)
      throw input_error(file.path + ": line " + std::to_string(saved.line) + ": the pattern " +
                        format_pattern(network, saved.region.pattern) + " appears twice");
  for (const SavedRegion& saved : file.regions)
    for (const RegionFacet& facet : saved.region.facets) {
      std::vector<ActivationPattern> named(facet.other_neighbors);
      if (facet.neighbor) named.push_back(*facet.neighbor);
      for (const ActivationPattern& neighbor : named)
        if (!patterns.contains(neighbor))
          throw input_error(file.path + ": line " + std::to_string(saved.line) + ": neighbour " +
                            format_pattern(network, neighbor) +
                            " is not in the file: a walk cut short (--max-regions, --time-limit, an interrupt)"
                            " is not drawn; draw a finished walk");
    }
}

// A walk of another network (one of the same widths reads without a fault)
// would be drawn as this network's regions and maps: each region's point
// must lie in its pattern's region of this network, and its map must be this
// network's map there. Exact; one forward pass and one map per region.
void require_walk_of(const Network& network, const RegionFile& file) {
  for (const SavedRegion& saved : file.regions) {
    const Region& region = saved.region;
    const std::string where = file.path + ": line " + std::to_string(saved.line) + ": ";
    const auto pattern = region_pattern_at(network, region.interior.point);
    if (!pattern || *pattern != region.pattern)
      throw input_error(where + "the region's point does not lie in the region of pattern " +
                        format_pattern(network, region.pattern) +
                        " of this network: a walk of another network is not drawn (pleat verify checks a file)");
    const AffineMap map = maps_on_pattern(network, region.pattern).output;
    if (!(map.linear == region.affine.linear) || map.offset != region.affine.offset)
      throw input_error(where + "the region's affine map is not this network's on its pattern: a walk of another "
                        "network is not drawn (pleat verify checks a file)");
  }
}

}  // namespace

SavedWalk read_saved_walk(const Network& network, const std::string& path) {
  note_input_file(path, "region file");  // draw --from R --out R / --table R would replace the walk
  RegionFile file = read_region_file(network, path, RegionFileReading::tolerant);
  require_whole_walk(network, file);
  require_walk_of(network, file);
  SavedWalk walk;
  walk.domain = std::move(file.domain);
  walk.regions.reserve(file.regions.size());
  for (SavedRegion& saved : file.regions) walk.regions.push_back(std::move(saved.region));
  return walk;
}

}  // namespace pleat::cli
