// The exact fallback: cddlib's GMP rational LP (dual simplex). Exact results.
// Every call runs under cddlib's process-wide lock (lp/detail/cdd_handles.hpp);
// the fallback is rare by design.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <vector>

namespace pleat::lp::detail {

// offset + normal . x >= 0, or = 0 when is_equality.
struct ExactRow {
  RationalVector normal;
  Rational offset;
  bool is_equality = false;
};

enum class ExactStatus { optimal, infeasible, unbounded };

struct ExactSolution {
  ExactStatus status = ExactStatus::infeasible;
  Rational value;       // the optimum, when optimal
  RationalVector point; // an optimal x, when optimal
};

// maximise objective . x over x in Q^dim subject to rows (x free otherwise).
// Throws std::runtime_error if cddlib reports an internal error.
ExactSolution maximise_exact(std::size_t dim, const std::vector<ExactRow>& rows,
                             const RationalVector& objective);

}  // namespace pleat::lp::detail
