#include "enumerate/proof_bundle.hpp"

#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "enumerate/pattern_cell.hpp"
#include "lp/checker.hpp"
#include "lp/oracle.hpp"

#include <algorithm>
#include <variant>

namespace pleat {
namespace {

bool is_nonsmooth(const Region& region) { return !region.nonsmooth_neurons.empty(); }

// The far-side candidates of one interior facet that the region list leaves
// out but whose closure holds the facet point: each needs a proof that its
// tangent cone at the point is empty (the walker kept exactly the candidates
// with interior there, so the oracle finds one).
std::vector<EmptyAcross> empty_candidates(const Network& network, const Domain& domain, const Region& region,
                                          const RegionFacet& facet, lp::Oracle& oracle) {
  std::vector<EmptyAcross> out;
  if (!facet.neighbor) return out;
  RationalVector direction = facet.normal;
  for (auto& v : direction) v = -v;
  const RationalVector& point = facet.relative_interior.point;
  for (const auto& candidate : patterns_across(network, region.pattern, point, direction, facet.normal)) {
    if (candidate == *facet.neighbor ||
        std::find(facet.other_neighbors.begin(), facet.other_neighbors.end(), candidate) != facet.other_neighbors.end())
      continue;
    const auto cell = build_pattern_cell(network, domain, candidate);
    if (!cell) continue;
    lp::Polyhedron cone{cell->cell.dim, {}};
    bool is_in_closure = true;
    for (const auto& c : cell->cell.constraints) {
      const Rational value = lp::slack(c, point);
      if (value < 0) is_in_closure = false;
      if (value == 0) cone.constraints.push_back(lp::Constraint{c.normal, Rational(0)});
    }
    if (!is_in_closure) continue;
    const lp::CellVerdict verdict = oracle.decide_open_cell(cone);
    const auto* empty = std::get_if<lp::EmptinessCertificate>(&verdict);
    if (cone.constraints.empty() || !empty || !lp::check_emptiness(cone, *empty))
      throw usage_error("proof bundle: a crossing candidate the walk left out has interior next to the facet point");
    out.push_back({candidate, *empty});
  }
  return out;
}

}  // namespace

std::optional<ProofBundle> gather_proof_bundle(const Network& network, const Domain& domain, std::size_t value,
                                               bool with_every_region, WalkOptions walk, StopReason* stopped_by) {
  ProofBundle bundle;
  bundle.has_every_region = with_every_region;
  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  ModularRowBasis basis(modular.prime, network.parametric_dimension());
  lp::Oracle oracle;
  walk.keep_certificates = with_every_region;
  walk.on_region = [&](const Region& region) {
    bool is_contributing = false;
    if (!is_nonsmooth(region) && basis.rank() < value) {
      const ModularMatrix rows = coefficient_blocks_mod(modular, region.pattern);
      std::optional<RationalMatrix> exact;
      for (std::size_t r = 0; r < rows.rows() && basis.rank() < value; ++r) {
        if (!basis.add_row(rows.row(r))) continue;
        if (!exact) exact = coefficient_blocks(network, region.pattern);
        bundle.minor_rows.push_back({bundle.regions.size(), r, exact->row(r)});
        is_contributing = true;
      }
    }
    if (with_every_region || is_contributing) {
      BundleRegion kept{region, {}};
      if (with_every_region)
        for (const auto& facet : region.facets)
          kept.empty_across.push_back(empty_candidates(network, domain, region, facet, oracle));
      bundle.regions.push_back(std::move(kept));
    }
    return with_every_region || basis.rank() < value;
  };
  const WalkSummary summary = walk_regions(network, domain, walk);
  const bool is_stopped_early = summary.stop_reason == StopReason::requested && !with_every_region;
  if (stopped_by) *stopped_by = is_stopped_early ? StopReason::none : summary.stop_reason;
  if (!summary.complete && !is_stopped_early) return std::nullopt;
  if (with_every_region && !summary.certified) return std::nullopt;
  if (basis.rank() != value) return std::nullopt;
  bundle.minor_columns = basis.pivot_columns();
  return bundle;
}

}  // namespace pleat
