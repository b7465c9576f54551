// An exact rational solve of a square integer system by p-adic lifting,
// and the one choice between it and FLINT's solves that certify's lift
// (kernel_lift.cpp, extra_exact_solve.cpp) and the batch rank's span proof
// (span_proof.cpp, batch_dimension.cpp) make. Internal to enumerate/ (not
// installed).
#pragma once

#include "core/detail/flint_matrix.hpp"
#include "core/matrix.hpp"

#include <flint/fmpz.h>

#include <cstddef>
#include <memory>
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

// The unknowns from which solve_square_exactly lifts p-adically: below, the
// LU and the reconstruction cost more than FLINT's fraction-free solve.
inline constexpr std::size_t padic_from_unknowns = 8;

// X with A X = B over Q (A n x n, B n x m, integers): from
// padic_from_unknowns unknowns by p-adic lifting (solve_by_padic_lifting;
// on the systems of 2,15,15,15,15,1, best of 20, 4.7 ms against 11.2 for
// FLINT's Dixon solve at 138 x 138, 0.05 against 0.16 ms for its
// fraction-free solve at 15 x 15), by FLINT's Dixon solve when that gives
// up; below, FLINT's fraction-free solve. nullopt when A is singular. Not
// proved: callers check the result exactly. Polls the current thread's stop
// request while lifting (FLINT's solves are one call each).
std::optional<RationalMatrix> solve_square_exactly(const fmpz_mat_struct* a, const fmpz_mat_struct* b);

// solve_square_exactly for several right-hand sides in turn with one A
// (the batch rank's span proof and kernel candidate solve K_P's system 8
// to 32 columns at a time): A's LU modulo the lifting prime, its entries
// as words and A modulo the check's prime are computed at the first solve
// and kept (the LU alone took 60-75% of an 8-column solve at 660 x 660,
// 2,30,30,30,1 with 300 points). A is not copied: it must outlive the
// solver and not change. Same results as solve_square_exactly.
struct ModularLu;

class SquareSolver {
 public:
  // With `transpose` (a solver whose A is this A's transpose; it must
  // outlive the first solve), its LU modulo the lifting prime is shared:
  // the span proof's K_P^T and the kernel candidate's K_P (one LU of a
  // 999 x 999 system took 0.7 s, on 2,30,30,30,1 with 566 points).
  explicit SquareSolver(const fmpz_mat_struct* a, SquareSolver* transpose = nullptr);
  ~SquareSolver();
  SquareSolver(const SquareSolver&) = delete;
  SquareSolver& operator=(const SquareSolver&) = delete;

  // X with A X = B: solve_square_exactly(A, B). With most_digits, the
  // p-adic lifting gives up after that many digits: nullopt, ran_out()
  // true, and no fallback to FLINT's solve (a race's probe: a digit costs
  // about the same for any right-hand side of one A, so the digits a
  // column needs measure its cost).
  std::optional<RationalMatrix> solve(const fmpz_mat_struct* b, std::size_t most_digits = unlimited);
  // solve_by_padic_lifting(A, B), with most_digits as in solve.
  std::optional<RationalMatrix> lift(const fmpz_mat_struct* b, std::size_t most_digits = unlimited);
  // Whether the last solve gave up at most_digits.
  bool ran_out() const { return ran_out_; }
  // The p-adic digits (of the lifting prime, about 62 bits each) the last
  // solve lifted: 0 when it did not lift.
  std::size_t digits() const { return digits_; }

  static constexpr std::size_t unlimited = ~std::size_t{0};

 private:
  struct Lifting;
  // This A's LU for a transpose's solver (factored at the first call);
  // nullptr when singular modulo the primes tried, or when this solver
  // itself borrows its transpose's LU.
  std::shared_ptr<ModularLu> factors();

  const fmpz_mat_struct* a_;
  SquareSolver* transpose_;
  std::unique_ptr<Lifting> lifting_;
  bool gave_up_lifting_ = false;
  bool ran_out_ = false;
  std::size_t digits_ = 0;
};

}  // namespace pleat::detail
