#include "cli/formats/region_file_reader.hpp"

#include "cli/formats/line_input.hpp"
#include "cli/formats/region_json.hpp"

#include <algorithm>
#include <initializer_list>
#include <set>
#include <string_view>

namespace pleat::cli {

void LineReader::fail(const std::string& what) const {
  throw input_error("line " + std::to_string(line_) + ": " + what);
}
const Json& LineReader::field(const Json& object, const char* key) const {
  if (!object.is_object() || !object.contains(key)) fail(std::string("missing key \"") + key + "\"");
  return object.at(key);
}

Rational LineReader::rational(const Json& value) const {
  if (!value.is_string()) fail("expected an exact number as a string, found " + value.dump());
  Rational result;
  try {
    result = parse_rational(value.get<std::string>());
  } catch (const input_error& fault) {
    fail(fault.what());
  }
  if (canonical_ && format_rational(result) != value.get<std::string>())
    fail("the number " + value.dump() + " is not written as pleat writes it (\"" + format_rational(result) + "\")");
  return result;
}

RationalVector LineReader::rationals(const Json& value) const {
  if (!value.is_array()) fail("expected a list of numbers, found " + value.dump());
  RationalVector out;
  for (const auto& item : value) out.push_back(rational(item));
  return out;
}

std::vector<std::size_t> LineReader::indices(const Json& value) const {
  if (!value.is_array()) fail("expected a list of indices, found " + value.dump());
  std::vector<std::size_t> out;
  for (const auto& item : value) {
    if (!item.is_number_unsigned()) fail("expected a non-negative integer, found " + item.dump());
    out.push_back(item.get<std::size_t>());
  }
  return out;
}

ActivationPattern LineReader::pattern(const Json& value) const {
  if (!value.is_string()) fail("expected a pattern string, found " + value.dump());
  ActivationPattern result;
  try {
    result = parse_pattern(network_, value.get<std::string>());
  } catch (const input_error& fault) {
    fail(fault.what());
  }
  if (canonical_ && format_pattern(network_, result) != value.get<std::string>())
    fail("the pattern " + value.dump() + " is not written in the spec's notation (\"" +
         format_pattern(network_, result) + "\")");
  return result;
}

RationalVector LineReader::sparse(const Json& value, std::size_t size) const {
  if (!value.is_object()) fail("expected multipliers as an object {index: value}");
  RationalVector out(size, Rational(0));
  for (const auto& [key, entry] : value.items()) {
    std::size_t index = 0;
    try {
      index = parse_unsigned(key, "multiplier index");
    } catch (const input_error& fault) {
      fail(fault.what());
    }
    if (index >= size) fail("multiplier index " + key + " beyond the " + std::to_string(size) + " constraints");
    if (canonical_ && key != std::to_string(index)) fail("multiplier index \"" + key + "\" is not written as pleat writes it");
    out[index] = rational(entry);
    if (canonical_ && out[index] == 0) fail("multiplier " + key + " is zero (pleat writes only nonzero multipliers)");
  }
  return out;
}

Domain domain_from_json(const Json& value, std::size_t input_dim, const LineReader& reader) {
  if (value.is_string()) {
    if (value.get<std::string>() != "R^" + std::to_string(input_dim))
      reader.fail("domain " + value.dump() + " does not match the network's " + count_of(input_dim, "input"));
    return make_whole_space(input_dim);
  }
  if (value.is_object() && value.contains("box")) {
    RationalVector lower, upper;
    for (const auto& interval : value.at("box")) {
      const RationalVector bounds = reader.rationals(interval);
      if (bounds.size() != 2) reader.fail("a box interval needs two numbers");
      lower.push_back(bounds[0]);
      upper.push_back(bounds[1]);
    }
    if (lower.size() != input_dim) reader.fail("the box's dimension differs from the network's");
    return make_box(lower, upper);
  }
  if (value.is_object() && value.contains("constraints")) {
    std::vector<lp::Constraint> constraints;
    for (const auto& c : value.at("constraints"))
      constraints.push_back(lp::Constraint{reader.rationals(reader.field(c, "normal")),
                                           reader.rational(reader.field(c, "offset"))});
    return make_polytope(input_dim, std::move(constraints));
  }
  reader.fail("unknown domain " + value.dump());
}

namespace {

// What each reading checks; see RegionFileReading.
struct LineRules {
  const LineReader& reader;
  bool exact_copy;

