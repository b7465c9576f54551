// The p-adic solve of a square integer system (enumerate/detail/padic_solve.hpp)
// against FLINT's own exact rational solve (fmpq_mat_solve_fmpz_mat, an
// independent implementation): equal solutions on random nonsingular systems
// of several sizes, entry sizes (one to four words, both signs, many zeros)
// and right-hand sides; zero columns; and no answer for a singular system.
#include "enumerate/detail/padic_solve.hpp"

#include "core/stop.hpp"
#include "tests/support/flint_solution.hpp"

#include <flint/fmpz.h>

#include <gtest/gtest.h>

#include <atomic>
#include <cstdint>
#include <random>

namespace pleat::detail {
namespace {

// A random integer of up to `bits` bits, either sign, 0 with probability
// zero_share (the kept rows' systems are about half zeros).
void random_entry(fmpz* entry, std::mt19937_64& random, unsigned bits, double zero_share) {
  if (std::uniform_real_distribution<double>(0, 1)(random) < zero_share) {
    fmpz_zero(entry);
    return;
  }
  fmpz_zero(entry);
  for (unsigned done = 0; done < bits; done += 32) {
    fmpz_mul_2exp(entry, entry, 32);
    fmpz_add_ui(entry, entry, random() & 0xffffffffu);
  }
  fmpz_fdiv_q_2exp(entry, entry, (bits + 31) / 32 * 32 - bits);
  if (random() & 1) fmpz_neg(entry, entry);
}

TEST(PadicSolve, EqualsFlintsExactSolveOnRandomSystems) {
  std::mt19937_64 random(20261203);
  int compared = 0;
  for (std::size_t n : {1, 2, 5, 16, 40, 90})
    for (unsigned bits : {3u, 62u, 64u, 118u, 250u})
      for (std::size_t m : {1, 3}) {
        if (n * bits > 10000) continue;  // a minute of lifting, no more coverage
        FmpzMatrix a(n, n), b(n, m);
        for (std::size_t i = 0; i < n; ++i) {
          for (std::size_t j = 0; j < n; ++j) random_entry(a.entry(i, j), random, bits, n > 4 ? 0.5 : 0.0);
          fmpz_set_ui(a.entry(i, i), 1 + (random() & 0xff));  // keeps A nonsingular (almost surely)
          for (std::size_t c = 0; c < m; ++c) random_entry(b.entry(i, c), random, bits, 0.2);
        }
        const std::optional<RationalMatrix> expected = flint_solution(a, b, n, m);
        ASSERT_TRUE(expected.has_value());
        const std::optional<RationalMatrix> solved = solve_by_padic_lifting(a.get(), b.get());
        ASSERT_TRUE(solved.has_value()) << "n " << n << " bits " << bits;
        EXPECT_EQ(*solved, *expected) << "n " << n << " bits " << bits << " m " << m;
        ++compared;
      }
  EXPECT_EQ(compared, 56);
}

// Columns with different denominators: a column accepted first lends its
// denominator to the others as the start of their read-off (a column whose
// own denominator is smaller, 1 here, must still come out in lowest terms),
// and a candidate is accepted only when it solves the system modulo a second
// prime (accepting every candidate read off fails the random systems above).
TEST(PadicSolve, ColumnsWithDifferentDenominatorsComeOutInLowestTerms) {
  std::mt19937_64 random(20261204);
  const std::size_t n = 24;
  FmpzMatrix a(n, n), b(n, 4);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) random_entry(a.entry(i, j), random, 40, 0.5);
    fmpz_set_ui(a.entry(i, i), 1 + (random() & 0xff));
    random_entry(b.entry(i, 0), random, 40, 0.0);
  }
  for (std::size_t i = 0; i < n; ++i) {  // column 1 = A u (u small integers), column 2 = 6 column 0
    for (std::size_t j = 0; j < n; ++j) fmpz_addmul_ui(b.entry(i, 1), a.entry(i, j), j % 5);
    fmpz_mul_ui(b.entry(i, 2), b.entry(i, 0), 6);
  }
  fmpz_set_ui(b.entry(0, 3), 1);  // column 3 = e_0
  const std::optional<RationalMatrix> expected = flint_solution(a, b, n, 4);
  ASSERT_TRUE(expected.has_value());
  const std::optional<RationalMatrix> solved = solve_by_padic_lifting(a.get(), b.get());
  ASSERT_TRUE(solved.has_value());
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t c = 0; c < 4; ++c) {
      const Rational& entry = (*solved)(i, c);
      EXPECT_EQ(entry, (*expected)(i, c)) << i << " " << c;
      Rational lowest = entry;
      lowest.canonicalize();
      EXPECT_EQ(entry.get_num(), lowest.get_num()) << i << " " << c;
      EXPECT_EQ(entry.get_den(), lowest.get_den()) << i << " " << c;
    }
  for (std::size_t i = 0; i < n; ++i) EXPECT_EQ((*solved)(i, 1), static_cast<long>(i % 5));
}

