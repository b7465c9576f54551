#include "cli/figure_region_file.hpp"

#include "cli/common.hpp"
#include "cli/line_input.hpp"
#include "cli/region_file_reader.hpp"


namespace pleat::cli {
namespace {

Region read_region(const Network& network, const Json& line, const LineReader& reader) {
  Region region;
  const Json& id = reader.field(line, "id");
  if (!id.is_number_unsigned()) reader.fail("\"id\" must be a non-negative integer");
  region.id = id.get<std::size_t>();
  region.pattern = reader.pattern(reader.field(line, "pattern"));
  region.point = reader.rationals(reader.field(line, "point"));
  if (region.point.size() != network.input_dim) reader.fail("\"point\" has the wrong dimension");
  const Json& bounded = reader.field(line, "bounded");
  if (!bounded.is_boolean()) reader.fail("\"bounded\" must be true or false");
  region.bounded = bounded.get<bool>();
  for (const auto& entry : reader.field(line, "facets")) {
    RegionFacet facet;
    for (const auto& neuron : reader.field(entry, "neurons")) {
      if (!neuron.is_number_unsigned() || neuron.get<std::size_t>() >= network.relu_neuron_count())
        reader.fail("a facet names an unknown neuron " + neuron.dump());
      facet.neurons.push_back(neuron.get<std::size_t>());
    }
    const Json& side = reader.field(entry, "side");
    if (side.is_number_unsigned()) facet.domain_side = side.get<std::size_t>();
    else if (!side.is_null()) reader.fail("\"side\" must be null or an index");
    facet.normal = reader.rationals(reader.field(entry, "normal"));
    if (facet.normal.size() != network.input_dim) reader.fail("a facet normal has the wrong dimension");
    facet.offset = reader.rational(reader.field(entry, "offset"));
    const Json& neighbor = reader.field(entry, "neighbor");
    if (!neighbor.is_null()) facet.neighbor = reader.pattern(neighbor);
    if (entry.contains("point")) facet.point = reader.rationals(entry.at("point"));
    region.touches_domain_boundary = region.touches_domain_boundary || facet.domain_side.has_value();
    region.facets.push_back(std::move(facet));
  }
  const Json& affine = reader.field(line, "affine");
  const Json& rows = reader.field(affine, "A");
  region.affine.offset = reader.rationals(reader.field(affine, "c"));
  region.affine.linear = RationalMatrix(rows.size(), network.input_dim);
  for (std::size_t r = 0; r < rows.size(); ++r) {
    const RationalVector row = reader.rationals(rows[r]);
    if (row.size() != network.input_dim) reader.fail("affine.A has a row of the wrong length");
    region.affine.linear.set_row(r, row);
  }
  if (rows.size() != network.output_dim() || region.affine.offset.size() != network.output_dim())
    reader.fail("affine map has the wrong number of outputs");
  return region;
}

}  // namespace

SavedWalk read_saved_walk(const Network& network, const std::string& path) {
  LineInput input(path, "region file", max_region_line_bytes);  // one line at a time
  SavedWalk walk;
  bool has_header = false;
  std::string text;
  while (input.next(text)) {
    const std::size_t number = input.line_number();
    if (text.empty()) continue;
    const LineReader reader(network, number);
    try {
      const Json line = Json::parse(text);
      if (!has_header) {
        if (!line.is_object() || line.value("format", "") != "pleat-regions/1")
          reader.fail("expected the header line with \"format\": \"pleat-regions/1\"");
        walk.domain = domain_from_json(reader.field(line, "domain"), network.input_dim, reader);
        has_header = true;
        continue;
      }
      walk.regions.push_back(read_region(network, line, reader));
    } catch (const input_error& fault) {
      throw input_error(path + ": " + fault.what());
    } catch (const Json::exception& fault) {
      throw input_error(path + ": line " + std::to_string(number) + ": " + fault.what());
    }
  }
  if (!has_header) throw input_error(path + ": empty file (no header line)");
  return walk;
}

}  // namespace pleat::cli
