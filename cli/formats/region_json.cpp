#include "cli/formats/region_json.hpp"

#include <limits>
#include <variant>

namespace pleat::cli {
namespace {

Json sparse_multipliers(const RationalVector& multipliers) {
  Json out = Json::object();
  for (std::size_t i = 0; i < multipliers.size(); ++i)
    if (multipliers[i] != 0) out[std::to_string(i)] = format_rational(multipliers[i]);
  return out;
}

Json matrix_to_json(const RationalMatrix& matrix) {
  Json rows = Json::array();
  for (std::size_t r = 0; r < matrix.rows(); ++r) rows.push_back(rational_list_json(matrix.row(r)));
  return rows;
}

Json certificates_to_json(const Region& region) {
  const RegionCertificates& certificates = *region.certificates;
  Json out;
  out["interior_point"] = rational_list_json(region.interior.point);
  Json constraints = Json::array();
  for (std::size_t i = 0; i < certificates.cell.constraints.size(); ++i) {
    const auto& c = certificates.cell.constraints[i];
    Json entry{{"normal", rational_list_json(c.normal)}, {"offset", format_rational(c.offset)}};
    if (certificates.constraint_neuron[i] == no_index) entry["neuron"] = nullptr;
    else entry["neuron"] = certificates.constraint_neuron[i];
    constraints.push_back(std::move(entry));
  }
  out["constraints"] = std::move(constraints);
  Json facet_points = Json::array();
  Json non_facets = Json::array();
  for (const auto& group : certificates.classification.groups) {
    if (const auto* point = std::get_if<lp::FacetPoint>(&group.verdict)) {
      facet_points.push_back({{"constraints", group.constraints}, {"point", rational_list_json(point->point)}});
    } else {
      const auto& proof = std::get<lp::NonFacetCertificate>(group.verdict);
      non_facets.push_back({{"constraints", group.constraints},
                            {"equality_multiplier", format_rational(proof.equality_multiplier)},
                            {"multipliers", sparse_multipliers(proof.multipliers)}});
    }
  }
  out["facet_points"] = std::move(facet_points);
  out["non_facets"] = std::move(non_facets);
  if (certificates.boundedness) {
    if (const auto* bounded = std::get_if<lp::BoundednessCertificate>(&*certificates.boundedness))
      out["bounded_by"] = {{"multipliers", sparse_multipliers(bounded->multipliers)}};
    else
      out["recession_direction"] =
          rational_list_json(std::get<lp::RecessionDirection>(*certificates.boundedness).direction);
  }
  return out;
}

}  // namespace

Json domain_to_json(const Domain& domain) {
  switch (domain.kind) {
    case Domain::Kind::whole_space:
      return "R^" + std::to_string(domain.dim);
    case Domain::Kind::box: {
      Json box = Json::array();
      for (std::size_t i = 0; i < domain.dim; ++i)
        box.push_back({format_rational(domain.lower[i]), format_rational(domain.upper[i])});
      return Json{{"box", box}};
    }
    case Domain::Kind::polytope: {
      Json constraints = Json::array();
      for (const auto& c : domain.constraints)
        constraints.push_back({{"normal", rational_list_json(c.normal)}, {"offset", format_rational(c.offset)}});
      return Json{{"format", "pleat-domain/1"}, {"input_dim", domain.dim}, {"constraints", constraints}};
    }
  }
  return nullptr;
}

Json regions_header(const Network& network, const Domain& domain, const std::string& network_source) {
  return Json{{"format", "pleat-regions/1"},
              {"network", network_source},
              {"domain", domain_to_json(domain)},
              {"parametric_dimension", network.parametric_dimension()}};
}

Json facet_to_json(const Network& network, const RegionFacet& facet, bool with_layers) {
  Json entry;
  entry["neurons"] = facet.neurons;
  if (with_layers) {
    Json layers = Json::array();
    for (std::size_t neuron : facet.neurons) layers.push_back(network.layer_of_neuron(neuron) + 1);
    entry["layers"] = std::move(layers);
  }
  entry["side"] = facet.domain_side ? Json(*facet.domain_side) : Json(nullptr);
  entry["normal"] = rational_list_json(facet.normal);
  entry["offset"] = format_rational(facet.offset);
  entry["neighbor"] = facet.neighbor ? Json(format_pattern(network, *facet.neighbor)) : Json(nullptr);
  if (!facet.other_neighbors.empty()) {
    Json others = Json::array();
    for (const auto& other : facet.other_neighbors) others.push_back(format_pattern(network, other));
    entry["other_neighbors"] = std::move(others);
  }
  return entry;
}

Json region_to_json(const Network& network, const Region& region) {
  Json facets = Json::array();
  for (const auto& facet : region.facets) {
    Json entry = facet_to_json(network, facet, false);
    entry["point"] = rational_list_json(facet.relative_interior.point);
    facets.push_back(std::move(entry));
  }
  Json out;
  out["id"] = region.id;
  out["pattern"] = format_pattern(network, region.pattern);
  out["point"] = rational_list_json(region.interior.point);
  out["bounded"] = region.bounded;
  out["touches_domain_boundary"] = region.touches_domain_boundary;
  out["facets"] = std::move(facets);
  out["affine"] = {{"A", matrix_to_json(region.affine.linear)}, {"c", rational_list_json(region.affine.offset)}};
  if (!region.nonsmooth_neurons.empty()) out["nonsmooth_neurons"] = region.nonsmooth_neurons;
  if (region.certificates) out["certificate"] = certificates_to_json(region);
  return out;
}

Json walk_summary_to_json(const Network& network, const Domain& domain, const WalkSummary& summary,
                          bool with_patterns) {
  Json nonsmooth = Json::array();
  for (const auto& [pattern, neurons] : summary.nonsmooth_regions)
    nonsmooth.push_back({{"pattern", format_pattern(network, pattern)}, {"neurons", neurons}});
  Json out;
  out["format"] = "pleat-walk/1";
  out["domain"] = domain_to_json(domain);
  out["regions"] = summary.regions;
  out["bounded_regions"] = summary.bounded_regions;
  // A stopped walk's count of linear regions bounds nothing (regions not
  // found may join found pieces), so it is not given as a number.
  out["linear_regions"] = summary.complete ? Json(summary.linear_regions) : Json(nullptr);
  out["regions_per_layer"] = summary.regions_per_layer;
  out["nonsmooth_regions"] = std::move(nonsmooth);
  out["facets"] = summary.facets;
  out["complete"] = summary.complete;
  out["stop_reason"] = stop_reason_json(summary.stop_reason);
  out["certified"] = summary.certified;
  out["lp_queries"] = summary.counts.lp_queries;
  out["filter_settled"] = summary.counts.filter_settled;
  out["exact_fallbacks"] = summary.counts.exact_fallbacks;
  out["degenerate_crossings"] = summary.degenerate_crossings;
  out["seconds"] = summary.seconds;
  if (with_patterns) {
    Json patterns = Json::array();
    for (const auto& pattern : summary.patterns) patterns.push_back(format_pattern(network, pattern));
    out["patterns"] = std::move(patterns);
  }
  return out;
}

}  // namespace pleat::cli