// One SquareSolver for several right-hand sides in turn (its LU and
// words kept from the first): each solution equals FLINT's and the one-shot
// solve's, also after a right-hand side of another width, and a singular A
// gives no solution every time.
TEST(PadicSolve, OneSolverForSeveralRightHandSidesGivesEachSolution) {
  std::mt19937_64 random(20261205);
  const std::size_t n = 30;
  FmpzMatrix a(n, n);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) random_entry(a.entry(i, j), random, 80, 0.5);
    fmpz_set_ui(a.entry(i, i), 1 + (random() & 0xff));
  }
  SquareSolver solver(a.get());
  for (std::size_t m : {3, 1, 5, 2}) {
    FmpzMatrix b(n, m);
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t c = 0; c < m; ++c) random_entry(b.entry(i, c), random, 80, 0.2);
    const std::optional<RationalMatrix> expected = flint_solution(a, b, n, m);
    ASSERT_TRUE(expected.has_value());
    const std::optional<RationalMatrix> solved = solver.solve(b.get());
    ASSERT_TRUE(solved.has_value()) << m;
    EXPECT_EQ(*solved, *expected) << m;
    EXPECT_EQ(*solve_square_exactly(a.get(), b.get()), *expected) << m;
  }
  FmpzMatrix singular(n, n), b(n, 1);
  for (std::size_t i = 0; i + 1 < n; ++i)
    for (std::size_t j = 0; j < n; ++j) random_entry(singular.entry(i, j), random, 20, 0.3);
  for (std::size_t j = 0; j < n; ++j)  // the last row: the sum of the others
    for (std::size_t i = 0; i + 1 < n; ++i)
      fmpz_add(singular.entry(n - 1, j), singular.entry(n - 1, j), singular.entry(i, j));
  for (std::size_t i = 0; i < n; ++i) fmpz_set_ui(b.entry(i, 0), i + 1);  // not in A's column space
  SquareSolver singular_solver(singular.get());
  EXPECT_FALSE(singular_solver.solve(b.get()).has_value());
  EXPECT_FALSE(singular_solver.solve(b.get()).has_value());
}

// A digit limit (the batch rank's race): the exact solution, or none and
// ran_out() (no fallback to FLINT's solve), never another answer; at or
// above the digits an unlimited solve took, the solution; an altered A is
// not solved by the same answer.
TEST(PadicSolve, ADigitLimitGivesTheExactSolutionOrNone) {
  std::mt19937_64 random(20261206);
  const std::size_t n = 20, m = 2;
  FmpzMatrix a(n, n), b(n, m);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) random_entry(a.entry(i, j), random, 100, 0.4);
    fmpz_set_ui(a.entry(i, i), 1 + (random() & 0xff));
    for (std::size_t c = 0; c < m; ++c) random_entry(b.entry(i, c), random, 100, 0.1);
  }
  const std::optional<RationalMatrix> expected = flint_solution(a, b, n, m);
  ASSERT_TRUE(expected.has_value());
  SquareSolver solver(a.get());
  ASSERT_EQ(solver.solve(b.get()), expected);
  const std::size_t digits = solver.digits();
  ASSERT_GE(digits, 3u);  // 100-bit entries: several 62-bit digits
  EXPECT_FALSE(solver.ran_out());
  EXPECT_FALSE(solver.solve(b.get(), 0).has_value());
  EXPECT_TRUE(solver.ran_out());
  EXPECT_FALSE(solver.solve(b.get(), 1).has_value());  // 100-bit entries: not one digit
  EXPECT_TRUE(solver.ran_out());
  for (std::size_t limit = 2; limit < digits; ++limit) {  // a read-off at the limit may come early
    const std::optional<RationalMatrix> limited = solver.solve(b.get(), limit);
    EXPECT_EQ(limited.has_value(), !solver.ran_out()) << limit;
    if (limited) {
      EXPECT_EQ(*limited, *expected) << limit;
    }
    EXPECT_LE(solver.digits(), limit);
  }
  EXPECT_EQ(solver.solve(b.get(), digits), expected);
  EXPECT_EQ(solver.solve(b.get(), digits + 5), expected);
  EXPECT_EQ(solver.digits(), digits);
  fmpz_add_ui(a.entry(3, 7), a.entry(3, 7), 1);  // A altered in one entry: another solution
  const std::optional<RationalMatrix> altered = solve_square_exactly(a.get(), b.get());
  ASSERT_TRUE(altered.has_value());
  EXPECT_NE(*altered, *expected);
  EXPECT_EQ(altered, flint_solution(a, b, n, m));
}

