// pleat verify: re-check a saved walk with exact arithmetic.
//
// Every key of a region file is read: either verify re-derives it from the
// network and compares (enumerate/walk_check.hpp), or checks the certificate
// it is part of; a key verify does not know is refused, so a file cannot
// carry a claim that was not checked. docs/formats.md lists the keys.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/line_input.hpp"
#include "cli/region_file_reader.hpp"
#include "cli/region_json.hpp"
#include "core/network_io.hpp"
#include "enumerate/walk_check.hpp"

#include <algorithm>
#include <initializer_list>
#include <iostream>
#include <set>
#include <string_view>

namespace pleat::cli {
namespace {

struct VerifyArguments {
  std::string network_path;
  std::string regions_path;
};

void allow_only(const Json& object, std::initializer_list<std::string_view> keys, const LineReader& reader,
                const std::string& where) {
  if (!object.is_object()) reader.fail(where + " must be a JSON object");
  for (const auto& item : object.items())
    if (std::find(keys.begin(), keys.end(), item.key()) == keys.end())
      reader.fail("unknown key \"" + item.key() + "\" in " + where +
                  " (verify refuses what it cannot check)");
}

bool read_boolean(const Json& object, const char* key, const LineReader& reader) {
  const Json& value = reader.field(object, key);
  if (!value.is_boolean()) reader.fail(std::string("\"") + key + "\" must be true or false");
  return value.get<bool>();
}

std::size_t read_index(const Json& value, const char* what, const LineReader& reader) {
  if (!value.is_number_unsigned()) reader.fail(std::string(what) + " must be a non-negative integer, found " + value.dump());
  return value.get<std::size_t>();
}

// A list written only when it is not empty.
const Json* optional_nonempty_list(const Json& object, const char* key, const LineReader& reader) {
  if (!object.contains(key)) return nullptr;
  const Json& value = object.at(key);
  if (!value.is_array() || value.empty())
    reader.fail(std::string("\"") + key + "\" must be a non-empty list (pleat leaves it out when empty)");
  return &value;
}

SavedFacet read_facet(const Json& entry, const LineReader& reader) {
  allow_only(entry, {"neurons", "side", "normal", "offset", "neighbor", "other_neighbors", "point"}, reader, "a facet");
  SavedFacet facet;
  facet.neurons = reader.indices(reader.field(entry, "neurons"));
  const Json& side = reader.field(entry, "side");
  if (!side.is_null()) facet.domain_side = read_index(side, "a facet's \"side\"", reader);
  facet.normal = reader.rationals(reader.field(entry, "normal"));
  facet.offset = reader.rational(reader.field(entry, "offset"));
  facet.point = reader.rationals(reader.field(entry, "point"));
  const Json& neighbor = reader.field(entry, "neighbor");
  if (!neighbor.is_null()) facet.neighbor = reader.pattern(neighbor);
  if (const Json* others = optional_nonempty_list(entry, "other_neighbors", reader))
    for (const auto& other : *others) facet.other_neighbors.push_back(reader.pattern(other));
  return facet;
}

void read_affine(const Json& affine, std::size_t input_dim, const LineReader& reader, SavedRegion& region) {
  allow_only(affine, {"A", "c"}, reader, "\"affine\"");
  const Json& rows = reader.field(affine, "A");
  if (!rows.is_array()) reader.fail("affine.A must be a list of rows");
  region.affine_offset = reader.rationals(reader.field(affine, "c"));
  region.affine_linear = RationalMatrix(rows.size(), input_dim);
  for (std::size_t r = 0; r < rows.size(); ++r) {
    const RationalVector row = reader.rationals(rows[r]);
    if (row.size() != input_dim) reader.fail("affine.A has a row of the wrong length");
    region.affine_linear.set_row(r, row);
  }
}

// Facet groups as written: ascending by their first constraint.
void read_groups(const Json& list, bool facets, std::size_t constraints, const LineReader& reader,
                 SavedRegion& region) {
  std::size_t previous_first = 0;
  bool is_first = true;
  for (const auto& entry : list) {
    lp::FacetGroup group;
    if (facets) {
      allow_only(entry, {"constraints", "point"}, reader, "a facet point");
      group = lp::FacetGroup{reader.indices(reader.field(entry, "constraints")),
                             lp::FacetPoint{reader.rationals(reader.field(entry, "point"))}};
    } else {
      allow_only(entry, {"constraints", "equality_multiplier", "multipliers"}, reader, "a non-facet certificate");
      group = lp::FacetGroup{reader.indices(reader.field(entry, "constraints")),
                             lp::NonFacetCertificate{reader.rational(reader.field(entry, "equality_multiplier")),
                                                     reader.sparse(reader.field(entry, "multipliers"), constraints)}};
    }
    if (group.constraints.empty()) reader.fail("a certificate group lists no constraints");
    if (!is_first && group.constraints.front() <= previous_first)
      reader.fail("certificate groups are not in the order of their first constraint");
    previous_first = group.constraints.front();
    is_first = false;
    region.classification.groups.push_back(std::move(group));
  }
}

void read_certificate(const Json& certificate, const LineReader& reader, SavedRegion& region) {
  allow_only(certificate,
             {"interior_point", "constraints", "facet_points", "non_facets", "bounded_by", "recession_direction"},
             reader, "\"certificate\"");
  region.has_certificate = true;
  region.certificate_point = reader.rationals(reader.field(certificate, "interior_point"));
  const Json& constraints = reader.field(certificate, "constraints");
  if (!constraints.is_array()) reader.fail("certificate.constraints must be a list");
  for (const auto& entry : constraints) {
    allow_only(entry, {"normal", "offset", "neuron"}, reader, "a certificate constraint");
    SavedConstraint saved{lp::Constraint{reader.rationals(reader.field(entry, "normal")),
                                         reader.rational(reader.field(entry, "offset"))},
                          std::nullopt};
    const Json& neuron = reader.field(entry, "neuron");
    if (!neuron.is_null()) saved.neuron = read_index(neuron, "a constraint's \"neuron\"", reader);
    region.certificate_constraints.push_back(std::move(saved));
  }
  read_groups(reader.field(certificate, "facet_points"), true, constraints.size(), reader, region);
  read_groups(reader.field(certificate, "non_facets"), false, constraints.size(), reader, region);
  std::stable_sort(region.classification.groups.begin(), region.classification.groups.end(),
                   [](const lp::FacetGroup& a, const lp::FacetGroup& b) {
                     return a.constraints.front() < b.constraints.front();
                   });
  if (certificate.contains("bounded_by") && certificate.contains("recession_direction"))
    reader.fail("a certificate has both \"bounded_by\" and \"recession_direction\"");
  if (certificate.contains("bounded_by")) {
    const Json& bounded_by = certificate.at("bounded_by");
    allow_only(bounded_by, {"multipliers"}, reader, "\"bounded_by\"");
    region.boundedness = lp::BoundednessVerdict{
        lp::BoundednessCertificate{reader.sparse(reader.field(bounded_by, "multipliers"), constraints.size())}};
  } else if (certificate.contains("recession_direction")) {
    region.boundedness =
        lp::BoundednessVerdict{lp::RecessionDirection{reader.rationals(certificate.at("recession_direction"))}};
  }
}

SavedRegion read_region(const Json& line, const Network& network, const LineReader& reader, std::size_t number) {
  allow_only(line,
             {"id", "pattern", "point", "bounded", "touches_domain_boundary", "facets", "affine",
              "nonsmooth_neurons", "certificate"},
             reader, "a region line");
  SavedRegion region;
  region.line = number;
  region.id = read_index(reader.field(line, "id"), "\"id\"", reader);
  region.pattern = reader.pattern(reader.field(line, "pattern"));
  region.point = reader.rationals(reader.field(line, "point"));
  if (region.point.size() != network.input_dim) reader.fail("the point has the wrong number of coordinates");
  region.bounded = read_boolean(line, "bounded", reader);
  region.touches_domain_boundary = read_boolean(line, "touches_domain_boundary", reader);
  const Json& facets = reader.field(line, "facets");
  if (!facets.is_array()) reader.fail("\"facets\" must be a list");
  for (const auto& entry : facets) {
    region.facets.push_back(read_facet(entry, reader));
    const SavedFacet& facet = region.facets.back();
    if (facet.normal.size() != network.input_dim || facet.point.size() != network.input_dim)
      reader.fail("a facet's normal or point has the wrong number of coordinates");
  }
  read_affine(reader.field(line, "affine"), network.input_dim, reader, region);
  if (const Json* neurons = optional_nonempty_list(line, "nonsmooth_neurons", reader))
    region.nonsmooth_neurons = reader.indices(*neurons);
  if (line.contains("certificate")) read_certificate(line.at("certificate"), reader, region);
  return region;
}

// The header: every key compared with what the network and the domain give,
// except "network", the name the walk was given (printed, not trusted).
Domain read_header(const Json& line, const Network& network, const LineReader& reader, std::string& network_label) {
  if (!line.is_object() || !line.contains("format") || line.at("format") != "pleat-regions/1")
    reader.fail("expected the header line with \"format\": \"pleat-regions/1\"");
  allow_only(line, {"format", "network", "domain", "parametric_dimension"}, reader, "the header");
  const Json& label = reader.field(line, "network");
  if (!label.is_string()) reader.fail("\"network\" must be a string");
  network_label = label.get<std::string>();
  const Json& written = reader.field(line, "domain");
  Domain domain = domain_from_json(written, network.input_dim, reader);
  if (domain_to_json(domain) != written)
    reader.fail("the domain is not written as pleat writes it: " + domain_to_json(domain).dump());
  return domain;
}

// JSON that repeats a key is refused: a reader keeping the other copy would
// see a claim verify never checked.
Json parse_line(const std::string& text, const LineReader& reader) {
  std::vector<std::set<std::string>> keys;
  const auto refuse_repeats = [&](int /*depth*/, Json::parse_event_t event, Json& parsed) {
    if (event == Json::parse_event_t::object_start) keys.emplace_back();
    else if (event == Json::parse_event_t::object_end) keys.pop_back();
    else if (event == Json::parse_event_t::key && !keys.back().insert(parsed.get<std::string>()).second)
      reader.fail("the key " + parsed.dump() + " appears twice in one object");
    return true;
  };
  try {
    return Json::parse(text, refuse_repeats);
  } catch (const Json::parse_error& error) {
    std::string what = error.what();
    if (what.size() > 200) what = what.substr(0, 200) + "...";
    reader.fail("not JSON (" + what + ")");
  }
}

int run_verify(const VerifyArguments& arguments) {
  const Network network = read_network_any(arguments.network_path);
  LineInput input(arguments.regions_path, "region file", max_region_line_bytes);
  const std::string& path = input.path();
  std::string text;
  std::optional<Domain> domain;
  std::string network_label;
  std::size_t header_dimension = 0;
  std::vector<SavedRegion> regions;
  while (input.next(text)) {
    const std::size_t number = input.line_number();
    LineReader reader(network, number);
    reader.require_canonical();
    try {
      if (text.empty()) reader.fail("an empty line (pleat writes none)");
      const Json line = parse_line(text, reader);
      if (!domain) {
        domain = read_header(line, network, reader, network_label);
        header_dimension = read_index(reader.field(line, "parametric_dimension"), "\"parametric_dimension\"", reader);
      }
      else regions.push_back(read_region(line, network, reader, number));
    } catch (const input_error& fault) {
      throw input_error(path + ": " + fault.what());
    } catch (const Json::exception& fault) {
      throw input_error(path + ": line " + std::to_string(number) + ": " + fault.what());
    }
  }
  if (!domain) throw input_error(path + ": empty file (no header line)");
  const WalkCheck check = header_dimension != network.parametric_dimension()
                              ? WalkCheck{false, "line 1: \"parametric_dimension\" is " + std::to_string(header_dimension) +
                                                     "; the network has " + std::to_string(network.parametric_dimension()) +
                                                     " parameters", 0}
                              : check_saved_walk(network, *domain, regions);
  if (check.is_verified) {
    std::cout << "verified: " << count_of(check.regions, "region") << " of " << arguments.network_path << " on "
              << domain->describe()
              << "; every point, facet, non-facet, boundedness certificate, neighbour and key re-checked exactly\n";
    // The header's name is a label, not a claim: say so when it differs.
    if (network_label != arguments.network_path)
      std::cout << "note: the file names its network \"" << network_label << "\"; checked against "
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
