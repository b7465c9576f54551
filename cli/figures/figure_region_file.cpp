#include "cli/figures/figure_region_file.hpp"

#include "cli/formats/region_file_reader.hpp"

namespace pleat::cli {

SavedWalk read_saved_walk(const Network& network, const std::string& path) {
  RegionFile file = read_region_file(network, path, RegionFileReading::tolerant);
  SavedWalk walk;
  walk.domain = std::move(file.domain);
  walk.regions.reserve(file.regions.size());
  for (SavedRegion& saved : file.regions) walk.regions.push_back(std::move(saved.region));
  return walk;
}

}  // namespace pleat::cli
