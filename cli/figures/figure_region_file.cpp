#include "cli/figures/figure_region_file.hpp"

#include "cli/formats/region_file_reader.hpp"

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

}  // namespace

SavedWalk read_saved_walk(const Network& network, const std::string& path) {
  RegionFile file = read_region_file(network, path, RegionFileReading::tolerant);
  require_whole_walk(network, file);
  SavedWalk walk;
  walk.domain = std::move(file.domain);
  walk.regions.reserve(file.regions.size());
  for (SavedRegion& saved : file.regions) walk.regions.push_back(std::move(saved.region));
  return walk;
}

}  // namespace pleat::cli
