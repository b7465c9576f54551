// The exact fallback: cddlib's GMP rational LP (dual simplex). Exact results.
// cddlib keeps global state (its number constants, set once), so every call
// runs under one process-wide mutex; the fallback is rare by design.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <mutex>
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

// The process-wide lock around every cddlib call, and cddlib's one-time
// constant set-up (call it with the lock held). For other cddlib users
// (enumerate/region_geometry.cpp's exact vertex enumeration).
std::mutex& cdd_mutex();
void ensure_cdd_constants();

// maximise objective . x over x in Q^dim subject to rows (x free otherwise).
// Throws std::runtime_error if cddlib reports an internal error.
ExactSolution maximise_exact(std::size_t dim, const std::vector<ExactRow>& rows,
                             const RationalVector& objective);

}  // namespace pleat::lp::detail
