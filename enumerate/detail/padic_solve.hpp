// An exact rational solve of a square integer system by p-adic lifting,
// for the lift of certify's extra directions (kernel_lift.cpp). Internal to
// enumerate/ (not installed).
#pragma once

#include "core/detail/flint_matrix.hpp"
#include "core/matrix.hpp"

#include <flint/fmpz.h>

#include <optional>

namespace pleat::detail {

// One FLINT integer, cleared when its scope ends, also when a stop request
// (poll_stop) throws out of a loop that uses it.
class FmpzValue {
 public:
  FmpzValue() { fmpz_init(value_); }
  ~FmpzValue() { fmpz_clear(value_); }
  FmpzValue(const FmpzValue&) = delete;
  FmpzValue& operator=(const FmpzValue&) = delete;
  fmpz* get() { return value_; }

 private:
  fmpz_t value_;
};

// X with A X = B over Q (A n x n, B n x m, integers), by Dixon's p-adic
// lifting: one LU of A modulo a word prime p, then X's p-adic digits one at
// a time from the residual (B - A (digits so far)) / p^k, which stays an
// integer about as large as A's entries times n, so each step costs about
// n^2 m word products; A's nonzero entries are kept as words, split by sign,
// so those products need no multi-precision call. Each column's entries are
// read off by rational reconstruction (one common denominator grown entry by
// entry), accepted once it solves the system modulo a second word prime.
// nullopt when A is singular modulo the primes tried, or when a column has
// no stable reconstruction by the solution's Hadamard bound (A singular over
// Q, or the caller's other solver then decides). Polls the current thread's
// stop request between steps. Not proved here: the caller checks the
// result (a column accepted early could in principle be wrong).
std::optional<RationalMatrix> solve_by_padic_lifting(const fmpz_mat_struct* a, const fmpz_mat_struct* b);

}  // namespace pleat::detail
