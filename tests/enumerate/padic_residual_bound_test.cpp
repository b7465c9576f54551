// The p-adic solve's residuals (enumerate/detail/padic_solve.cpp,
// ResidualWords) are kept in size = ceil((max(bits |b|, bits |A| + bits n +
// 1) + 1) / 64) words of two's complement, on the bound |r_k| <= max(|b|,
// 2 n max|A|). These systems sit on that size's edge: |b| or 2 n max|A| one
// bit below a multiple of 64 (the sign bit is the last one) or on it, every
// entry of A at its largest magnitude 2^k - 1 with either sign or one sign per
// row, n a power of two or one below (where bits n changes), right-hand sides up to
// 21 words (1343 and 1344 bits) of either sign. A residual that overflowed its words
// would give wrong digits: the lifting would then not settle or read off a
// wrong solution; it must equal FLINT's exact solve (fmpq_mat_solve_fmpz_mat,
// an independent implementation) on every one.
#include "enumerate/detail/padic_solve.hpp"

#include "tests/support/flint_solution.hpp"

#include <flint/fmpz.h>
#include <flint/ulong_extras.h>

#include <gtest/gtest.h>

#include <random>

namespace pleat::detail {
namespace {

std::size_t bit_length(std::size_t n) {
  std::size_t bits = 0;
  while ((std::size_t{1} << bits) <= n) ++bits;
  return bits;
}

// 2^bits - 1, or a random integer below 2^bits with its top bit set, either sign.
void edge_entry(fmpz* entry, std::mt19937_64& random, std::size_t bits, bool all_ones, int sign) {
  fmpz_one(entry);
  fmpz_mul_2exp(entry, entry, bits);
  fmpz_sub_ui(entry, entry, 1);
  if (!all_ones && bits > 1) {
    fmpz_t noise;
    fmpz_init(noise);
    for (std::size_t done = 0; done + 1 < bits; done += 32) {
      fmpz_mul_2exp(noise, noise, 32);
      fmpz_add_ui(noise, noise, random() & 0xffffffffu);
    }
    fmpz_fdiv_r_2exp(noise, noise, bits - 1);  // below the top bit
    fmpz_sub(entry, entry, noise);
    fmpz_clear(noise);
  }
  if (sign < 0) fmpz_neg(entry, entry);
}

TEST(PadicResidualBound, SystemsOnTheEdgeOfTheResidualsWordsSolveExactly) {
  std::mt19937_64 random(20261205);
  int compared = 0;
  for (std::size_t words : {1, 2, 3, 21})
    for (std::size_t n : {8, 15, 16, 31, 32})
      for (std::size_t edge : {64 * words - 1, 64 * words})  // the bound's bits: the sign bit the last word's top, or one more word
      for (int dominant = 0; dominant < 2; ++dominant)  // 0: |b| sets the size, 1: 2 n max|A|
        for (int pattern = 0; pattern < 3; ++pattern) {  // signs: random; one per row; all ones, random
          if (dominant == 1 && edge < bit_length(n) + 2) continue;
          const std::size_t a_bits = dominant == 1 ? edge - bit_length(n) - 1 : std::min<std::size_t>(edge / 3, 200);
          const std::size_t b_bits = dominant == 0 ? edge : std::max<std::size_t>(1, a_bits / 2);
          if (words == 21 && n > 16) continue;  // minutes of lifting, no more coverage
          const std::size_t m = 3;
          FmpzMatrix a(n, n), b(n, m);
          std::optional<RationalMatrix> expected;
          for (int attempt = 0; attempt < 20 && !expected; ++attempt) {
            for (std::size_t i = 0; i < n; ++i) {
              const int row_sign = (random() & 1) ? 1 : -1;
              for (std::size_t j = 0; j < n; ++j) {
                const int sign = pattern == 1 ? row_sign : ((random() & 1) ? 1 : -1);
                edge_entry(a.entry(i, j), random, a_bits, pattern != 0, sign);
              }
              for (std::size_t c = 0; c < m; ++c) edge_entry(b.entry(i, c), random, b_bits, c == 0, (random() & 1) ? 1 : -1);
            }
            if (pattern == 1)  // one sign per row: a rank-one part, made nonsingular on the diagonal
              for (std::size_t i = 0; i < n; ++i) {  // towards zero: the magnitudes stay below 2^a_bits
                fmpz* diagonal = a.entry(i, i);
                if (fmpz_sgn(diagonal) < 0)
                  fmpz_add_ui(diagonal, diagonal, 1 + i);
                else
                  fmpz_sub_ui(diagonal, diagonal, 1 + i);
              }
            expected = flint_solution(a, b, n, m);
          }
          ASSERT_TRUE(expected.has_value());
          ASSERT_EQ(static_cast<std::size_t>(std::abs(fmpz_mat_max_bits(a.get()))), a_bits);
          ASSERT_EQ(static_cast<std::size_t>(std::abs(fmpz_mat_max_bits(b.get()))), b_bits);
          SCOPED_TRACE("edge " + std::to_string(edge) + ", n " + std::to_string(n) + ", dominant " +
                       std::to_string(dominant) + ", pattern " + std::to_string(pattern));
          const std::optional<RationalMatrix> solved = solve_by_padic_lifting(a.get(), b.get());
          ASSERT_TRUE(solved.has_value());
          EXPECT_EQ(*solved, *expected);
          ++compared;
        }
  EXPECT_EQ(compared, 216);
}

// The largest residual the lifting can meet, nearly, with b small: A = D A0
// (rows of A0 one sign, every magnitude 2^k - 1 but the diagonal's, a little
// less) and every unknown -1 / D, so that b = -A0 1 and r_k = A (x - x_k) /
// p^k = -a_k A0 1 with a_0 = 1 and a_k in (0, D). D = 1 modulo p (the
// lifting's first prime, padic_solve.cpp's factor_modulo_some_prime) makes
// the first digit p - 1 and a_1 = (1 + (p - 1) D) / p: the residual after
// one step is n max|A| (1 - 1/p) while |b| is D times smaller, the largest
// the recurrence allows; reading the 300-bit D off takes about ten digits
// more. 2 n max|A| (the words' bound) one bit below, on or above a multiple
// of 64: above it with n = 2^j - 1, the residual n max|A| needs every bit of
// the last word (a bound one bit smaller fails here).
TEST(PadicResidualBound, ResidualsAtTheirLargestPossibleSizeStayExact) {
  const std::uint64_t prime = n_nextprime((std::uint64_t{1} << 62) - (std::uint64_t{1} << 36), 1);
  std::mt19937_64 random(20261206);
  int compared = 0;
  for (std::size_t n : {9, 15, 16, 31})
    for (std::size_t edge : {64 * 6 - 1, 64 * 6, 64 * 6 + 1, 64 * 7 + 1}) {
      Integer d = 1;
      d <<= 238;
      d += static_cast<unsigned long>(random());
      d = d * static_cast<unsigned long>(prime) + 1;  // about 300 bits, 1 modulo p
      // A0's magnitude 2^k - 1 with bits(D (2^k - 1)) + bits(n) + 1 = edge.
      std::size_t k = 1;
      Integer largest;
      for (;; ++k) {
        largest = (Integer(1) << k) - 1;
        const std::size_t bits = mpz_sizeinbase(Integer(d * largest).get_mpz_t(), 2) + bit_length(n) + 1;
        if (bits >= edge) break;
      }
      if (mpz_sizeinbase(Integer(d * largest).get_mpz_t(), 2) + bit_length(n) + 1 != edge) continue;
      FmpzMatrix a(n, n), b(n, 1);
      for (std::size_t i = 0; i < n; ++i) {
        Integer sum = 0;
        for (std::size_t j = 0; j < n; ++j) {
          Integer value = largest;
          if (j == i) value -= static_cast<unsigned long>(3 * i + 1);  // nonsingular: M0 J minus distinct diagonal
          if (i % 2) value = -value;
          sum += value;
          value *= d;
          fmpz_set_mpz(a.entry(i, j), value.get_mpz_t());
        }
        const Integer right = -sum;  // (A x)_i with every x_j = -1 / D
        fmpz_set_mpz(b.entry(i, 0), right.get_mpz_t());
      }
      // a_1 = (1 + (p - 1) D) / p, exactly: the residual after the first digit, a_1 / D of n max|A|.
      const Integer a1 = (d * static_cast<unsigned long>(prime - 1) + 1) / static_cast<unsigned long>(prime);
      ASSERT_EQ(Integer(a1 * static_cast<unsigned long>(prime)), Integer(d * static_cast<unsigned long>(prime - 1) + 1));
      EXPECT_GT(Integer(4 * a1), Integer(3 * d));
      SCOPED_TRACE("n " + std::to_string(n) + ", edge " + std::to_string(edge));
      const std::optional<RationalMatrix> solved = solve_by_padic_lifting(a.get(), b.get());
      ASSERT_TRUE(solved.has_value());
      const Rational expected(-1, d);
      for (std::size_t i = 0; i < n; ++i) EXPECT_EQ((*solved)(i, 0), expected) << i;
      ++compared;
    }
  EXPECT_GE(compared, 12);
}

}  // namespace
}  // namespace pleat::detail
