// pleat verify: re-check a saved walk with exact arithmetic alone.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/region_file_reader.hpp"
#include "enumerate/walk_check.hpp"

#include <algorithm>
#include <fstream>
#include <iostream>

namespace pleat::cli {
namespace {

struct VerifyArguments {
  std::string network_path;
  std::string regions_path;
};

SavedRegion read_region(const Json& line, const LineReader& reader, std::size_t number) {
  SavedRegion region;
  region.line = number;
  region.pattern = reader.pattern(reader.field(line, "pattern"));
  region.point = reader.rationals(reader.field(line, "point"));
  const Json& bounded = reader.field(line, "bounded");
  if (!bounded.is_boolean()) reader.fail("\"bounded\" must be true or false");
  region.bounded = bounded.get<bool>();
  for (const auto& entry : reader.field(line, "facets")) {
    SavedFacet facet;
    facet.normal = reader.rationals(reader.field(entry, "normal"));
    facet.offset = reader.rational(reader.field(entry, "offset"));
    facet.point = reader.rationals(reader.field(entry, "point"));
    const Json& neighbor = reader.field(entry, "neighbor");
    if (!neighbor.is_null()) facet.neighbor = reader.pattern(neighbor);
    if (entry.contains("other_neighbors"))
      for (const auto& other : entry.at("other_neighbors")) facet.other_neighbors.push_back(reader.pattern(other));
    region.facets.push_back(std::move(facet));
  }
  const Json& affine = reader.field(line, "affine");
  const Json& rows = reader.field(affine, "A");
  region.affine_offset = reader.rationals(reader.field(affine, "c"));
  region.affine_linear = RationalMatrix(rows.size(), region.point.size());
  for (std::size_t r = 0; r < rows.size(); ++r) {
    const RationalVector row = reader.rationals(rows[r]);
    if (row.size() != region.point.size()) reader.fail("affine.A has a row of the wrong length");
    region.affine_linear.set_row(r, row);
  }
  if (!line.contains("certificate")) return region;
  const Json& certificate = line.at("certificate");
  region.has_certificate = true;
  const std::size_t constraints = reader.field(certificate, "constraints").size();
  for (const auto& entry : reader.field(certificate, "facet_points"))
    region.classification.groups.push_back(lp::FacetGroup{reader.indices(reader.field(entry, "constraints")),
                                                           lp::FacetPoint{reader.rationals(reader.field(entry, "point"))}});
  for (const auto& entry : reader.field(certificate, "non_facets"))
    region.classification.groups.push_back(lp::FacetGroup{
        reader.indices(reader.field(entry, "constraints")),
        lp::NonFacetCertificate{reader.rational(reader.field(entry, "equality_multiplier")),
                                reader.sparse(reader.field(entry, "multipliers"), constraints)}});
  for (const auto& group : region.classification.groups)
    if (group.constraints.empty()) reader.fail("a certificate group lists no constraints");
  std::sort(region.classification.groups.begin(), region.classification.groups.end(),
            [](const lp::FacetGroup& a, const lp::FacetGroup& b) { return a.constraints.front() < b.constraints.front(); });
  if (certificate.contains("bounded_by"))
    region.boundedness = lp::BoundednessVerdict{
        lp::BoundednessCertificate{reader.sparse(reader.field(certificate.at("bounded_by"), "multipliers"), constraints)}};
  else if (certificate.contains("recession_direction"))
    region.boundedness =
        lp::BoundednessVerdict{lp::RecessionDirection{reader.rationals(certificate.at("recession_direction"))}};
  return region;
}

int run_verify(const VerifyArguments& arguments) {
  const Network network = load_network(arguments.network_path);
  std::ifstream file(arguments.regions_path);
  if (!file) throw input_error(arguments.regions_path + ": cannot open");
  std::string text;
  std::optional<Domain> domain;
  std::vector<SavedRegion> regions;
  for (std::size_t number = 1; std::getline(file, text); ++number) {
    if (text.empty()) continue;
    const LineReader reader(network, number);
    Json line;
    try {
      line = Json::parse(text);
    } catch (const Json::parse_error& error) {
      throw input_error(arguments.regions_path + ": line " + std::to_string(number) + ": not JSON (" + error.what() + ")");
    }
    try {
      if (!domain) {
        if (!line.is_object() || line.value("format", "") != "pleat-regions/1")
          reader.fail("expected the header line with \"format\": \"pleat-regions/1\"");
        domain = domain_from_json(reader.field(line, "domain"), network.input_dim, reader);
        continue;
      }
      regions.push_back(read_region(line, reader, number));
    } catch (const input_error& fault) {
      throw input_error(arguments.regions_path + ": " + fault.what());
    } catch (const Json::exception& fault) {
      throw input_error(arguments.regions_path + ": line " + std::to_string(number) + ": " + fault.what());
    }
  }
  if (!domain) throw input_error(arguments.regions_path + ": empty file (no header line)");
  const WalkCheck check = check_saved_walk(network, *domain, regions);
  if (check.is_verified) {
    std::cout << "verified: " << check.regions << " regions on " << domain->describe()
              << "; every point, facet, non-facet, boundedness certificate and neighbour re-checked exactly\n";
    return 0;
  }
  std::cout << "NOT verified: " << arguments.regions_path << ": " << check.failure << "\n";
  return 1;
}

}  // namespace

void register_verify(CommandTable& commands) {
  auto arguments = std::make_shared<VerifyArguments>();
  CLI::App& command = commands.add(
      "verify", "Re-check a saved walk's certificates with exact arithmetic alone",
      "Reads a region file written by 'pleat walk -o FILE --certificates' and re-checks it\n"
      "without any LP solver: each region's cell is rebuilt from the network and its pattern;\n"
      "its interior point, every facet's relative-interior point, the multipliers proving\n"
      "each other constraint redundant, the boundedness certificate and the affine map are\n"
      "checked in exact rational arithmetic; every neighbour must be in the file and its\n"
      "closure must contain the facet point. Prints 'verified' or the first failure.\n\n"
      "Example:\n"
      "  pleat walk data/fold2d.json -o regions.jsonl --certificates\n"
      "  pleat verify data/fold2d.json regions.jsonl",
      [arguments] { return run_verify(*arguments); });
  command.add_option("network", arguments->network_path, "The network the walk was made from")->required();
  command.add_option("regions", arguments->regions_path, "The region file (pleat-regions/1, with certificates)")
      ->required();
}

}  // namespace pleat::cli
