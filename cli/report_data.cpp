// The data embedded in `pleat report` pages (cli/report_data.hpp).
#include "cli/report_data.hpp"

#include "cli/formats/region_json.hpp"
#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "core/stop.hpp"
#include "enumerate/certified_by.hpp"
#include "enumerate/claim.hpp"
#include "enumerate/region_geometry.hpp"
#include "enumerate/region_record.hpp"

#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <limits>
#include <map>
#include <set>

namespace pleat::cli {
namespace {

Json decimal_list_json(const RationalVector& values) {
  Json out = Json::array();
  for (const auto& v : values) out.push_back(to_double(v));
  return out;
}

// A drawing coordinate: the double rounded to 9 significant digits (pixels
// need far fewer; the exact values are shown beside them where it matters).
double drawn(const Rational& value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.9g", to_double(value));
  return std::strtod(text, nullptr);
}

Json drawn_point(const RationalVector& p) { return Json::array({drawn(p[0]), drawn(p[1])}); }

Json affine_json(const AffineMap& map) {
  Json a = Json::array(), a_double = Json::array();
  for (std::size_t r = 0; r < map.linear.rows(); ++r) {
    a.push_back(rational_list_json(map.linear.row(r)));
    a_double.push_back(decimal_list_json(map.linear.row(r)));
  }
  return Json{{"A", a}, {"c", rational_list_json(map.offset)}, {"A_double", a_double},
              {"c_double", decimal_list_json(map.offset)}};
}

// The rows each region adds to the rank when taken first, exactly: its
// coefficient blocks' rank modulo a prime is a lower bound of the rank over
// Q (a nonsingular minor mod p is nonsingular over Q), so when it reaches the
// block's row count it is the rank; otherwise the exact rank decides
// (rank_contribution). Far faster than exact ranks of every block, whose
// rational entries are costly for wide networks.
std::vector<std::size_t> rows_when_taken_first(const Network& network, const std::vector<const Region*>& regions) {
  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  std::vector<std::size_t> rows(regions.size(), 0);
  for (std::size_t i = 0; i < regions.size(); ++i) {
    poll_stop();
    if (!regions[i]->nonsmooth_neurons.empty()) {
      rows[i] = rank_contribution(network, regions[i]->pattern);
      continue;
    }
    const ModularMatrix block = coefficient_blocks_mod(modular, regions[i]->pattern);
    ModularRowBasis basis(modular.prime, network.parametric_dimension());
    for (std::size_t r = 0; r < block.rows(); ++r) rows[i] += basis.add_row(block.row(r)) ? 1 : 0;
    if (rows[i] < block.rows()) rows[i] = rank_contribution(network, regions[i]->pattern);
  }
  return rows;
}

// Whether the rows each region adds in walk order are worth counting: one
// growing basis mod p costs about rows x D x rank, minutes for a few
// thousand regions of a network with thousands of parameters. Above the
// budget the page leaves that number out (rows_first is always there).
bool is_new_rows_affordable(const Network& network, std::size_t regions) {
  const double rows = static_cast<double>(regions) * static_cast<double>(network.output_dim() * (network.input_dim + 1));
  const double columns = static_cast<double>(network.parametric_dimension());
  return rows * columns * std::min(rows, columns) <= 2e10;
}

std::vector<std::optional<std::size_t>> new_rows_if_affordable(const Network& network,
                                                               const std::vector<const Region*>& regions) {
  std::vector<std::optional<std::size_t>> out(regions.size());
  if (!is_new_rows_affordable(network, regions.size())) return out;
  const std::vector<std::size_t> rows = new_rows_in_walk_order(network, regions);
  for (std::size_t i = 0; i < rows.size(); ++i) out[i] = rows[i];
  return out;
}

Json optional_count(const std::optional<std::size_t>& value) { return value ? Json(*value) : Json(nullptr); }

// The fields every region carries when the page shows its details.
void add_region_details(const Network& network, const Region& region, Json& out,
                        std::size_t rows_first) {
  out["pattern"] = format_pattern(network, region.pattern);
  out["point"] = rational_list_json(region.interior.point);
  out["point_double"] = decimal_list_json(region.interior.point);
  out["bounded"] = region.bounded;
  out["map"] = affine_json(region.affine);
  out["rows_first"] = rows_first;
  out["nonsmooth_neurons"] = region.nonsmooth_neurons;
}

// The bent-hyperplane pieces of a planar complex: each edge between two
// regions lies on the zero sets of the neurons of the facets holding it.
// Consecutive collinear edges of the same neurons are joined.
Json bent_hyperplane_pieces(const Network& network, const lp::PlanarComplex& complex,
                            const std::vector<const Region*>& regions) {
  struct Piece {
    RationalVector from, to;
    std::vector<std::size_t> neurons;
  };
  std::vector<Piece> pieces;
  for (const auto& edge : complex.edges) {
    std::set<std::size_t> neurons;
    for (std::size_t index : edge.polygons)
      for (const auto& facet : regions[index]->facets) {
        if (facet.neurons.empty()) continue;
        auto value = [&](const RationalVector& p) -> Rational { return facet.normal[0] * p[0] + facet.normal[1] * p[1] + facet.offset; };
        if (value(edge.from) == 0 && value(edge.to) == 0) neurons.insert(facet.neurons.begin(), facet.neurons.end());
      }
    if (neurons.empty()) continue;  // the view's border or a domain side
    std::vector<std::size_t> list(neurons.begin(), neurons.end());
    if (!pieces.empty() && pieces.back().neurons == list && pieces.back().to == edge.from) {
      const auto& a = pieces.back().from;
      const auto& b = pieces.back().to;
      if ((b[0] - a[0]) * (edge.to[1] - a[1]) == (b[1] - a[1]) * (edge.to[0] - a[0])) {
        pieces.back().to = edge.to;
        continue;
      }
    }
    pieces.push_back(Piece{edge.from, edge.to, std::move(list)});
  }
  Json out = Json::array();
  for (const auto& piece : pieces)
    out.push_back({{"layer", network.layer_of_neuron(piece.neurons.front())},
                   {"neurons", piece.neurons},
                   {"from", drawn_point(piece.from)},
                   {"to", drawn_point(piece.to)}});
  return out;
}

Json view_json(const View& view) {
  return Json{{"lower", rational_list_json(view.lower)}, {"upper", rational_list_json(view.upper)},
              {"lower_double", decimal_list_json(view.lower)}, {"upper_double", decimal_list_json(view.upper)}};
}

}  // namespace

Json report_network_json(const Network& network, const std::string& source) {
  Json architecture = Json::array({network.input_dim});
  for (const auto& layer : network.layers) architecture.push_back(layer.width());
  Json layers = Json::array();
  for (std::size_t k = 0; k < network.relu_layer_count(); ++k) {
    const LayerLineStyle style = layer_line_style(k);
    layers.push_back({{"first_neuron", network.first_neuron_of_layer(k)},
                      {"neurons", network.layers[k].width()},
                      {"line_width", style.width},
                      {"dashes", style.dashes}});
  }
  return Json{{"source", source},
              {"name", network.name},
              {"architecture", architecture},
              {"parametric_dimension", network.parametric_dimension()},
              {"output_relu", network.has_output_relu()},
              {"layers", layers}};
}

Json report_walk_json(const Network& network, const Domain& domain, const WalkSummary& summary) {
  Json out = walk_summary_to_json(network, domain, summary, false);
  out["domain_text"] = domain.describe();
  return out;
}

Json report_certify_json(const Network& network, const FunctionalDimensionResult& result) {
  Json groups = Json::array();
  for (const auto& group : mechanism_groups(result))
    groups.push_back({{"mechanism", group.mechanism == Mechanism::none ? Json(nullptr)
                                                                       : Json(std::string(mechanism_word(group.mechanism)))},
                      {"neurons", group.neurons},
                      {"directions", group.directions}});
  Json out;
  out["certified"] = result.certified;
  out["functional_dimension"] = result.functional_dimension ? Json(*result.functional_dimension) : Json(nullptr);
  out["lower_bound"] = result.lower_bound;
  out["upper_bound"] = result.upper_bound;
  out["scaling_bound"] = result.scaling_bound;
  out["parametric_dimension"] = result.parametric_dimension;
  out["hidden_neurons"] = network.hidden_neuron_count();
  const std::optional<std::string_view> certified_by = certified_by_word(result);
  out["certified_by"] = certified_by ? Json(std::string(*certified_by)) : Json(nullptr);
  out["points_drawn"] = result.points_drawn;
  out["witness_points"] = result.witness_points.size();
  out["regions_walked"] = result.regions_walked;
  out["regions_contributing"] = result.regions_contributing;
  out["walk_complete"] = result.walk_complete;
  out["stop_reason"] = stop_reason_json(result.stop_reason);
  out["extra_directions"] = result.extra_kernel.size();
  out["extra_by_mechanism"] = std::move(groups);
  if (const auto limit = region_limit(network, result))
    out["too_few_regions"] = {{"regions", limit->smooth_regions}, {"rows_per_region", limit->rows_per_region}};
  out["seconds"] = result.seconds;
  return out;
}

Json plane_map_json(const Network& network, const std::vector<Region>& regions, const View& view,
                    bool with_domain_sides, const Network& rows_network, std::size_t detail_limit) {
  std::vector<lp::Polygon> polygons;
  std::vector<const Region*> shown;
  for (const auto& region : regions) {
    poll_stop();
    lp::Polygon polygon = lp::clip_rectangle(view.lower, view.upper, closed_cell(region, with_domain_sides).constraints);
    if (polygon.vertices.size() < 3) continue;
    polygons.push_back(std::move(polygon));
    shown.push_back(&region);
  }
  const lp::PlanarComplex complex = lp::planar_complex(polygons);
  std::vector<std::set<std::size_t>> adjacent(polygons.size());
  for (const auto& edge : complex.edges)
    if (edge.polygons.size() == 2) {
      adjacent[edge.polygons[0]].insert(edge.polygons[1]);
      adjacent[edge.polygons[1]].insert(edge.polygons[0]);
    }
  const std::vector<std::size_t> colour = smallest_last_colouring(adjacent);
  const bool has_details = shown.size() <= detail_limit;
  const std::vector<std::optional<std::size_t>> new_rows =
      has_details ? new_rows_if_affordable(rows_network, shown) : std::vector<std::optional<std::size_t>>(shown.size());
  const std::vector<std::size_t> first_rows = has_details ? rows_when_taken_first(rows_network, shown)
                                                          : std::vector<std::size_t>(shown.size(), 0);
  std::vector<std::string> colours = categorical_palette();
  const std::size_t used = colour.empty() ? 0 : *std::max_element(colour.begin(), colour.end()) + 1;
  for (std::size_t extra = colours.size(); extra < used; ++extra)
    colours.push_back(sequential_colour(static_cast<double>(extra % 7) / 6.0));

  Json items = Json::array();
  for (std::size_t i = 0; i < polygons.size(); ++i) {
    poll_stop();
    Json polygon = Json::array();
    for (const auto& p : polygons[i].vertices) polygon.push_back(drawn_point(p));
    Json item{{"id", shown[i]->id}, {"colour", colour[i]}, {"polygon", std::move(polygon)}};
    if (has_details) {
      add_region_details(network, *shown[i], item, first_rows[i]);
      const Rational area = lp::polygon_area(polygons[i]);
      item["area"] = format_rational(area);
      item["area_double"] = to_double(area);
      item["rows_new"] = optional_count(new_rows[i]);
    }
    items.push_back(std::move(item));
  }
  Json out;
  out["view"] = view_json(view);
  out["colours"] = colours;
  out["regions_shown"] = shown.size();
  out["edges"] = complex.edges.size();
  out["vertices"] = complex.vertices.size();
  out["has_details"] = has_details;
  out["regions"] = std::move(items);
  out["lines"] = bent_hyperplane_pieces(network, complex, shown);
  return out;
}

Json line_graph_json(const Network& network, const std::vector<Region>& regions, const View& view,
                     std::size_t detail_limit) {
  const std::vector<LinePiece> pieces = line_pieces(regions, view);
  const bool has_details = pieces.size() <= detail_limit;
  std::vector<const Region*> shown;
  for (const auto& piece : pieces) shown.push_back(piece.region);
  const std::vector<std::optional<std::size_t>> new_rows =
      has_details ? new_rows_if_affordable(network, shown) : std::vector<std::optional<std::size_t>>(shown.size());
  const std::vector<std::size_t> first_rows = has_details ? rows_when_taken_first(network, shown)
                                                          : std::vector<std::size_t>(shown.size(), 0);
  Json items = Json::array();
  for (std::size_t i = 0; i < pieces.size(); ++i) {
    const LinePiece& piece = pieces[i];
    const AffineMap& map = piece.region->affine;
    const Rational left = map.linear(0, 0) * piece.low + map.offset[0];
    const Rational right = map.linear(0, 0) * piece.high + map.offset[0];
    Json item{{"id", piece.region->id},
              {"colour", i % 2},
              {"from", {drawn(piece.low), drawn(left)}},
              {"to", {drawn(piece.high), drawn(right)}}};
    if (has_details) {
      add_region_details(network, *piece.region, item, first_rows[i]);
      item["x_low"] = format_rational(piece.low);
      item["x_high"] = format_rational(piece.high);
      item["value_low"] = format_rational(left);
      item["value_high"] = format_rational(right);
      item["length"] = format_rational(piece.high - piece.low);
      item["length_double"] = to_double(piece.high - piece.low);
      item["rows_new"] = optional_count(new_rows[i]);
    }
    items.push_back(std::move(item));
  }
  Json out;
  out["view"] = view_json(view);
  out["colours"] = Json::array({categorical_palette()[0], categorical_palette()[1]});
  out["regions_shown"] = pieces.size();
  out["breakpoints"] = pieces.empty() ? 0 : pieces.size() - 1;
  out["has_details"] = has_details;
  out["regions"] = std::move(items);
  return out;
}

Json survey_report_json(const SurveyRecord& record, const SurveySummary& summary) {
  Json out;
  out["summary"] = summary_to_json(record, summary);
  Json by_value = Json::object();
  for (const auto& [value, count] : summary.histogram) by_value[std::to_string(value)] = Json::array();
  std::vector<SurveySample> samples = record.samples;
  std::sort(samples.begin(), samples.end(), [](const SurveySample& a, const SurveySample& b) { return a.sample < b.sample; });
  for (const SurveySample& s : samples)
    if (s.certified && s.functional_dimension) by_value[std::to_string(*s.functional_dimension)].push_back(s.sample);
  out["samples_by_value"] = std::move(by_value);
  out["mean_double"] = summary.mean ? Json(to_double(*summary.mean)) : Json(nullptr);
  out["variance_double"] = summary.variance ? Json(to_double(*summary.variance)) : Json(nullptr);
  out["at_scaling_bound_double"] =
      summary.at_scaling_bound_fraction ? Json(to_double(*summary.at_scaling_bound_fraction)) : Json(nullptr);
  out["bar_colour"] = bar_colour();
  return out;
}

}  // namespace pleat::cli
