// FLINT's own exact rational solve (fmpq_mat_solve_fmpz_mat), the
// independent reference the p-adic solve's tests compare against.
// Header-only; include as "tests/support/flint_solution.hpp".
#pragma once

#include "core/detail/flint_matrix.hpp"
#include "core/matrix.hpp"

#include <cstddef>
#include <optional>

namespace pleat::detail {

// FLINT's exact solution X of A X = B (A n x n, B n x m), or nullopt when A
// is singular.
inline std::optional<RationalMatrix> flint_solution(FmpzMatrix& a, FmpzMatrix& b, std::size_t n, std::size_t m) {
  FmpqMatrix solution(n, m);
  if (!fmpq_mat_solve_fmpz_mat(solution.get(), a.get(), b.get())) return std::nullopt;
  RationalMatrix out(n, m);
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t c = 0; c < m; ++c) fmpq_get_mpq(out(i, c).get_mpq_t(), solution.entry(i, c));
  return out;
}

}  // namespace pleat::detail
