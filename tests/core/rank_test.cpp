// Exact and modular rank: every answer is checked a second way (a naive
// rational elimination, matrices of known rank built as products, kernel
// vectors multiplied back).
#include "core/rank.hpp"
#include "core/stop.hpp"

#include <flint/ulong_extras.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <cstdint>
#include <numeric>
#include <random>
#include <thread>

namespace pleat {
namespace {

RationalMatrix random_integer_matrix(std::mt19937_64& random, std::size_t rows, std::size_t cols,
                                     int bound) {
  std::uniform_int_distribution<int> entry(-bound, bound);
  RationalMatrix m(rows, cols);
  for (std::size_t r = 0; r < rows; ++r)
    for (std::size_t c = 0; c < cols; ++c) m(r, c) = entry(random);
  return m;
}

RationalMatrix random_rational_matrix(std::mt19937_64& random, std::size_t rows, std::size_t cols) {
  std::uniform_int_distribution<int> numerator(-9, 9);
  std::uniform_int_distribution<int> denominator(1, 7);
  RationalMatrix m(rows, cols);
  for (std::size_t r = 0; r < rows; ++r)
    for (std::size_t c = 0; c < cols; ++c) {
      const int d = denominator(random);  // drawn first: a call's argument order is unspecified
      m(r, c) = Rational(numerator(random), d);
      m(r, c).canonicalize();
    }
  return m;
}

// B (rows x inner) times C (inner x cols) with random rational entries: rank
// is inner with overwhelming probability, and never more. The test asserts
// the naive oracle agrees, so an unlucky draw cannot pass silently.
RationalMatrix random_product(std::mt19937_64& random, std::size_t rows, std::size_t inner,
                              std::size_t cols) {
  // C is drawn first, in its own statement: the order in which a call's
  // arguments are evaluated is unspecified (gcc draws C first, clang B), and
  // every compiler must see the same matrices.
  const RationalMatrix c = random_rational_matrix(random, inner, cols);
  const RationalMatrix b = random_rational_matrix(random, rows, inner);
  return product(b, c);
}

void expect_annihilates(const RationalMatrix& m, const RationalMatrix& kernel) {
  for (std::size_t k = 0; k < kernel.rows(); ++k) {
    const RationalVector image = product(m, kernel.row(k));
    for (std::size_t r = 0; r < image.size(); ++r) ASSERT_EQ(image[r], 0) << "kernel row " << k;
  }
}

// The echelon shape kernel_basis_exact promises: leading 1s in increasing
// columns, each the only nonzero of its column.
void expect_reduced_echelon(const RationalMatrix& m) {
  std::size_t previous_lead = 0;
  for (std::size_t r = 0; r < m.rows(); ++r) {
    std::size_t lead = 0;
    while (lead < m.cols() && m(r, lead) == 0) ++lead;
    ASSERT_LT(lead, m.cols()) << "zero row " << r;
    if (r > 0) {
      EXPECT_GT(lead, previous_lead);
    }
    EXPECT_EQ(m(r, lead), 1);
    for (std::size_t other = 0; other < m.rows(); ++other) {
      if (other != r) {
        EXPECT_EQ(m(other, lead), 0);
      }
    }
    previous_lead = lead;
  }
}

TEST(RankExact, KnownRankProductsAgreeWithNaiveElimination) {
  std::mt19937_64 random(20240501);
  for (int trial = 0; trial < 40; ++trial) {
    const std::size_t rows = 1 + random() % 12;
    const std::size_t cols = 1 + random() % 14;
    const std::size_t inner = 1 + random() % std::min(rows, cols);
    const RationalMatrix m = random_product(random, rows, inner, cols);
    const std::size_t naive = rank_by_gauss_naive(m);
    ASSERT_EQ(naive, inner) << "trial " << trial;
    EXPECT_EQ(rank_exact(m), naive) << "trial " << trial;
  }
}

// Wide rank-deficient matrices take the kernel route (more than 48 columns);
// full-rank ones the modular shortcut.
TEST(RankExact, WideMatricesAgreeWithNaiveElimination) {
  std::mt19937_64 random(17);
  for (int trial = 0; trial < 6; ++trial) {
    const std::size_t rows = 4 + random() % 12;
    const std::size_t inner = trial % 3 == 0 ? rows : 1 + random() % rows;
    const RationalMatrix m = random_product(random, rows, inner, 50 + random() % 30);
    const std::size_t naive = rank_by_gauss_naive(m);
    ASSERT_EQ(naive, inner);
    EXPECT_EQ(rank_exact(m), naive) << "trial " << trial;
  }
}

TEST(RankExact, EdgeCases) {
  EXPECT_EQ(rank_exact(RationalMatrix()), 0u);
  EXPECT_EQ(rank_exact(RationalMatrix(3, 4)), 0u);
  EXPECT_EQ(rank_by_gauss_naive(RationalMatrix(3, 4)), 0u);
  RationalMatrix m(2, 2);
  m(0, 0) = Rational(1, 3);
  m(0, 1) = Rational(2, 5);
  m(1, 0) = Rational(5, 6);  // 5/2 times row 0
  m(1, 1) = 1;
  EXPECT_EQ(rank_exact(m), 1u);
  m(1, 1) = Rational(1000001, 1000000);
  EXPECT_EQ(rank_exact(m), 2u);
}

// Huge entries whose tiny difference decides the rank: a float rank would
// call this 1.
TEST(RankExact, DecidesNearlyDependentRowsExactly) {
  RationalMatrix m(2, 2);
  const Rational big(Integer("123456789012345678901234567890"));
  m(0, 0) = big;
  m(0, 1) = big + 1;
  m(1, 0) = big + 1;
  m(1, 1) = big + 2;  // det = big*(big+2) - (big+1)^2 = -1
  EXPECT_EQ(rank_exact(m), 2u);
  EXPECT_EQ(rank_by_gauss_naive(m), 2u);
}

TEST(KernelBasisExact, AnnihilatesAndHasComplementaryDimension) {
  std::mt19937_64 random(7);
  for (int trial = 0; trial < 30; ++trial) {
    const std::size_t rows = 1 + random() % 9;
    const std::size_t cols = 1 + random() % 11;
    const std::size_t inner = 1 + random() % std::min(rows, cols);
    const RationalMatrix m = random_product(random, rows, inner, cols);
    const RationalMatrix kernel = kernel_basis_exact(m);
    ASSERT_EQ(kernel.cols(), cols);
    EXPECT_EQ(kernel.rows(), cols - rank_by_gauss_naive(m)) << "trial " << trial;
    EXPECT_EQ(rank_exact(kernel), kernel.rows());  // a basis, not just a spanning set
    expect_annihilates(m, kernel);
    expect_reduced_echelon(kernel);
  }
}

// Canonical: a different generating set of the same row space (rows mixed
// and duplicated) gives the identical kernel matrix.
TEST(KernelBasisExact, CanonicalForTheRowSpace) {
  std::mt19937_64 random(11);
  const RationalMatrix m = random_product(random, 4, 3, 8);
  const RationalMatrix mixer = random_rational_matrix(random, 6, 4);
  const RationalMatrix other = product(mixer, m);
  ASSERT_EQ(rank_exact(other), 3u);
  EXPECT_EQ(kernel_basis_exact(m), kernel_basis_exact(other));
  EXPECT_EQ(row_space_basis_exact(m), row_space_basis_exact(other));
}

// The multimodular kernel against plain rational elimination, including
// entries far beyond one word (many primes) and rank-deficient shapes.
TEST(KernelBasisExact, AgreesWithRationalElimination) {
  std::mt19937_64 random(13);
  for (int trial = 0; trial < 20; ++trial) {
    const std::size_t rows = 1 + random() % 10;
    const std::size_t cols = 1 + random() % 12;
    const std::size_t inner = 1 + random() % std::min(rows, cols);
    RationalMatrix m = random_product(random, rows, inner, cols);
    if (trial % 2 == 1) {  // huge entries: 10^30-scale numerators, 10^20 denominators
      for (std::size_t r = 0; r < rows; ++r) {
        const Rational factor(Integer("1000000000000000000000000000007") * Integer(1 + random() % 1000),
                              Integer("100000000000000000039"));
        for (std::size_t c = 0; c < cols; ++c) m(r, c) *= factor + Rational(c, 7);
      }
    }
    EXPECT_EQ(kernel_basis_exact(m), kernel_basis_by_rational_elimination(m)) << "trial " << trial;
  }
}

TEST(KernelBasisExact, HandWorkedExample) {
  // Kernel of x + 2y + 3z = 0, worked by hand: spanned by (-2, 1, 0) and
  // (-3, 0, 1).
  RationalMatrix m(1, 3);
  m(0, 0) = 1;
  m(0, 1) = 2;
  m(0, 2) = 3;
  const RationalMatrix kernel = kernel_basis_exact(m);
  ASSERT_EQ(kernel.rows(), 2u);
  // RREF of [[-2, 1, 0], [-3, 0, 1]]: row1/(-2) = (1, -1/2, 0);
  // row2 + 3 row1' = (0, -3/2, 1) -> (0, 1, -2/3); row1' + 1/2 row2' = (1, 0, -1/3).
  EXPECT_EQ(kernel(0, 0), 1);
  EXPECT_EQ(kernel(0, 1), 0);
  EXPECT_EQ(kernel(0, 2), Rational(-1, 3));
  EXPECT_EQ(kernel(1, 0), 0);
  EXPECT_EQ(kernel(1, 1), 1);
  EXPECT_EQ(kernel(1, 2), Rational(-2, 3));
  EXPECT_EQ(kernel_basis_exact(RationalMatrix(0, 3)).rows(), 3u);
  RationalMatrix full(2, 2);
  full(0, 0) = 1;
  full(1, 1) = 1;
  EXPECT_EQ(kernel_basis_exact(full).rows(), 0u);
}

TEST(ReduceModulo, InvertsDenominatorsAndReportsDivisibleOnes) {
  const std::uint64_t p = 101;
  EXPECT_EQ(reduce_modulo(Rational(-1), p), 100u);
  const auto third = reduce_modulo(Rational(1, 3), p);
  ASSERT_TRUE(third.has_value());
  EXPECT_EQ((*third * 3) % p, 1u);
  EXPECT_EQ(reduce_modulo(Rational(-7, 3), p).value(), (p - (7 * *third) % p) % p);
  EXPECT_FALSE(reduce_modulo(Rational(1, 202), p).has_value());
  EXPECT_EQ(reduce_modulo(Rational(202, 3), p), 0u);
}

// The matrix and vector reductions invert all denominators at once (one
// inversion of their product): each entry must still be its own residue,
// with 1 and repeated denominators, negative values and zeros, and a
// denominator the prime divides anywhere (first, middle, last) gives nullopt.
TEST(ReduceModulo, MatricesAndVectorsAreTheirEntriesResidues) {
  std::mt19937_64 rng(7);
  for (const std::uint64_t p : {std::uint64_t{101}, primary_prime(), screening_prime()}) {
    for (std::size_t rows : {1u, 3u, 7u}) {
      RationalMatrix m(rows, 5);
      RationalVector v(rows * 5);
      for (std::size_t r = 0; r < rows; ++r)
        for (std::size_t c = 0; c < 5; ++c) {
          const long num = static_cast<long>(rng() % 2001) - 1000;
          const long den = rng() % 3 == 0 ? 1 : static_cast<long>(rng() % 100) + 1;
          m(r, c) = Rational(num, den * 101 + 1);  // never divisible by 101
          if (rng() % 4 == 0) m(r, c) = Rational(num, 1000000);
          v[r * 5 + c] = m(r, c);
        }
      const ModularMatrix reduced = reduce_modulo(m, p).value();
      const ModularVector reduced_vector = reduce_modulo(v, p).value();
      for (std::size_t r = 0; r < rows; ++r)
        for (std::size_t c = 0; c < 5; ++c) {
          EXPECT_EQ(reduced(r, c), reduce_modulo(m(r, c), p).value()) << p << " " << m(r, c);
          EXPECT_EQ(reduced_vector[r * 5 + c], reduced(r, c));
        }
      if (p != 101) continue;
      for (const std::size_t at : {std::size_t{0}, v.size() / 2, v.size() - 1}) {
        RationalMatrix divisible = m;
        RationalVector divisible_vector = v;
        divisible(at / 5, at % 5) = Rational(3, 202);
        divisible_vector[at] = Rational(3, 202);
        EXPECT_FALSE(reduce_modulo(divisible, p).has_value());
        EXPECT_FALSE(reduce_modulo(divisible_vector, p).has_value());
      }
    }
  }
  EXPECT_TRUE(reduce_modulo(RationalVector{}, 101).value().empty());
}

TEST(Primes, WordSizeDistinctAndPrime) {
  const std::uint64_t p = primary_prime();
  const std::uint64_t q = screening_prime();
  // The primes written out in core/: the first above their starting points, and the sequence after p.
  EXPECT_EQ(p, n_nextprime((std::uint64_t{1} << 62) - (std::uint64_t{1} << 32), 1));
  EXPECT_EQ(q, n_nextprime((std::uint64_t{1} << 61) - (std::uint64_t{1} << 32), 1));
  for (std::uint64_t i = 0, before = p; i < 24; before = prime_sequence(i), ++i)
    EXPECT_EQ(prime_sequence(i), n_nextprime(before, 1)) << i;
  EXPECT_GT(p, (std::uint64_t{1} << 62) - (std::uint64_t{1} << 32));
  EXPECT_LT(p, std::uint64_t{1} << 62);
  EXPECT_GT(q, (std::uint64_t{1} << 61) - (std::uint64_t{1} << 32));
  EXPECT_LT(q, std::uint64_t{1} << 61);
  EXPECT_NE(p, q);
  EXPECT_GT(next_prime_after(p), p);
  // Fermat witness on both primes: 3^(p-1) = 1 mod p, computed by
  // double-and-add independently of FLINT (p < 2^63, so sums never overflow).
  for (std::uint64_t prime : {p, q}) {
    const auto add = [prime](std::uint64_t a, std::uint64_t b) { return (a + b) % prime; };
    const auto multiply = [&](std::uint64_t a, std::uint64_t b) {
      std::uint64_t result = 0;
      for (; b > 0; b >>= 1, a = add(a, a))
        if (b & 1) result = add(result, a);
      return result;
    };
    std::uint64_t result = 1, base = 3;
    for (std::uint64_t e = prime - 1; e > 0; e >>= 1, base = multiply(base, base))
      if (e & 1) result = multiply(result, base);
    EXPECT_EQ(result, 1u);
  }
}

TEST(ModularRowBasis, ReachesTheExactRankOnRandomIntegerMatrices) {
  std::mt19937_64 random(3);
  for (int trial = 0; trial < 30; ++trial) {
    const std::size_t rows = 1 + random() % 15;
    const std::size_t cols = 1 + random() % 15;
    const std::size_t inner = 1 + random() % std::min(rows, cols);
    const RationalMatrix c = random_integer_matrix(random, inner, cols, 50);  // drawn first, as in random_product
    const RationalMatrix m = product(random_integer_matrix(random, rows, inner, 50), c);
    const std::size_t exact = rank_exact(m);
    ASSERT_EQ(exact, rank_by_gauss_naive(m));
    for (std::uint64_t p : {primary_prime(), screening_prime()}) {
      const ModularMatrix reduced = reduce_modulo(m, p).value();
      ModularRowBasis basis(p, cols);
      std::size_t rises = 0;
      for (std::size_t r = 0; r < rows; ++r) rises += basis.add_row(reduced.row(r)) ? 1 : 0;
      EXPECT_EQ(basis.rank(), exact) << "trial " << trial;
      EXPECT_EQ(rises, basis.rank());
      EXPECT_EQ(rank_modulo(reduced, p), exact);
      for (std::size_t r = 0; r < rows; ++r) EXPECT_TRUE(basis.contains(reduced.row(r)));
    }
  }
}

// The certificate behind rank(): the kept original rows at the pivot columns
// form a minor that is nonsingular over Q.
TEST(ModularRowBasis, KeptRowsAndPivotsGiveANonsingularMinor) {
  std::mt19937_64 random(5);
  const RationalMatrix c = random_integer_matrix(random, 5, 12, 9);  // drawn first, as in random_product
  const RationalMatrix m = product(random_integer_matrix(random, 9, 5, 9), c);
  const std::uint64_t p = primary_prime();
  const ModularMatrix reduced = reduce_modulo(m, p).value();
  ModularRowBasis basis(p, m.cols());
  std::vector<std::size_t> kept;
  for (std::size_t r = 0; r < m.rows(); ++r)
    if (basis.add_row(reduced.row(r))) kept.push_back(r);
  ASSERT_EQ(kept.size(), 5u);
  RationalMatrix minor(kept.size(), kept.size());
  for (std::size_t i = 0; i < kept.size(); ++i)
    for (std::size_t j = 0; j < kept.size(); ++j) minor(i, j) = m(kept[i], basis.pivot_columns()[j]);
  EXPECT_EQ(rank_exact(minor), 5u);
}

// Lower bound, the direction that matters: entries that are multiples of p
// make the rank drop mod p, never rise.
TEST(ModularRowBasis, RankModuloPIsOnlyALowerBound) {
  const std::uint64_t p = 1000003;
  RationalMatrix m(3, 3);
  m(0, 0) = 1;
  m(1, 1) = p;      // vanishes mod p
  m(2, 2) = 2 * p;  // vanishes mod p
  m(2, 0) = 5;
  ASSERT_EQ(rank_exact(m), 3u);
  const ModularMatrix reduced = reduce_modulo(m, p).value();
  ModularRowBasis basis(p, 3);
  for (std::size_t r = 0; r < 3; ++r) basis.add_row(reduced.row(r));
  EXPECT_EQ(basis.rank(), 1u);
  EXPECT_LE(basis.rank(), rank_exact(m));
  // Same rank over Q, but a 2x2 minor whose determinant is p: rank 2 over Q, 1 mod p.
  RationalMatrix minor(2, 2);
  minor(0, 0) = 1;
  minor(0, 1) = 2;
  minor(1, 0) = 3;
  minor(1, 1) = 6 + Rational(p);  // det = p
  EXPECT_EQ(rank_exact(minor), 2u);
  EXPECT_EQ(rank_modulo(reduce_modulo(minor, p).value(), p), 1u);
}

TEST(ModularRowBasis, RejectsMisuse) {
  EXPECT_THROW(ModularRowBasis(1, 3), usage_error);
  ModularRowBasis basis(101, 3);
  EXPECT_THROW(basis.add_row({1, 2}), usage_error);
  EXPECT_THROW(basis.add_row({1, 2, 101}), usage_error);
  EXPECT_FALSE(basis.add_row({0, 0, 0}));
  EXPECT_TRUE(basis.add_row({0, 0, 7}));
  EXPECT_FALSE(basis.add_row({0, 0, 3}));
  EXPECT_TRUE(basis.add_row({4, 0, 3}));
  EXPECT_EQ(basis.rank(), 2u);
}

// ---- Kernels modulo p and rational reconstruction ---------------------------

// The canonical kernel mod p is the image of the exact canonical kernel
// (kernel_basis_exact) for a prime dividing no denominator.
TEST(KernelBasisModulo, IsTheImageOfTheExactCanonicalKernel) {
  std::mt19937_64 random(41);
  const std::uint64_t prime = primary_prime();
  for (int trial = 0; trial < 12; ++trial) {
    const std::size_t rows = 1 + trial % 5, inner = 1 + trial % 4, cols = 6 + trial % 3;
    const RationalMatrix m = random_product(random, rows, std::min(inner, rows), cols);
    const RationalMatrix exact = kernel_basis_exact(m);
    const ModularMatrix modular = kernel_basis_modulo(*reduce_modulo(m, prime), prime);
    EXPECT_EQ(modular, *reduce_modulo(exact, prime)) << "trial " << trial;
  }
  EXPECT_EQ(kernel_basis_modulo(ModularMatrix(0, 3), prime).rows(), 3u);
}

__extension__ typedef unsigned __int128 Wide;  // exact 64 x 64 -> 128 products

// A residue matrix rows x cols of rank `inner` (with overwhelming
// probability; the tests also compare with FLINT's nmod_mat_rank): `inner`
// random rows, the others combinations a x + b y of two earlier rows, spread
// through the matrix; row 3 is zero. Several blocks of the blocked
// elimination, rank deficiency inside blocks.
ModularMatrix random_modular_matrix_of_rank(std::mt19937_64& random, std::size_t rows, std::size_t inner,
                                            std::size_t cols, std::uint64_t prime) {
  std::uniform_int_distribution<std::uint64_t> residue(0, prime - 1);
  std::vector<bool> is_independent(rows, false);
  for (std::size_t k = 0, placed = 0; placed < inner && k < rows; ++k) {  // 11 is prime to rows here
    const std::size_t i = k * 11 % rows;
    if (i == 3) continue;
    is_independent[i] = true;
    ++placed;
  }
  ModularMatrix out(rows, cols);
  std::vector<std::size_t> earlier;
  for (std::size_t r = 0; r < rows; ++r) {
    if (is_independent[r]) {
      for (std::size_t c = 0; c < cols; ++c) out(r, c) = residue(random);
      earlier.push_back(r);
    } else if (r != 3 && !earlier.empty()) {
      std::uniform_int_distribution<std::size_t> pick(0, earlier.size() - 1);
      const std::size_t x = earlier[pick(random)], y = earlier[pick(random)];
      const std::uint64_t a = residue(random), b = residue(random);
      for (std::size_t c = 0; c < cols; ++c)
        out(r, c) = static_cast<std::uint64_t>((static_cast<Wide>(a) * out(x, c) + static_cast<Wide>(b) * out(y, c)) % prime);
    }
  }
  return out;
}

// The blocked elimination (blocks of 256 rows) against what defines the
// reduced row-echelon form: leading 1s in increasing columns, each alone in
// its column; rank = FLINT's nmod_mat_rank (rank_modulo); every input row in
// the span (ModularRowBasis). Those properties fix the RREF uniquely.
TEST(RowSpaceBasisModulo, ManyBlocksGiveTheReducedEchelonForm) {
  std::mt19937_64 random(47);
  const std::uint64_t prime = primary_prime();
  const ModularMatrix m = random_modular_matrix_of_rank(random, 700, 430, 520, prime);
  const ModularMatrix basis = row_space_basis_modulo(m, prime);
  ASSERT_EQ(basis.rows(), rank_modulo(m, prime));
  EXPECT_EQ(basis.rows(), 430u);
  ModularRowBasis span(prime, m.cols());
  std::size_t previous = 0;
  for (std::size_t r = 0; r < basis.rows(); ++r) {
    std::size_t lead = 0;
    while (basis(r, lead) == 0) ++lead;
    ASSERT_EQ(basis(r, lead), 1u);
    if (r > 0) {
      ASSERT_GT(lead, previous);
    }
    for (std::size_t other = 0; other < basis.rows(); ++other) {
      if (other != r) {
        ASSERT_EQ(basis(other, lead), 0u);
      }
    }
    previous = lead;
    span.add_row(basis.row(r));
  }
  for (std::size_t r = 0; r < m.rows(); ++r) ASSERT_TRUE(span.contains(m.row(r))) << "row " << r;
}

// ModularRowBasis's stored rows are the reduced echelon form of what was
// added, for primes on both sides of 2^62 (the residual's runs of products
// without a wrap check are 16 long below it, shorter above), below 2^63 and
// a small prime: FLINT's reduced echelon form of the same rows
// (row_space_basis_modulo) is the reference.
TEST(ModularRowBasis, RowsAreTheReducedEchelonFormForAnyPrime) {
  std::mt19937_64 random(59);
  for (const std::uint64_t prime : {std::uint64_t{1000003}, std::uint64_t{4611686018427387847},   // below 2^62
                                    std::uint64_t{4611686018427388039},                         // above 2^62
                                    std::uint64_t{9223372036854775783}}) {                      // below 2^63
    const ModularMatrix m = random_modular_matrix_of_rank(random, 90, 50, 70, prime);
    ModularRowBasis basis(prime, m.cols());
    for (std::size_t r = 0; r < m.rows(); ++r) basis.add_row_screened(m.row(r));
    ASSERT_EQ(basis.rank(), 50u) << prime;
    const ModularMatrix rows = basis.rows();
    std::vector<std::size_t> order(rows.rows());
    std::iota(order.begin(), order.end(), 0);
    std::sort(order.begin(), order.end(),
              [&](std::size_t a, std::size_t b) { return basis.pivot_columns()[a] < basis.pivot_columns()[b]; });
    const ModularMatrix reference = row_space_basis_modulo(m, prime);
    ASSERT_EQ(reference.rows(), rows.rows());
    for (std::size_t r = 0; r < rows.rows(); ++r) EXPECT_EQ(rows.row(order[r]), reference.row(r)) << prime << " row " << r;
    for (std::size_t r = 0; r < m.rows(); ++r) EXPECT_FALSE(basis.passes_screen(m.row(r))) << prime << " row " << r;
  }
}

// The kernel of the same matrix: cols - rank rows, each annihilating M
// (checked by 128-bit products here), in reduced echelon form.
TEST(KernelBasisModulo, ManyBlocksAnnihilateInEchelonForm) {
  std::mt19937_64 random(53);
  const std::uint64_t prime = primary_prime();
  const ModularMatrix m = random_modular_matrix_of_rank(random, 600, 470, 500, prime);
  const ModularMatrix kernel = kernel_basis_modulo(m, prime);
  ASSERT_EQ(kernel.rows(), 500u - 470u);
  std::size_t previous = 0;
  for (std::size_t k = 0; k < kernel.rows(); ++k) {
    std::size_t lead = 0;
    while (kernel(k, lead) == 0) ++lead;
    ASSERT_EQ(kernel(k, lead), 1u);
    if (k > 0) {
      ASSERT_GT(lead, previous);
    }
    previous = lead;
    for (std::size_t r = 0; r < m.rows(); ++r) {
      Wide sum = 0;
      for (std::size_t c = 0; c < m.cols(); ++c) sum = (sum + static_cast<Wide>(m(r, c)) * kernel(k, c)) % prime;
      ASSERT_EQ(static_cast<std::uint64_t>(sum), 0u) << "kernel row " << k << ", matrix row " << r;
    }
  }
}

// A stop request acts inside the elimination: Stopped, not a result.
TEST(KernelBasisModulo, StopsWhenAsked) {
  std::mt19937_64 random(59);
  const std::uint64_t prime = primary_prime();
  const ModularMatrix m = random_modular_matrix_of_rank(random, 300, 200, 260, prime);
  std::atomic<bool> interrupt{true};
  const StopRequest request(&interrupt, 0);
  const StopScope scope(request);
  EXPECT_THROW(kernel_basis_modulo(m, prime), Stopped);
  EXPECT_THROW(row_space_basis_modulo(m, prime), Stopped);
}

// After every add (not only at the end), the rank rises exactly when the
// row lies outside the span, the rows read back are the reduced echelon form
// of what was added (FLINT's, row_space_basis_modulo, in pivot order), and
// contains and the screen tell each row's side of the span.
TEST(ModularRowBasis, IsTheEchelonFormOfWhatWasAddedAfterEveryAdd) {
  std::mt19937_64 random(61);
  const std::uint64_t prime = primary_prime();
  const ModularMatrix m = random_modular_matrix_of_rank(random, 80, 45, 60, prime);
  ModularRowBasis basis(prime, m.cols());
  ModularMatrix added(0, m.cols());
  for (std::size_t r = 0; r < m.rows(); ++r) {
    const std::size_t rank_before = basis.rank();
    const bool is_outside = !basis.contains(m.row(r));
    EXPECT_EQ(basis.passes_screen(m.row(r)), is_outside) << "row " << r;
    EXPECT_EQ(basis.add_row(m.row(r)), is_outside) << "row " << r;
    added.append_row(m.row(r));
    const ModularMatrix reference = row_space_basis_modulo(added, prime);
    ASSERT_EQ(basis.rank(), reference.rows()) << "row " << r;
    ASSERT_EQ(basis.rank(), rank_before + (is_outside ? 1 : 0));
    const ModularMatrix rows = basis.rows();
    std::vector<std::size_t> order(rows.rows());
    std::iota(order.begin(), order.end(), 0);
    std::sort(order.begin(), order.end(),
              [&](std::size_t a, std::size_t b) { return basis.pivot_columns()[a] < basis.pivot_columns()[b]; });
    for (std::size_t i = 0; i < rows.rows(); ++i) ASSERT_EQ(rows.row(order[i]), reference.row(i)) << "row " << r;
    for (std::size_t s = 0; s <= r; ++s) {
      ASSERT_TRUE(basis.contains(m.row(s)));
      ASSERT_FALSE(basis.passes_screen(m.row(s)));
    }
  }
  EXPECT_EQ(basis.rank(), 45u);
}

// The screen reads a row in place (a matrix's row, no copy) as it reads the
// row copied out, before and after rows are kept one at a time and in
// blocks; a row of the wrong length is refused.
TEST(ModularRowBasis, TheScreenReadsARowInPlace) {
  std::mt19937_64 random(67);
  const std::uint64_t prime = primary_prime();
  const ModularMatrix m = random_modular_matrix_of_rank(random, 60, 30, 40, prime);
  ModularRowBasis basis(prime, m.cols());
  const auto agree = [&] {
    for (std::size_t r = 0; r < m.rows(); ++r) {
      const bool in_place = basis.passes_screen({&m(r, 0), m.cols()});
      ASSERT_EQ(in_place, basis.passes_screen(m.row(r))) << "row " << r;
      ASSERT_EQ(in_place, !basis.contains(m.row(r))) << "row " << r;
    }
  };
  agree();
  for (std::size_t r = 0; r < 20; ++r) basis.add_row(m.row(r));
  agree();
  std::vector<ModularVector> rest;
  for (std::size_t r = 20; r < m.rows(); ++r) rest.push_back(m.row(r));
  std::vector<bool> kept(rest.size());
  basis.add_rows(rest, m.cols(), kept);
  EXPECT_EQ(basis.rank(), 30u);
  agree();
  const ModularVector short_row(m.cols() - 1, 0);
  EXPECT_THROW((void)basis.passes_screen(short_row), usage_error);
}

TEST(ModularRowBasis, RowsSpanWhatWasAdded) {
  std::mt19937_64 random(43);
  const std::uint64_t prime = primary_prime();
  const RationalMatrix m = random_product(random, 7, 4, 9);
  const ModularMatrix image = *reduce_modulo(m, prime);
  ModularRowBasis basis(prime, 9);
  for (std::size_t r = 0; r < image.rows(); ++r) basis.add_row(image.row(r));
  EXPECT_EQ(basis.rows().rows(), 4u);
  EXPECT_EQ(kernel_basis_modulo(basis.rows(), prime), kernel_basis_modulo(image, prime));
}

// The screen of add_row_screened is orthogonal to every kept row after any
// sequence of adds (its incremental update), so it stops every row of the
// span and lets rows outside it through; screened and plain adds then keep
// the same rows and reach the same basis. A wrong update of the screen would
// let combinations of kept rows through (w . row != 0).
TEST(ModularRowBasis, ScreenStopsTheSpanAndKeepsWhatAddRowKeeps) {
  std::mt19937_64 random(47);
  for (std::uint64_t prime : {primary_prime(), screening_prime(), std::uint64_t{1000003}}) {
    for (int trial = 0; trial < 6; ++trial) {
      const std::size_t cols = 20 + random() % 30, inner = 5 + random() % 15, rows = 3 * inner;
      const ModularMatrix image = *reduce_modulo(random_product(random, rows, inner, cols), prime);
      ModularRowBasis plain(prime, cols), screened(prime, cols);
      for (std::size_t r = 0; r < rows; ++r) {
        const bool rose = plain.add_row(image.row(r));
        EXPECT_EQ(screened.add_row_screened(image.row(r)), rose) << "row " << r;
        // Every row added so far is in the span now: the screen stops it.
        for (std::size_t s = 0; s <= r; ++s) EXPECT_FALSE(screened.passes_screen(image.row(s)));
        // A unit vector at a free column lies outside the span.
        if (screened.rank() < cols) {
          std::vector<bool> pivot(cols, false);
          for (std::size_t c : screened.pivot_columns()) pivot[c] = true;
          ModularVector unit(cols, 0);
          unit[static_cast<std::size_t>(std::find(pivot.begin(), pivot.end(), false) - pivot.begin())] = 1;
          EXPECT_FALSE(screened.contains(unit));
          EXPECT_TRUE(screened.passes_screen(unit));
        }
      }
      EXPECT_EQ(screened.rank(), inner);
      EXPECT_EQ(screened.pivot_columns(), plain.pivot_columns());
      EXPECT_EQ(screened.rows(), plain.rows());
    }
  }
}

// add_rows keeps exactly the rows add_row would, one by one, and leaves the
// same basis (pivots in the same order, the same echelon rows, a screen that
// stops the span), however the rows fall into its blocks of 16: fewer rows
// than a block, several blocks, dependent rows among them, and a rank limit
// that stops it part-way (the rows after it untouched). Rows go in calls of
// random sizes after a few plain adds, as certify's points phase mixes them.
// Through a parallel hook that runs the bodies on three threads in a shuffled
// order, and without one.
TEST(ModularRowBasis, AddRowsKeepsWhatAddRowKeeps) {
  std::mt19937_64 random(71);
  const ModularRowBasis::ParallelFor three_threads = [](std::size_t count,
                                                        const std::function<void(std::size_t)>& body) {
    std::atomic<std::size_t> next{0};
    const auto work = [&] {
      for (std::size_t i; (i = next.fetch_add(1)) < count;) body(count - 1 - i);
    };
    std::thread a(work), b(work);
    work();
    a.join();
    b.join();
  };
  for (std::uint64_t prime : {primary_prime(), std::uint64_t{1000003}}) {
    for (int trial = 0; trial < 8; ++trial) {
      const ModularRowBasis::ParallelFor parallel = trial % 2 ? three_threads : ModularRowBasis::ParallelFor();
      const std::size_t cols = 30 + random() % 60, inner = 10 + random() % 40, rows = inner + 20;
      const ModularMatrix image = *reduce_modulo(random_product(random, rows, inner, cols), prime);
      const std::size_t limit = trial % 3 == 2 ? inner - 3 : cols;
      ModularRowBasis plain(prime, cols), blocked(prime, cols);
      std::size_t r = 0;
      for (; r < 3; ++r) {
        plain.add_row(image.row(r));
        blocked.add_row(image.row(r));
      }
      while (r < rows) {
        const std::size_t count = std::min<std::size_t>(rows - r, 1 + random() % 120);
        std::vector<ModularVector> chunk;
        for (std::size_t k = 0; k < count; ++k) chunk.push_back(image.row(r + k));
        std::vector<bool> kept;
        const std::size_t considered = blocked.add_rows(chunk, limit, kept, parallel);
        ASSERT_EQ(kept.size(), count);
        std::size_t k = 0;
        for (; k < count && plain.rank() < limit; ++k)
          EXPECT_EQ(kept[k], plain.add_row(image.row(r + k))) << "row " << r + k;
        ASSERT_EQ(considered, k);
        for (; k < count; ++k) EXPECT_FALSE(kept[k]);
        ASSERT_EQ(blocked.rank(), plain.rank());
        ASSERT_EQ(blocked.pivot_columns(), plain.pivot_columns());
        ASSERT_EQ(blocked.rows(), plain.rows());
        for (std::size_t s = 0; s < r + considered; ++s) EXPECT_FALSE(blocked.passes_screen(image.row(s)));
        if (considered < count) break;
        r += count;
      }
      EXPECT_EQ(blocked.rank(), std::min(inner, limit));
    }
  }
}

// Rational reconstruction recovers a known matrix once the product of the
// primes exceeds 2 N D (one 62-bit prime is not enough for entries near
// 2^40 / 2^30; three are), and not from too few primes.
TEST(RationalReconstruction, RecoversAMatrixFromEnoughImages) {
  RationalMatrix m(2, 3);
  m(0, 0) = Rational(Integer("1099511627775"), Integer("1073741823"));  // 2^40-1 / 2^30-1
  m(0, 2) = Rational(-7, 3);
  m(1, 1) = Rational(Integer("-123456789012345"), Integer("987654321"));
  for (std::size_t r = 0; r < 2; ++r)
    for (std::size_t c = 0; c < 3; ++c) m(r, c).canonicalize();
  RationalReconstruction lifting(2, 3);
  lifting.add_image(*reduce_modulo(m, prime_sequence(0)), prime_sequence(0));
  const auto too_early = lifting.reconstruct();
  EXPECT_TRUE(!too_early || *too_early != m);
  lifting.add_image(*reduce_modulo(m, prime_sequence(1)), prime_sequence(1));
  lifting.add_image(*reduce_modulo(m, prime_sequence(2)), prime_sequence(2));
  EXPECT_EQ(lifting.primes(), 3u);
  ASSERT_TRUE(lifting.reconstruct().has_value());
  EXPECT_EQ(*lifting.reconstruct(), m);
  EXPECT_THROW(lifting.add_image(ModularMatrix(1, 3), prime_sequence(3)), usage_error);
}

TEST(Primes, SequenceIsDistinctFromTheFixedPrimes) {
  for (std::size_t i = 0; i < 20; ++i) {
    EXPECT_NE(prime_sequence(i), primary_prime());
    EXPECT_NE(prime_sequence(i), screening_prime());
    if (i > 0) {
      EXPECT_GT(prime_sequence(i), prime_sequence(i - 1));
    }
  }
}

}  // namespace
}  // namespace pleat
