// An exact proof that integer rows lie in the row space of other integer
// rows, for the batch rank (enumerate/batch_dimension.cpp): there the rank
// r of a stack is first read modulo a prime (a proved lower bound, with the
// rows that reached it "kept"), and every other row in the span of the kept
// ones proves the upper bound. Internal to enumerate/ (not installed).
#pragma once

#include "core/detail/flint_matrix.hpp"
#include "core/matrix.hpp"
#include "core/rational.hpp"
#include "enumerate/detail/padic_solve.hpp"

#include <gmp.h>
// FLINT after GMP so that its mpz conversion functions are declared.
#include <flint/fmpz_mat.h>

#include <cstddef>
#include <functional>
#include <optional>
#include <vector>

namespace pleat::detail {

using IntegerRow = std::vector<Integer>;

// Whether every row of `others` is a rational combination of the rows of
// `kept`. Preconditions: all rows have the same length; `pivots` are
// kept.size() distinct columns on which the kept rows form a matrix K_P that
// is nonsingular (e.g. modulo a prime, hence over Q). Solves Y K_P = R_P for
// the others' coefficients Y (solve_square_exactly), `chunk` rows at a
// time, polling the current StopScope (Stopped propagates), then checks
// Y K = R on every column in integer arithmetic.
// True only when that exact check holds for every row: a proof. False when
// a row is not in the span (or the solve fails), or when `on_chunk(done,
// total)`, which when given hears before each chunk how many of the others
// are proved, returns false (the caller gives up; a stop it requests is
// honoured before the chunk).
using SpanProgress = std::function<bool(std::size_t done, std::size_t total)>;
bool rows_in_span(const std::vector<IntegerRow>& kept, const std::vector<std::size_t>& pivots,
                  const std::vector<IntegerRow>& others, const SpanProgress& on_chunk = {},
                  std::size_t chunk = 32);

// rows_in_span for one kept/pivots pair in steps: K_P^T's system is solved
// by one SquareSolver (its LU kept between the probe and every chunk; with
// `kernel`, a solver of K_P's system (A_ij = kept[i][pivots[j]]), its LU
// shared). kept, pivots and kernel must outlive it.
class SpanProof {
 public:
  SpanProof(const std::vector<IntegerRow>& kept, const std::vector<std::size_t>& pivots,
            SquareSolver* kernel = nullptr);
  // The p-adic digits that solving one row's coefficients took, or nullopt
  // when it took more than most_digits (the race in batch_dimension.cpp:
  // a digit costs about the same for every column of K_P's system, the
  // kernel's too). Proves nothing.
  std::optional<std::size_t> probe_digits(const IntegerRow& row, std::size_t most_digits);
  // rows_in_span(kept, pivots, others, on_chunk, chunk).
  bool prove(const std::vector<IntegerRow>& others, const SpanProgress& on_chunk = {}, std::size_t chunk = 32);
  // The digits the last probe or chunk took (SquareSolver::digits).
  std::size_t digits() const { return solver_.digits(); }

 private:
  const std::vector<IntegerRow>& kept_;
  const std::vector<std::size_t>& pivots_;
  FmpzMatrix square_;
  SquareSolver solver_;
};

}  // namespace pleat::detail
