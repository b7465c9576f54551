// pleat inspect: the exact record of one region (by a point or a pattern):
// H- and V-representation, volume, affine map, rank contribution. A point on
// bent hyperplanes gets the list of every region whose closure holds it.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/formats/region_json.hpp"
#include "core/network_io.hpp"
#include "enumerate/region_geometry.hpp"
#include "enumerate/region_record.hpp"
#include "enumerate/walker.hpp"

#include <iostream>
#include <sstream>

namespace pleat::cli {
namespace {

struct InspectArguments {
  std::string network_path;
  DomainOptions domain;
  std::string at_text;
  std::string pattern_text;
  bool json = false;
  bool exact_only = false;
};

// Exact numbers for people: with a decimal view unless --exact-only.
std::string number_text(const Rational& value, bool exact_only) {
  return exact_only ? format_rational(value) : format_rational_readable(value);
}

using Record = RegionRecord;

std::string neuron_name(const Network& network, std::size_t neuron) {
  const std::size_t layer = network.layer_of_neuron(neuron);
  return "neuron " + std::to_string(neuron) + " (layer " + std::to_string(layer + 1) + " #" +
         std::to_string(neuron - network.first_neuron_of_layer(layer)) + ")";
}

// "3 x1 - 2 x2 + 7"; "1/3 (≈ 0.333333) x1 + 2" with decimals.
std::string affine_text(const RationalVector& normal, const Rational& offset, bool exact_only) {
  std::string text;
  for (std::size_t i = 0; i < normal.size(); ++i) {
    if (normal[i] == 0) continue;
    const Rational magnitude = abs(normal[i]);
    // The first term carries its own sign, so its decimal view has it too.
    const bool is_first = text.empty();
    if (!is_first) text += normal[i] < 0 ? " - " : " + ";
    if (magnitude != 1) text += number_text(is_first ? normal[i] : magnitude, exact_only) + " ";
    else if (is_first && normal[i] < 0) text += "-";
    text += "x" + std::to_string(i + 1);
  }
  if (offset != 0 || text.empty())
    text += text.empty() ? number_text(offset, exact_only)
                         : (offset < 0 ? " - " : " + ") + number_text(abs(offset), exact_only);
  return text;
}

std::string point_text(const RationalVector& point, bool exact_only) {
  std::string text = "(";
  for (std::size_t i = 0; i < point.size(); ++i) text += (i ? ", " : "") + number_text(point[i], exact_only);
  return text + ")";
}

Json record_json(const Network& network, const Record& record) {
  const Region& region = record.region;
  Json facets = Json::array();
  for (const auto& facet : region.facets) facets.push_back(facet_to_json(network, facet, true));
  auto list = [](const std::vector<RationalVector>& vectors) {
    Json out = Json::array();
    for (const auto& v : vectors) out.push_back(rational_list_json(v));
    return out;
  };
  Json out;
  out["pattern"] = format_pattern(network, region.pattern);
  out["point"] = rational_list_json(region.interior.point);
  out["bounded"] = region.bounded;
  out["bounded_in_domain"] = record.vertices.is_bounded();
  out["facets"] = std::move(facets);
  out["vertices"] = list(record.vertices.points);
  out["vertex_order"] = network.input_dim == 2 && record.vertices.lines.empty() ? Json("counter-clockwise") : Json(nullptr);
  out["rays"] = list(record.vertices.rays);
  out["lines"] = list(record.vertices.lines);
  out["volume"] = record.volume ? Json(format_rational(*record.volume)) : Json(nullptr);
  out["affine"] = {{"A", Json::array()}, {"c", rational_list_json(region.affine.offset)}};
  for (std::size_t r = 0; r < region.affine.linear.rows(); ++r)
    out["affine"]["A"].push_back(rational_list_json(region.affine.linear.row(r)));
  out["rank_contribution"] = record.rank;
  out["nonsmooth_neurons"] = region.nonsmooth_neurons;
  return out;
}

void print_record(const Network& network, const Domain& domain, const Record& record, bool exact_only,
                  std::ostream& out) {
  const Region& region = record.region;
  const std::size_t dim = network.input_dim;
  out << "region      " << format_pattern(network, region.pattern) << "\n";
  // Not "point": after --at it read as the point asked about, which it is not.
  out << "interior    " << point_text(region.interior.point, exact_only)
      << "  (a point strictly inside the region, checked exactly)\n";
  out << "bounded     " << (region.bounded ? "yes" : "no") << " in R^" << dim;
  if (domain.kind != Domain::Kind::whole_space)
    out << "; within " << domain.describe() << ": " << (record.vertices.is_bounded() ? "bounded" : "unbounded");
  out << "\n";
  out << "facets      " << region.facets.size() << " (irredundant; the region is where every form is > 0)\n";
  for (const auto& facet : region.facets) {
    std::string who;
    if (facet.domain_side) who = "domain side " + std::to_string(*facet.domain_side);
    for (std::size_t neuron : facet.neurons) who += (who.empty() ? "" : ", ") + neuron_name(network, neuron);
    out << "  " << affine_text(facet.normal, facet.offset, exact_only) << "   " << who;
    if (facet.neighbor) out << "   -> " << format_pattern(network, *facet.neighbor);
    for (const auto& other : facet.other_neighbors) out << ", " << format_pattern(network, other);
    out << "\n";
  }
  const auto& rep = record.vertices;
  if (rep.lines.empty()) {
    out << "vertices    " << rep.points.size();
    if (dim == 2) out << ", in counter-clockwise order along the boundary";
  } else {
    // Not "a point of the region": the V-representation's one point lies in the
    // closure, often on a facet, and the region is open (every form > 0).
    out << "vertices    none (the region contains lines); its closure is this point plus the rays and lines";
  }
  out << "\n";
  for (const auto& p : rep.points) out << "  " << point_text(p, exact_only) << "\n";
  if (!rep.rays.empty()) {
    out << "rays        ";
    for (std::size_t i = 0; i < rep.rays.size(); ++i) out << (i ? ", " : "") << point_text(rep.rays[i], exact_only);
    out << "\n";
  }
  if (!rep.lines.empty()) {
    out << "lines       ";
    for (std::size_t i = 0; i < rep.lines.size(); ++i) out << (i ? ", " : "") << point_text(rep.lines[i], exact_only);
    out << "\n";
  }
  const char* measure = dim == 1 ? "length" : dim == 2 ? "area" : "volume";
  if (record.volume)
    out << measure << (dim == 1 ? "      " : dim == 2 ? "        " : "      ") << number_text(*record.volume, exact_only)
        << (domain.kind == Domain::Kind::whole_space ? "" : " within the domain") << "\n";
  else
    out << measure << (dim == 1 ? "      " : dim == 2 ? "        " : "      ")
        << (rep.is_bounded() ? "not computed above 4 inputs" : "infinite") << "\n";
  out << "map         ";
  for (std::size_t o = 0; o < region.affine.offset.size(); ++o)
    out << (o ? "\n            " : "") << "F" << (region.affine.offset.size() > 1 ? std::to_string(o + 1) : "")
        << "(x) = " << affine_text(region.affine.linear.row(o), region.affine.offset[o], exact_only);
  out << "\n";
  out << "rank        adds " << record.rank << " independent rows when taken first (of at most "
      << network.output_dim() * (dim + 1) << ")";
  if (!region.nonsmooth_neurons.empty()) out << "; no smooth points (a neuron is identically zero)";
  out << "\n";
}

int run_inspect(const InspectArguments& arguments) {
  const Network network = read_network_input(arguments.network_path);
  const Domain domain = make_domain(arguments.domain, network.input_dim);
  std::vector<Record> records;
  Json query;
  std::optional<PointIncidence> incidence;
  if (!arguments.at_text.empty()) {
    const RationalVector point = parse_point(arguments.at_text, network.input_dim, "--at");
    query = {{"at", rational_list_json(point)}};
    incidence = regions_at_point(network, domain, point);
    for (const auto& pattern : incidence->regions) {
      auto region = describe_region(network, domain, pattern);
      if (!region) throw std::logic_error("inspect: an incident cell lost its interior");
      records.push_back(make_region_record(network, std::move(*region)));
    }
  } else {
    const ActivationPattern pattern = [&] {
      try {
        return parse_pattern(network, arguments.pattern_text);
      } catch (const input_error& fault) {
        throw input_error(std::string("--pattern: ") + fault.what());
      }
    }();
    query = {{"pattern", format_pattern(network, pattern)}};
    auto region = describe_region(network, domain, pattern);
    if (!region)
      throw input_error("--pattern " + arguments.pattern_text + ": no region has this pattern on " + domain.describe() +
                        " (its cell has empty interior)");
    records.push_back(make_region_record(network, std::move(*region)));
  }
  const bool on_boundary = incidence && !incidence->vanishing_neurons.empty();

  if (arguments.json) {
    Json out;
    out["format"] = "pleat-inspect/1";
    out["network"] = arguments.network_path;
    out["domain"] = domain_to_json(domain);
    out["query"] = std::move(query);
    if (incidence) {
      out["on_boundary"] = on_boundary;
      out["vanishing_neurons"] = incidence->vanishing_neurons;
    }
    Json regions = Json::array();
    for (const auto& record : records) regions.push_back(record_json(network, record));
    out["regions"] = std::move(regions);
    std::cout << json_text(out);
    return 0;
  }
  if (on_boundary) {
    std::cout << "on boundary " << count_of(incidence->vanishing_neurons.size(), "neuron")
              << (incidence->vanishing_neurons.size() == 1 ? " vanishes" : " vanish") << " here:";
    for (std::size_t neuron : incidence->vanishing_neurons) std::cout << " " << neuron;
    std::cout << "\n            the closures of " << records.size() << " region" << (records.size() == 1 ? "" : "s")
              << " contain the point:\n";
    for (const auto& record : records) std::cout << "              " << format_pattern(network, record.region.pattern) << "\n";
  }
  for (std::size_t i = 0; i < records.size(); ++i) {
    if (on_boundary || i) std::cout << "\n";
    print_record(network, domain, records[i], arguments.exact_only, std::cout);
  }
  return 0;
}

}  // namespace

void register_inspect(CommandTable& commands) {
  auto arguments = std::make_shared<InspectArguments>();
  CLI::App& command = commands.add(
      "inspect", "The exact record of one region: facets, vertices, volume, map, rank",
      "Finds the region that contains a point (--at) or has a pattern (--pattern) and prints,\n"
      "exactly: its irredundant facets (each with its neurons and the neighbouring region),\n"
      "its vertices (counter-clockwise for 2 inputs) and rays or lines when unbounded, its\n"
      "area or volume (of the part inside --box/--domain when one is given), the network's\n"
      "affine map on it, and how many independent rows it adds to the functional-dimension\n"
      "rank. A point on bent hyperplanes lists the neurons that vanish there and every\n"
      "region whose closure contains it.\n\n"
      "Examples:\n"
      "  pleat inspect data/fold2d.json --at 1/2,-1\n"
      "  pleat inspect data/fold2d.json --pattern 001100/11100 --box -3,3 --json",
      [arguments] { return run_inspect(*arguments); });
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")->required();
  auto* at = add_number_list_option(command, "--at", arguments->at_text, "A point: the region(s) at it");
  auto* pattern = command.add_option("--pattern", arguments->pattern_text, "An activation pattern, e.g. 101/01");
  at->excludes(pattern);
  pattern->excludes(at);
  command.add_flag("--json", arguments->json, "Print the record(s) as JSON (pleat-inspect/1)");
  command.add_flag("--exact-only", arguments->exact_only,
                   "Print exact numbers only (by default a decimal view follows each fraction: 1/3 (\u2248 0.333333))");
  add_domain_options(command, arguments->domain);
  command.callback([at, pattern] {
    if (at->count() == 0 && pattern->count() == 0) throw CLI::RequiredError("--at or --pattern");
  });
}

}  // namespace pleat::cli