  // Unknown keys are refused when reading an exact copy.
  void allow_only(const Json& object, std::initializer_list<std::string_view> keys, const std::string& where) const {
    if (!object.is_object()) reader.fail(where + " must be a JSON object");
    if (!exact_copy) return;
    for (const auto& item : object.items())
      if (std::find(keys.begin(), keys.end(), item.key()) == keys.end())
        reader.fail("unknown key " + Json(item.key()).dump(-1, ' ', false, Json::error_handler_t::replace) + " in " + where +
                    " (verify refuses what it cannot check)");
  }

  bool boolean(const Json& object, const char* key) const {
    const Json& value = reader.field(object, key);
    if (!value.is_boolean()) reader.fail(std::string("\"") + key + "\" must be true or false");
    return value.get<bool>();
  }

  std::size_t index(const Json& value, const char* what) const {
    if (!value.is_number_unsigned())
      reader.fail(std::string(what) + " must be a non-negative integer, found " + value.dump());
    return value.get<std::size_t>();
  }

  // A list written only when it is not empty.
  const Json* optional_nonempty_list(const Json& object, const char* key) const {
    if (!object.contains(key)) return nullptr;
    const Json& value = object.at(key);
    if (!value.is_array() || (exact_copy && value.empty()))
      reader.fail(std::string("\"") + key + "\" must be a non-empty list (pleat leaves it out when empty)");
    return &value;
  }
};

RegionFacet read_facet(const Json& entry, const LineRules& rules, const Network& network) {
  const std::size_t input_dim = network.input_dim;
  const LineReader& reader = rules.reader;
  rules.allow_only(entry, {"neurons", "side", "normal", "offset", "neighbor", "other_neighbors", "point"}, "a facet");
  RegionFacet facet;
  facet.neurons = reader.indices(reader.field(entry, "neurons"));
  // An exact copy's neurons are compared with the network's (walk_check); a
  // figure looks them up.
  if (!rules.exact_copy)
    for (std::size_t neuron : facet.neurons)
      if (neuron >= network.relu_neuron_count()) reader.fail("a facet names an unknown neuron " + std::to_string(neuron));
  const Json& side = reader.field(entry, "side");
  if (!side.is_null()) facet.domain_side = rules.index(side, "a facet's \"side\"");
  facet.normal = reader.rationals(reader.field(entry, "normal"));
  facet.offset = reader.rational(reader.field(entry, "offset"));
  RationalVector& point = facet.relative_interior.point;
  if (rules.exact_copy || entry.contains("point")) point = reader.rationals(reader.field(entry, "point"));
  const Json& neighbor = reader.field(entry, "neighbor");
  if (!neighbor.is_null()) facet.neighbor = reader.pattern(neighbor);
  if (const Json* others = rules.optional_nonempty_list(entry, "other_neighbors"))
    for (const auto& other : *others) facet.other_neighbors.push_back(reader.pattern(other));
  if (facet.normal.size() != input_dim || (!point.empty() && point.size() != input_dim) ||
      (rules.exact_copy && point.size() != input_dim))
    reader.fail("a facet's normal or point has the wrong number of coordinates");
  return facet;
}

AffineMap read_affine(const Json& affine, std::size_t input_dim, const LineRules& rules) {
  const LineReader& reader = rules.reader;
  rules.allow_only(affine, {"A", "c"}, "\"affine\"");
  const Json& rows = reader.field(affine, "A");
  if (!rows.is_array()) reader.fail("affine.A must be a list of rows");
  AffineMap map;
  map.offset = reader.rationals(reader.field(affine, "c"));
  map.linear = RationalMatrix(rows.size(), input_dim);
  for (std::size_t r = 0; r < rows.size(); ++r) {
    const RationalVector row = reader.rationals(rows[r]);
    if (row.size() != input_dim) reader.fail("affine.A has a row of the wrong length");
    map.linear.set_row(r, row);
  }
  return map;
}

// Facet groups as written: ascending by their first constraint.
void read_groups(const Json& list, bool facets, std::size_t constraints, const LineRules& rules,
                 lp::FacetClassification& classification) {
  const LineReader& reader = rules.reader;
  std::size_t previous_first = 0;
  bool is_first = true;
  for (const auto& entry : list) {
    lp::FacetGroup group;
    if (facets) {
      rules.allow_only(entry, {"constraints", "point"}, "a facet point");
      group = lp::FacetGroup{reader.indices(reader.field(entry, "constraints")),
                             lp::FacetPoint{reader.rationals(reader.field(entry, "point"))}};
    } else {
      rules.allow_only(entry, {"constraints", "equality_multiplier", "multipliers"}, "a non-facet certificate");
      group = lp::FacetGroup{reader.indices(reader.field(entry, "constraints")),
                             lp::NonFacetCertificate{reader.rational(reader.field(entry, "equality_multiplier")),
                                                     reader.sparse(reader.field(entry, "multipliers"), constraints)}};
    }
    if (group.constraints.empty()) reader.fail("a certificate group lists no constraints");
    if (!is_first && group.constraints.front() <= previous_first)
      reader.fail("certificate groups are not in the order of their first constraint");
    previous_first = group.constraints.front();
    is_first = false;
    classification.groups.push_back(std::move(group));
  }
}

// The certificate of one region line (pleat walk --certificates).
RegionCertificates read_certificate(const Json& certificate, const LineRules& rules, std::size_t input_dim,
                                    RationalVector& interior_point) {
  const LineReader& reader = rules.reader;
  rules.allow_only(certificate,
                   {"interior_point", "constraints", "facet_points", "non_facets", "bounded_by", "recession_direction"},
                   "\"certificate\"");
  interior_point = reader.rationals(reader.field(certificate, "interior_point"));
  RegionCertificates result;
  result.cell.dim = input_dim;
  const Json& constraints = reader.field(certificate, "constraints");
  if (!constraints.is_array()) reader.fail("certificate.constraints must be a list");
  for (const auto& entry : constraints) {
    rules.allow_only(entry, {"normal", "offset", "neuron"}, "a certificate constraint");
    result.cell.constraints.push_back(
        lp::Constraint{reader.rationals(reader.field(entry, "normal")), reader.rational(reader.field(entry, "offset"))});
    const Json& neuron = reader.field(entry, "neuron");
    result.constraint_neuron.push_back(neuron.is_null() ? no_index : rules.index(neuron, "a constraint's \"neuron\""));
  }
  read_groups(reader.field(certificate, "facet_points"), true, constraints.size(), rules, result.classification);
  read_groups(reader.field(certificate, "non_facets"), false, constraints.size(), rules, result.classification);
  std::stable_sort(result.classification.groups.begin(), result.classification.groups.end(),
                   [](const lp::FacetGroup& a, const lp::FacetGroup& b) {
                     return a.constraints.front() < b.constraints.front();
                   });
  if (certificate.contains("bounded_by") && certificate.contains("recession_direction"))
    reader.fail("a certificate has both \"bounded_by\" and \"recession_direction\"");
  if (certificate.contains("bounded_by")) {
    const Json& bounded_by = certificate.at("bounded_by");
    rules.allow_only(bounded_by, {"multipliers"}, "\"bounded_by\"");
    result.boundedness = lp::BoundednessVerdict{
        lp::BoundednessCertificate{reader.sparse(reader.field(bounded_by, "multipliers"), constraints.size())}};
  } else if (certificate.contains("recession_direction")) {
    result.boundedness =
        lp::BoundednessVerdict{lp::RecessionDirection{reader.rationals(certificate.at("recession_direction"))}};
  }
  return result;
}

SavedRegion read_region(const Json& line, const Network& network, const LineRules& rules, std::size_t number) {
  const LineReader& reader = rules.reader;
  rules.allow_only(line,
                   {"id", "pattern", "point", "bounded", "touches_domain_boundary", "facets", "affine",
                    "nonsmooth_neurons", "certificate"},
                   "a region line");
  SavedRegion saved;
  saved.line = number;
  Region& region = saved.region;
  region.id = rules.index(reader.field(line, "id"), "\"id\"");
  region.pattern = reader.pattern(reader.field(line, "pattern"));
  region.interior.point = reader.rationals(reader.field(line, "point"));
  if (region.interior.point.size() != network.input_dim) reader.fail("the point has the wrong number of coordinates");
  region.bounded = rules.boolean(line, "bounded");
  const Json& facets = reader.field(line, "facets");
  if (!facets.is_array()) reader.fail("\"facets\" must be a list");
  for (const auto& entry : facets) region.facets.push_back(read_facet(entry, rules, network));
  if (rules.exact_copy || line.contains("touches_domain_boundary"))
    region.touches_domain_boundary = rules.boolean(line, "touches_domain_boundary");
  else
    region.touches_domain_boundary = std::any_of(region.facets.begin(), region.facets.end(),
                                                 [](const RegionFacet& f) { return f.domain_side.has_value(); });
  region.affine = read_affine(reader.field(line, "affine"), network.input_dim, rules);
  // An exact copy's map is compared with the network's own (walk_check); a
  // figure needs the sizes right before it reads the map.
  if (!rules.exact_copy &&
      (region.affine.linear.rows() != network.output_dim() || region.affine.offset.size() != network.output_dim()))
    reader.fail("affine map has the wrong number of outputs");
  if (const Json* neurons = rules.optional_nonempty_list(line, "nonsmooth_neurons"))
    region.nonsmooth_neurons = reader.indices(*neurons);
  if (rules.exact_copy && line.contains("certificate"))
    region.certificates = read_certificate(line.at("certificate"), rules, network.input_dim, saved.certificate_point);
  return saved;
}

constexpr const char* region_file_how = " (a region file is written by pleat walk NETWORK -o FILE --certificates)";

// The header: format and domain; for an exact copy also the network's label
// and the parametric dimension, and the domain written as pleat writes it.
void read_header(const Json& line, const Network& network, const LineRules& rules, RegionFile& file) {
  const LineReader& reader = rules.reader;
  if (!line.is_object() || !line.contains("format") || line.at("format") != "pleat-regions/1") {
    // Another of pleat's files given here is named, with where it belongs.
    const std::string format =
        line.is_object() && line.contains("format") && line.at("format").is_string() ? line.at("format").get<std::string>() : "";
    const std::string found =
        format == "pleat-bundle/1"    ? ", found a proof bundle (pleat-bundle/1: check it with python3 scripts/check_bundle.py FILE)"
        : format == "pleat-network/1" ? ", found a network (pleat-network/1: give the network first, then the region file)"
        : format.empty()              ? ""
                                      : ", found \"format\": " + line.at("format").dump() + region_file_how;
    reader.fail("expected the header line with \"format\": \"pleat-regions/1\"" + found);
  }
  rules.allow_only(line, {"format", "network", "domain", "parametric_dimension"}, "the header");
  const Json& written = reader.field(line, "domain");
  file.domain = domain_from_json(written, network.input_dim, reader);
  if (rules.exact_copy) {
    const Json& label = reader.field(line, "network");
    if (!label.is_string()) reader.fail("\"network\" must be a string");
    file.network_label = label.get<std::string>();
    if (domain_to_json(file.domain) != written)
      reader.fail("the domain is not written as pleat writes it: " + domain_to_json(file.domain).dump());
    file.parametric_dimension = rules.index(reader.field(line, "parametric_dimension"), "\"parametric_dimension\"");
  } else if (line.contains("parametric_dimension") && line.at("parametric_dimension").is_number_unsigned()) {
    file.parametric_dimension = line.at("parametric_dimension").get<std::size_t>();  // only to name another network
  }
}

// After a region line that does not fit the network: when the header's
// parametric dimension is not the network's, the file is a walk of another
// network, and the message says so beside the line's own fault.
std::string another_network_hint(const RegionFile& file, const Network& network) {
  if (!file.parametric_dimension || *file.parametric_dimension == network.parametric_dimension()) return "";
  return " (line 1 says \"parametric_dimension\": " + std::to_string(*file.parametric_dimension) +
         ", the network given has " + std::to_string(network.parametric_dimension()) +
         " parameters: the file holds a walk of another network)";
}

// JSON that repeats a key is refused in an exact copy: a reader keeping the
// other copy would see a claim verify never checked.
Json parse_line(const std::string& text, const LineRules& rules) {
  std::vector<std::set<std::string>> keys;
  const auto refuse_repeats = [&](int /*depth*/, Json::parse_event_t event, Json& parsed) {
    if (!rules.exact_copy) return true;
    if (event == Json::parse_event_t::object_start) keys.emplace_back();
    else if (event == Json::parse_event_t::object_end) keys.pop_back();
    else if (event == Json::parse_event_t::key && !keys.back().insert(parsed.get<std::string>()).second)
      rules.reader.fail("the key " + parsed.dump() + " appears twice in one object");
    return true;
  };
  try {
    return Json::parse(text, refuse_repeats);
  } catch (const Json::parse_error& error) {
    // pleat walk/certify --json print a document over several lines: its first line is '{' alone.
    if (rules.reader.line() == 1 && std::count(text.begin(), text.end(), '{') == 1 &&
        text.find_first_not_of(" \t\r{") == std::string::npos)
      rules.reader.fail("'{' alone: a JSON document written over several lines (as --json prints), not a region file of "
                        "one JSON object per line" + std::string(region_file_how));
    std::string what = error.what();
    if (what.size() > 200) what = what.substr(0, 200) + "...";
    rules.reader.fail("not JSON (" + what + ")");
  }
}

}  // namespace

RegionFile read_region_file(const Network& network, const std::string& path, RegionFileReading reading) {
  const bool exact_copy = reading == RegionFileReading::exact_copy;
  LineInput input(path, "region file", max_region_line_bytes);  // one line at a time
  RegionFile file;
  file.path = input.path();
  bool has_header = false;
  std::string text;
  while (input.next(text)) {
    const std::size_t number = input.line_number();
    LineReader reader(network, number);
    if (exact_copy) reader.require_canonical();
    const LineRules rules{reader, exact_copy};
    try {
      if (text.empty()) {
        if (exact_copy) reader.fail("an empty line (pleat writes none)");
        continue;
      }
      const Json line = parse_line(text, rules);
      if (!has_header) {
        read_header(line, network, rules, file);
        has_header = true;
      } else {
        file.regions.push_back(read_region(line, network, rules, number));
      }
    } catch (const input_error& fault) {
      throw input_error(input.path() + ": " + fault.what() + another_network_hint(file, network));
    } catch (const Json::exception& fault) {
      throw input_error(input.path() + ": line " + std::to_string(number) + ": " + fault.what() +
                        another_network_hint(file, network));
    }
  }
  if (!has_header) throw input_error(input.path() + ": empty file (no header line)");
  return file;
}

}  // namespace pleat::cli
