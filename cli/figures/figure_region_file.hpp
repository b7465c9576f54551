// Reading a saved walk (pleat-regions/1 lines from `pleat walk -o`) back into
// the walker's Region records, so `pleat draw --from` draws without walking:
// the one region-file reader (cli/formats/region_file_reader.hpp) read tolerantly,
// without certificates. Only that it is a whole walk of this network is checked
// here (each pattern once, every neighbour it names present, each region's point
// in its pattern's region and its map this network's); `pleat verify` checks the rest.
#pragma once

#include "core/network.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <string>
#include <vector>

namespace pleat::cli {

struct SavedWalk {
  Domain domain;
  std::vector<Region> regions;  // in file order
};

// Throws input_error naming the file, the line and the key for any fault.
// No output of the command may then be written over the file
// (note_input_file).
SavedWalk read_saved_walk(const Network& network, const std::string& path);

}  // namespace pleat::cli
