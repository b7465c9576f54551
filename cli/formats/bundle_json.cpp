#include "cli/formats/bundle_json.hpp"

#include "cli/formats/region_json.hpp"
#include "core/network_io.hpp"

namespace pleat::cli {
namespace {

Json region_with_empty_candidates(const Network& network, const BundleRegion& kept) {
  Json line = region_to_json(network, kept.region);
  for (std::size_t f = 0; f < kept.empty_across.size(); ++f) {
    if (kept.empty_across[f].empty()) continue;
    Json empty = Json::array();
    for (const auto& candidate : kept.empty_across[f])
      empty.push_back({{"pattern", format_pattern(network, candidate.pattern)},
                       {"multipliers", rational_list_json(candidate.certificate.multipliers)}});
    line["facets"][f]["empty_across"] = std::move(empty);
  }
  return line;
}

Json minor_json(const ProofBundle& bundle) {
  Json rows = Json::array();
  for (const auto& row : bundle.minor_rows)
    rows.push_back({{"region", row.region}, {"block_row", row.block_row}, {"values", rational_list_json(row.values)}});
  return Json{{"rows", std::move(rows)}, {"columns", bundle.minor_columns}};
}

Json upper_bound_json(const FunctionalDimensionResult& result, bool has_every_region) {
  if (!has_every_region) return Json{{"method", "scaling"}};
  Json kernel = Json::array();
  for (std::size_t r = 0; r < result.kernel.rows(); ++r) kernel.push_back(rational_list_json(result.kernel.row(r)));
  return Json{{"method", "kernel"}, {"kernel", std::move(kernel)}};
}

}  // namespace

Json bundle_to_json(const Network& network, const Domain& domain, const FunctionalDimensionResult& result,
                    const ProofBundle& bundle) {
  Json regions = Json::array();
  for (const auto& kept : bundle.regions) regions.push_back(region_with_empty_candidates(network, kept));
  Json out;
  out["format"] = "pleat-bundle/1";
  out["network"] = Json::parse(write_network(network));
  out["domain"] = domain_to_json(domain);
  out["parametric_dimension"] = network.parametric_dimension();
  out["functional_dimension"] = *result.functional_dimension;
  out["every_region"] = bundle.has_every_region;
  out["lower_bound"] = minor_json(bundle);
  out["upper_bound"] = upper_bound_json(result, bundle.has_every_region);
  out["regions"] = std::move(regions);
  return out;
}

}  // namespace pleat::cli
