// pleat verify: re-check a saved walk with exact arithmetic.
//
// Every key of a region file is read: either verify re-derives it from the
// network and compares (enumerate/walk_check.hpp), or checks the certificate
// it is part of; a key verify does not know is refused, so a file cannot
// carry a claim that was not checked. docs/formats.md lists the keys.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/formats/region_file_reader.hpp"
#include "core/network_io.hpp"
#include "enumerate/walk_check.hpp"

#include <iostream>

namespace pleat::cli {
namespace {

struct VerifyArguments {
  std::string network_path;
  std::string regions_path;
};

int run_verify(const VerifyArguments& arguments) {
  const Network network = read_network_input(arguments.network_path);
  const RegionFile file = read_region_file(network, arguments.regions_path, RegionFileReading::exact_copy);
  const std::string& path = file.path;
  const std::size_t header_dimension = *file.parametric_dimension;
  const WalkCheck check = header_dimension != network.parametric_dimension()
                              ? WalkCheck{false, "line 1: \"parametric_dimension\" is " + std::to_string(header_dimension) +
                                                     "; the network has " + std::to_string(network.parametric_dimension()) +
                                                     " parameters", 0}
                              : check_saved_walk(network, file.domain, file.regions);
  if (check.is_verified) {
    std::cout << "verified: " << count_of(check.regions, "region") << " of " << arguments.network_path << " on "
              << file.domain.describe()
              << "; every point, facet, non-facet, boundedness certificate, neighbour and key re-checked exactly\n";
    // The header's name is a label, not a claim: say so when it differs,
    // quoted as JSON, so that a newline or control character in it cannot
    // print a line of its own (a forged "verified: ..." line).
    if (file.network_label != arguments.network_path)
      std::cout << "note: the file names its network " << Json(file.network_label).dump(-1, ' ', false, Json::error_handler_t::replace) << "; checked against "
                << arguments.network_path << "\n";
    return 0;
  }
  std::cout << "NOT verified: " << path << ": " << check.failure << "\n";
  return 1;
}

}  // namespace

void register_verify(CommandTable& commands) {
  auto arguments = std::make_shared<VerifyArguments>();
  CLI::App& command = commands.add(
      "verify", "Re-check a saved walk's certificates with exact arithmetic alone",
      "Reads a region file written by 'pleat walk -o FILE --certificates' and re-checks it\n"
      "in exact rational arithmetic: each region's cell is rebuilt from the network and its\n"
      "pattern; its interior point, every facet's relative-interior point, the multipliers\n"
      "proving each other constraint redundant, the boundedness certificate and the affine\n"
      "map are checked; each facet's neighbours must be the regions that crossing at its\n"
      "point reaches, present in the file, on the far side, and naming the region back.\n"
      "Every other key is re-derived and compared; unknown keys are refused. Prints\n"
      "'verified' or the first failure with its line (exit 1).\n\n"
      "Example:\n"
      "  pleat walk data/fold2d.json -o regions.jsonl --certificates\n"
      "  pleat verify data/fold2d.json regions.jsonl",
      [arguments] { return run_verify(*arguments); });
  command.add_option("network", arguments->network_path, "The network the walk was made from")->required();
  command.add_option("regions", arguments->regions_path, "The region file (pleat-regions/1, with certificates)")
      ->required();
}

}  // namespace pleat::cli
