// The p-adic solve's triangular solves modulo a word prime
// (enumerate/detail/modular_substitution.hpp) against FLINT's: the same
// residues as nmod_mat_solve_tril, the product by D^-1 and
// nmod_mat_solve_triu, on random factorizations of several sizes, column
// counts (one to nine: blocks of four and their rests) and primes (the
// lifting's below 2^62, one below 2^64, a small one), and the solution
// solves the system.
#include "enumerate/detail/modular_substitution.hpp"

#include "core/detail/flint_matrix.hpp"

#include <flint/nmod_mat.h>
#include <flint/nmod_vec.h>
#include <flint/ulong_extras.h>

#include <gtest/gtest.h>

#include <cstdint>
#include <random>
#include <vector>

namespace pleat::detail {
namespace {

TEST(ModularSubstitution, EqualsFlintsTriangularSolves) {
  std::mt19937_64 random(20261205);
  const std::uint64_t primes[] = {n_nextprime((std::uint64_t{1} << 62) - (std::uint64_t{1} << 36), 1),
                                  n_nextprime(~std::uint64_t{0} - 100000, 1), 65537};
  int compared = 0;
  for (std::uint64_t prime : primes)
    for (std::size_t n : {1, 2, 5, 17, 42, 70})
      for (std::size_t m : {1, 2, 3, 4, 5, 7, 9}) {
        // A random A (a third of its entries zero), factored as the p-adic
        // solve does: PA = LU, U's rows divided by their diagonal.
        NmodMatrix a(n, n, prime);
        for (std::size_t i = 0; i < n; ++i)
          for (std::size_t j = 0; j < n; ++j)
            nmod_mat_entry(a.get(), i, j) = random() % 3 == 0 ? 0 : random() % prime;
        NmodMatrix lu(n, n, prime);
        nmod_mat_set(lu.get(), a.get());
        std::vector<slong> order(n);
        if (nmod_mat_lu(order.data(), lu.get(), 1) != static_cast<slong>(n)) continue;  // singular: next
        const nmod_t mod = lu.get()->mod;
        std::vector<std::uint64_t> inverse_diagonal;
        for (std::size_t i = 0; i < n; ++i) {
          const std::uint64_t inverse = n_invmod(nmod_mat_entry(lu.get(), i, i), prime);
          inverse_diagonal.push_back(inverse);
          for (std::size_t j = i + 1; j < n; ++j)
            nmod_mat_entry(lu.get(), i, j) = nmod_mul(nmod_mat_entry(lu.get(), i, j), inverse, mod);
        }
        NmodMatrix right(n, m, prime), expected(n, m, prime);
        std::vector<std::uint64_t> x(n * m);
        for (std::size_t i = 0; i < n; ++i)
          for (std::size_t c = 0; c < m; ++c)
            x[i * m + c] = nmod_mat_entry(right.get(), i, c) = random() % prime;
        nmod_mat_solve_tril(expected.get(), lu.get(), right.get(), 1);
        for (std::size_t i = 0; i < n; ++i)
          for (std::size_t c = 0; c < m; ++c)
            nmod_mat_entry(expected.get(), i, c) =
                nmod_mul(nmod_mat_entry(expected.get(), i, c), inverse_diagonal[i], mod);
        nmod_mat_solve_triu(expected.get(), lu.get(), expected.get(), 1);
        solve_triangles_modulo(lu.get(), inverse_diagonal.data(), x.data(), n, m);
        for (std::size_t i = 0; i < n; ++i)
          for (std::size_t c = 0; c < m; ++c)
            ASSERT_EQ(x[i * m + c], nmod_mat_entry(expected.get(), i, c))
                << "prime " << prime << ", n " << n << ", m " << m << ", entry " << i << ", " << c;
        // A x = right, row order[i] of right being row i of the LU's.
        for (std::size_t i = 0; i < n; ++i)
          for (std::size_t c = 0; c < m; ++c) {
            std::uint64_t sum = 0;
            for (std::size_t j = 0; j < n; ++j)
              sum = nmod_add(sum, nmod_mul(nmod_mat_entry(a.get(), order[i], j), x[j * m + c], mod), mod);
            ASSERT_EQ(sum, nmod_mat_entry(right.get(), i, c)) << "prime " << prime << ", n " << n << ", m " << m;
          }
        ++compared;
      }
  EXPECT_GT(compared, 100);
}

// Zero right-hand sides give zero, and the rows of the triangles are read
// strictly below and above their diagonal only (the diagonal, here set to
// garbage, is D, applied through inverse_diagonal).
TEST(ModularSubstitution, ReadsOnlyTheStrictTrianglesAndTheInverseDiagonal) {
  const std::uint64_t prime = n_nextprime(std::uint64_t{1} << 61, 1);
  NmodMatrix identity(3, 3, prime);
  for (std::size_t i = 0; i < 3; ++i) nmod_mat_entry(identity.get(), i, i) = 12345 + i;
  const std::vector<std::uint64_t> inverse_diagonal{2, 3, 5};
  std::vector<std::uint64_t> x{0, 7, 0, 11, 0, 13};  // 3 x 2
  solve_triangles_modulo(identity.get(), inverse_diagonal.data(), x.data(), 3, 2);
  EXPECT_EQ(x, (std::vector<std::uint64_t>{0, 14, 0, 33, 0, 65}));
}

}  // namespace
}  // namespace pleat::detail
