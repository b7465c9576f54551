// Judging a claimed functional dimension (someone's sampled estimate) against
// what certify proved, and the explanations certify gives beside its value:
// the extra flat directions grouped by mechanism, and a rank limited by the
// number of regions. Shared by `pleat certify` and the Python module; the
// verdict words and reasons are part of both outputs.
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/verdict.hpp"

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

struct ClaimVerdict {
  Verdict verdict = Verdict::consistent;  // written with claim_word
  std::string reason;                     // one sentence for people
};

// A claimed value against the proved bounds of the network.
[[nodiscard]] ClaimVerdict judge_claim(std::uint64_t value, const FunctionalDimensionResult& result);

// A claimed value against the exact rank of the Jacobian at the claim's own
// points, or against proved bounds on it when the run stopped before the rank
// was exact (lower < upper).
[[nodiscard]] ClaimVerdict judge_claim_at_points(std::uint64_t value, std::size_t lower, std::size_t upper);
[[nodiscard]] inline ClaimVerdict judge_claim_at_points(std::uint64_t value, std::size_t batch_rank) {
  return judge_claim_at_points(value, batch_rank, batch_rank);
}

// Extra kernel directions grouped by (mechanism, neurons), in first-seen order.
struct MechanismGroup {
  Mechanism mechanism = Mechanism::none;
  std::vector<std::size_t> neurons;
  std::size_t directions = 0;
};
std::vector<MechanismGroup> mechanism_groups(const FunctionalDimensionResult& result);

// When every smooth region's rows together are fewer than the scaling bound,
// the rank cannot reach it whatever the parameters: a cause of its own.
// Only for a complete walk; nullopt when the rows suffice.
struct RegionLimit {
  std::size_t smooth_regions = 0;
  std::size_t rows_per_region = 0;
};
std::optional<RegionLimit> region_limit(const Network& network, const FunctionalDimensionResult& result);

// The activation pattern of a point's region, for the batch functional
// dimension. A point outside the domain, on its boundary, on a bent
// hyperplane or in a region without smooth points is an input_error
// starting with place (e.g. "pts.csv:4 (point 3)"). With an evaluator of
// the network, a point on no bent hyperplane costs one evaluation in
// integers (the same pattern). Exact.
ActivationPattern batch_point_pattern(const Network& network, const Domain& domain, const RationalVector& point,
                                     const std::string& place, const IntegerPatternEvaluator* evaluator = nullptr);

}  // namespace pleat
