// The batch functional dimension at given points (certify --points, the
// Python module's certify(points=...)): the rank over Q of the parameter
// Jacobians stacked at the points, and the rank of the coefficient-block rows
// of the regions they lie in. A stop (time limit, interrupt) leaves proved
// bounds on both, never a value that was not proved.
//
// Why few rows suffice: in a region R the Jacobian is linear in x~ = (x, 1):
// J(x)[o] = B_R[o, offset] + sum_t x_t B_R[o, slope t] (core/jacobian.hpp).
// So the rows at all of R's points span what the rows at any of them whose
// x~ span the same space span: at most n0 + 1 points per region, chosen
// exactly (an exact elimination in n0 + 1 coordinates, in file order). Only
// the chosen points' rows are ranked.
// Lower bounds: the rank modulo a prime of the chosen rows (ModularRowBasis;
// rows from the blocks modulo p), a nonsingular minor (core/rank.hpp).
// Upper bounds: the number of rows that could still be independent and the
// scaling bound (every Jacobian and block row is orthogonal to the scaling
// directions); the batch's also the regions' (the Jacobians at a region's
// points lie in the span of its blocks). Equality is proved exactly: the
// exact kernel of the rows kept modulo p annihilates every other chosen row
// (so they lie in the kept rows' span), or rank_exact when it does not (an
// unlucky prime).
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "core/stop.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

// Proved bounds on a rank over Q; equal when the rank is known exactly.
struct RankBounds {
  std::size_t lower = 0;
  std::size_t upper = 0;
  bool is_exact() const { return lower == upper; }
  std::optional<std::size_t> value() const { return is_exact() ? std::optional<std::size_t>(lower) : std::nullopt; }
};

struct BatchDimension {
  std::size_t points = 0;          // points given
  std::size_t points_checked = 0;  // points whose region was decided: all of them unless stopped while deciding
  std::size_t regions_touched = 0; // distinct regions of the points checked
  RankBounds batch;                // rank of the Jacobians stacked at every point given
  RankBounds regions;              // rank of the coefficient-block rows of every given point's region
  StopReason stop_reason = StopReason::none;  // none: both ranks exact
};

// Progress: phase "points" (done of total points decided), "pivots" (before
// each proof: done of total columns of the kept rows' elimination modulo p,
// which chooses the columns the exact solves use), "regions" or "batch" (the
// exact proof of that rank: done of total rows checked).
using BatchProgress = std::function<void(const char* phase, std::size_t done, std::size_t total)>;

// Both ranks, stopping when `stop` asks (polled between points and rows,
// between the elimination's column blocks, and inside exact evaluation and
// the exact solves). A point outside the domain, on its boundary, on a bent
// hyperplane or in a region without smooth points is an input_error starting
// with place(i), as batch_point_patterns (enumerate/claim.hpp) says; a
// stopped run has checked only the first points_checked points. threads:
// for certify's exact check of the regions' blocks (the result is the same
// for any number). Exact.
BatchDimension batch_dimension(const Network& network, const Domain& domain, const std::vector<RationalVector>& points,
                               const std::function<std::string(std::size_t)>& place, const StopRequest& stop,
                               unsigned threads = 1, const BatchProgress& on_progress = {});

// certify_functional_dimension's result when it never ran because the
// command stopped before it (in the batch stage): bounds 0 and the scaling
// bound, the stop reason, nothing walked.
FunctionalDimensionResult certify_result_not_started(const Network& network, StopReason reason);

}  // namespace pleat
