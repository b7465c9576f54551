// Small exact linear algebra over Q for verifying LP proposals: Gauss-Jordan
// elimination on RationalMatrix. Every result is exact.
#pragma once

#include "core/matrix.hpp"
#include "core/rational.hpp"

#include <cstddef>
#include <optional>
#include <vector>

namespace pleat::lp::detail {

// A solution of m z = rhs, the basic one (free unknowns set to 0), or nullopt
// when the system is inconsistent. Precondition: rhs.size() == m.rows().
std::optional<RationalVector> solve_exact(RationalMatrix m, RationalVector rhs);

// The unique solution of m z = rhs, or nullopt when there is none or m has a
// nontrivial null space.
std::optional<RationalVector> solve_unique(RationalMatrix m, RationalVector rhs);

// rank(m), exactly.
std::size_t exact_rank(RationalMatrix m);

// A nonzero vector z with m z = 0, or nullopt when m has full column rank.
std::optional<RationalVector> null_vector(RationalMatrix m);

}  // namespace pleat::lp::detail
