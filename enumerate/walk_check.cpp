#include "enumerate/walk_check.hpp"

#include "enumerate/walker.hpp"
#include "lp/checker.hpp"

#include <map>
#include <variant>

namespace pleat {
namespace {

struct Failure {
  std::string message;
};

[[noreturn]] void fail(const SavedRegion& region, const std::string& what) {
  throw Failure{"line " + std::to_string(region.line) + ": " + what};
}

Rational evaluate(const lp::Constraint& c, const RationalVector& x) {
  Rational value = c.offset;
  for (std::size_t i = 0; i < x.size(); ++i) value += c.normal[i] * x[i];
  return value;
}

bool is_positive_multiple(const RationalVector& normal, const Rational& offset, const lp::Constraint& c) {
  std::size_t pivot = 0;
  while (pivot < normal.size() && normal[pivot] == 0) ++pivot;
  if (pivot == normal.size() || c.normal[pivot] == 0) return false;
  const Rational factor = normal[pivot] / c.normal[pivot];
  if (factor <= 0) return false;
  for (std::size_t i = 0; i < normal.size(); ++i)
    if (normal[i] != factor * c.normal[i]) return false;
  return offset == factor * c.offset;
}

void check_region(const Network& network, const Domain& domain, const SavedRegion& region,
                  const std::map<ActivationPattern, const SavedRegion*>& by_pattern) {
  const auto cell = build_pattern_cell(network, domain, region.pattern);
  if (!cell) fail(region, "the pattern is inconsistent with the network's own maps");
  if (!lp::check_interior_point(cell->cell, lp::InteriorPoint{region.point}))
    fail(region, "the point is not strictly inside the region");
  if (!(cell->maps.output.linear == region.affine_linear) || cell->maps.output.offset != region.affine_offset)
    fail(region, "the affine map differs from the network's map on the pattern");
  if (!region.has_certificate) fail(region, "no certificate (write the walk with --certificates)");
  if (!lp::check_facet_classification(cell->cell, region.classification))
    fail(region, "the classification of the region's constraints does not check");

  // The listed facets are exactly the facet groups, in order.
  std::size_t facet_index = 0;
  for (const auto& group : region.classification.groups) {
    if (!group.is_facet()) continue;
    if (facet_index >= region.facets.size()) fail(region, "a facet certificate has no facet entry");
    const SavedFacet& facet = region.facets[facet_index++];
    const lp::Constraint& representative = cell->cell.constraints[group.constraints.front()];
    if (!is_positive_multiple(facet.normal, facet.offset, representative))
      fail(region, "facet " + std::to_string(facet_index - 1) + " is not on its constraint's hyperplane");
    if (facet.point != std::get<lp::FacetPoint>(group.verdict).point)
      fail(region, "facet " + std::to_string(facet_index - 1) + " point differs from its certificate");
    bool on_domain = false;
    for (std::size_t c : group.constraints) on_domain = on_domain || cell->constraint_neuron[c] == SIZE_MAX;
    if (on_domain) {
      if (facet.neighbor) fail(region, "a facet on the domain boundary has a neighbour");
      continue;
    }
    if (!facet.neighbor) fail(region, "interior facet " + std::to_string(facet_index - 1) + " has no neighbour");
    std::vector<ActivationPattern> across{*facet.neighbor};
    across.insert(across.end(), facet.other_neighbors.begin(), facet.other_neighbors.end());
    for (const auto& neighbor : across) {
      auto found = by_pattern.find(neighbor);
      if (found == by_pattern.end())
        fail(region, "neighbour " + format_pattern(network, neighbor) + " is missing: the walk is incomplete");
      const auto neighbor_cell = build_pattern_cell(network, domain, neighbor);
      if (!neighbor_cell) fail(region, "neighbour " + format_pattern(network, neighbor) + " is inconsistent");
      for (const auto& c : neighbor_cell->cell.constraints)
        if (evaluate(c, facet.point) < 0)
          fail(region, "facet point " + std::to_string(facet_index - 1) + " is outside the closure of neighbour " +
                           format_pattern(network, neighbor));
    }
  }
  if (facet_index != region.facets.size()) fail(region, "more facets listed than certified");

  if (region.boundedness) {
    lp::Polyhedron neurons_only{cell->cell.dim, {}};
    for (std::size_t i = 0; i < cell->cell.constraints.size(); ++i)
      if (cell->constraint_neuron[i] != SIZE_MAX) neurons_only.constraints.push_back(cell->cell.constraints[i]);
    bool checks = false;
    if (const auto* bounded = std::get_if<lp::BoundednessCertificate>(&*region.boundedness)) {
      // Neuron constraints come first in the cell, so the multipliers index
      // both; any weight on a domain side would not prove boundedness in R^n0.
      lp::BoundednessCertificate on_neurons = *bounded;
      for (std::size_t i = neurons_only.constraints.size(); i < on_neurons.multipliers.size(); ++i)
        if (on_neurons.multipliers[i] != 0) fail(region, "the boundedness certificate uses a domain side");
      on_neurons.multipliers.resize(neurons_only.constraints.size());
      checks = region.bounded && lp::check_boundedness(neurons_only, on_neurons);
    }
    else
      checks = !region.bounded &&
               lp::check_recession_direction(neurons_only, std::get<lp::RecessionDirection>(*region.boundedness));
    if (!checks) fail(region, "the boundedness certificate does not check");
  } else {
    fail(region, "no boundedness certificate");
  }
}

}  // namespace

WalkCheck check_saved_walk(const Network& network, const Domain& domain, const std::vector<SavedRegion>& regions) {
  WalkCheck result;
  result.regions = regions.size();
  try {
    std::map<ActivationPattern, const SavedRegion*> by_pattern;
    for (const auto& region : regions)
      if (!by_pattern.emplace(region.pattern, &region).second)
        fail(region, "pattern " + format_pattern(network, region.pattern) + " appears twice");
    if (regions.empty()) throw Failure{"no regions"};
    for (const auto& region : regions) check_region(network, domain, region, by_pattern);
    result.is_verified = true;
  } catch (const Failure& failure) {
    result.failure = failure.message;
  }
  return result;
}

}  // namespace pleat