// A solver of A^T that shares A's LU (the span proof's K_P^T and the kernel
// candidate's K_P): its solutions equal FLINT's for A^T, whichever solver
// solves first, with row exchanges in the LU (zeros on A's diagonal), and
// differ from A's own.
TEST(PadicSolve, ASolverOfTheTransposeSharingTheLuGivesItsSolution) {
  std::mt19937_64 random(20261207);
  const std::size_t n = 26, m = 3;
  for (bool transpose_first : {false, true}) {
    FmpzMatrix a(n, n), at(n, n), b(n, m);
    for (std::size_t i = 0; i < n; ++i) {
      for (std::size_t j = 0; j < n; ++j) random_entry(a.entry(i, j), random, 70, 0.4);
      if (i % 3 == 0) fmpz_zero(a.entry(i, i));  // the LU exchanges rows
      for (std::size_t c = 0; c < m; ++c) random_entry(b.entry(i, c), random, 70, 0.1);
    }
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = 0; j < n; ++j) fmpz_set(at.entry(j, i), a.entry(i, j));
    const std::optional<RationalMatrix> expected = flint_solution(at, b, n, m), of_a = flint_solution(a, b, n, m);
    ASSERT_TRUE(expected.has_value());
    ASSERT_TRUE(of_a.has_value());
    ASSERT_NE(*expected, *of_a);
    SquareSolver solver(a.get());
    SquareSolver transposed(at.get(), &solver);
    if (transpose_first) {
      EXPECT_EQ(transposed.lift(b.get()), expected);
    }
    EXPECT_EQ(solver.lift(b.get()), of_a);
    EXPECT_EQ(transposed.lift(b.get()), expected);
    EXPECT_EQ(transposed.solve(b.get()), expected);
  }
}

TEST(PadicSolve, ZeroRightHandSideGivesZero) {
  FmpzMatrix a(3, 3), b(3, 2);
  const long entries[3][3] = {{2, -1, 0}, {1, 3, -7}, {0, 5, 11}};
  for (std::size_t i = 0; i < 3; ++i)
    for (std::size_t j = 0; j < 3; ++j) fmpz_set_si(a.entry(i, j), entries[i][j]);
  fmpz_set_si(b.entry(0, 1), 4);  // column 0 zero, column 1 not
  const std::optional<RationalMatrix> solved = solve_by_padic_lifting(a.get(), b.get());
  ASSERT_TRUE(solved.has_value());
  const std::optional<RationalMatrix> expected = flint_solution(a, b, 3, 2);
  ASSERT_TRUE(expected.has_value());
  EXPECT_EQ(*solved, *expected);
  for (std::size_t i = 0; i < 3; ++i) EXPECT_EQ((*solved)(i, 0), 0);
  EXPECT_NE((*solved)(0, 1), 0);
}

TEST(PadicSolve, SingularSystemHasNoSolution) {
  // Row 2 = row 0 + row 1: singular over Q, hence modulo every prime.
  FmpzMatrix a(3, 3), b(3, 1);
  const long entries[3][3] = {{1, 2, 3}, {4, 5, 6}, {5, 7, 9}};
  for (std::size_t i = 0; i < 3; ++i) {
    for (std::size_t j = 0; j < 3; ++j) fmpz_set_si(a.entry(i, j), entries[i][j]);
    fmpz_set_si(b.entry(i, 0), static_cast<long>(i) + 1);
  }
  EXPECT_FALSE(solve_by_padic_lifting(a.get(), b.get()).has_value());
}

// The lifting polls the current thread's stop request between steps: a
// request already made ends the solve with Stopped (its integers are
// cleared on the way out: FmpzValue; make check's LeakSanitizer would name
// any left).
TEST(PadicSolve, AStopRequestEndsTheSolveWithStopped) {
  FmpzMatrix a(2, 2), b(2, 1);
  fmpz_set_si(a.entry(0, 0), 3);
  fmpz_set_si(a.entry(1, 1), 5);
  fmpz_set_si(b.entry(0, 0), 1);
  ASSERT_TRUE(solve_by_padic_lifting(a.get(), b.get()).has_value());  // no request: solved
  const std::atomic<bool> interrupted{true};
  const StopRequest stop(&interrupted, 0);
  const StopScope scope(stop);
  EXPECT_THROW((void)solve_by_padic_lifting(a.get(), b.get()), Stopped);
}

}  // namespace
}  // namespace pleat::detail
