#include "cli/formats/batch_json.hpp"

#include "cli/formats/region_json.hpp"

#include <optional>

namespace pleat::cli {
namespace {

Json optional_json(const std::optional<std::size_t>& value) { return value ? Json(*value) : Json(nullptr); }

}  // namespace

Json batch_to_json(const Network& network, const Domain& domain, const BatchDimension& batch,
                   const FunctionalDimensionResult& result) {
  return Json{{"format", "pleat-batch/1"},
              {"points", batch.points},
              {"parametric_dimension", network.parametric_dimension()},
              {"batch_functional_dimension", optional_json(batch.batch.value())},
              {"batch_lower_bound", batch.batch.lower},
              {"batch_upper_bound", batch.batch.upper},
              {"domain", domain_to_json(domain)},
              {"points_checked", batch.points_checked},
              {"regions_touched", batch.regions_touched},
              {"regions_rank", optional_json(batch.regions.value())},
              {"regions_rank_lower_bound", batch.regions.lower},
              {"regions_rank_upper_bound", batch.regions.upper},
              {"regions_total", result.walk_complete ? Json(result.walk.regions) : Json(nullptr)},
              {"regions_walked", result.regions_walked},
              {"scaling_bound", result.scaling_bound},
              {"functional_dimension", optional_json(result.functional_dimension)},
              {"lower_bound", result.lower_bound},
              {"upper_bound", result.upper_bound},
              {"certified", result.certified},
              {"stop_reason", stop_reason_json(result.stop_reason)}};
}

}  // namespace pleat::cli
