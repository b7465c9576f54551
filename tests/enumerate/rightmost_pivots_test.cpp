// detail::rightmost_pivots (enumerate/detail/rightmost_pivots.hpp): the
// column rank profile read from the right, modulo a prime, by column blocks,
// against a plain greedy elimination of the columns one at a time; and a stop
// between blocks is honoured before the next one (one FLINT rref of the whole
// system polled nothing: 0.5-1.3 s on certify --points' 569 x 1981 rows).
#include "enumerate/detail/rightmost_pivots.hpp"

#include "core/rank.hpp"
#include "core/stop.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <random>

namespace pleat::detail {
namespace {

using Rows = std::vector<std::vector<Integer>>;
__extension__ typedef unsigned __int128 Wide;  // GCC/Clang: exact 64 x 64 -> 128 products

std::uint64_t residue(const Integer& value, std::uint64_t prime) { return mpz_fdiv_ui(value.get_mpz_t(), prime); }

std::uint64_t power(std::uint64_t base, std::uint64_t exponent, std::uint64_t prime) {
  Wide result = 1, square = base % prime;
  for (; exponent; exponent >>= 1, square = square * square % prime)
    if (exponent & 1) result = result * square % prime;
  return static_cast<std::uint64_t>(result);
}

// The reference: columns from the right, each kept when it is independent
// modulo p of the columns kept before it (they span every column to its
// right), by elimination on column vectors in 128-bit products.
std::vector<std::size_t> greedy_pivots(const Rows& rows, std::uint64_t prime) {
  std::vector<std::vector<std::uint64_t>> basis;  // reduced columns, each with its lead row
  std::vector<std::size_t> leads, pivots;
  const std::size_t height = rows.size(), columns = height ? rows[0].size() : 0;
  for (std::size_t c = columns; c-- > 0;) {
    std::vector<std::uint64_t> v(height);
    for (std::size_t i = 0; i < height; ++i) v[i] = residue(rows[i][c], prime);
    for (std::size_t b = 0; b < basis.size(); ++b) {
      const std::uint64_t factor = v[leads[b]];
      if (factor == 0) continue;
      for (std::size_t i = 0; i < height; ++i)
        v[i] = static_cast<std::uint64_t>((v[i] + static_cast<Wide>(prime - factor) * basis[b][i]) % prime);
    }
    std::size_t lead = 0;
    while (lead < height && v[lead] == 0) ++lead;
    if (lead == height) continue;
    const std::uint64_t inverse = power(v[lead], prime - 2, prime);
    for (std::uint64_t& x : v) x = static_cast<std::uint64_t>(static_cast<Wide>(x) * inverse % prime);
    basis.push_back(std::move(v));
    leads.push_back(lead);
    pivots.push_back(c);
  }
  return pivots;
}

// Rows of random signed entries (some huge, some multiples of p), with zero
// columns, repeated columns and rows that are sums of earlier rows: rank
// deficient in most blocks.
Rows random_rows(std::mt19937_64& random, std::size_t height, std::size_t columns, std::uint64_t prime) {
  Rows rows(height, std::vector<Integer>(columns));
  for (std::size_t i = 0; i < height; ++i) {
    if (i >= 2 && random() % 4 == 0) {
      for (std::size_t c = 0; c < columns; ++c) rows[i][c] = rows[i - 1][c] - 3 * rows[i - 2][c];
      continue;
    }
    for (std::size_t c = 0; c < columns; ++c) {
      const unsigned kind = static_cast<unsigned>(random() % 8);
      Integer& value = rows[i][c];
      if (kind < 3) value = 0;
      else if (kind == 3) value = Integer(static_cast<unsigned long>(random() % 7) + 1) * Integer(static_cast<unsigned long>(prime));
      else if (kind == 4) value = (Integer(static_cast<unsigned long>(random())) << 200) - static_cast<unsigned long>(random());
      else value = static_cast<long>(random() % 41) - 20;
    }
  }
  for (std::size_t c = 0; c + 1 < columns; ++c) {
    if (random() % 5 == 0)
      for (auto& row : rows) row[c] = 0;
    else if (random() % 5 == 0)
      for (auto& row : rows) row[c] = row[c + 1];
  }
  return rows;
}

TEST(RightmostPivots, EqualTheGreedyColumnsFromTheRightAcrossBlockEdges) {
  std::mt19937_64 random(7);
  const std::size_t block = pivot_column_block;
  const std::vector<std::pair<std::size_t, std::size_t>> shapes = {
      {1, 1}, {1, 5}, {3, 2}, {5, 5}, {4, block - 1}, {9, block}, {9, block + 1}, {40, 2 * block - 1},
      {40, 2 * block}, {40, 2 * block + 1}, {150, 2 * block + 3}, {200, 4 * block + 1}, {300, 260}};
  std::size_t cases = 0;
  for (const std::uint64_t prime : {std::uint64_t{2}, std::uint64_t{5}, std::uint64_t{65537}, primary_prime()})
    for (const auto& [height, columns] : shapes) {
      const Rows rows = random_rows(random, height, columns, prime);
      SCOPED_TRACE(std::to_string(height) + " x " + std::to_string(columns) + " modulo " + std::to_string(prime));
      EXPECT_EQ(rightmost_pivots(rows, prime), greedy_pivots(rows, prime));
      ++cases;
    }
  EXPECT_EQ(cases, 52u);
  EXPECT_TRUE(rightmost_pivots({}, 5).empty());
  // Every column independent: the last `height` columns.
  Rows identity(130, std::vector<Integer>(300));
  for (std::size_t i = 0; i < 130; ++i) identity[i][299 - i] = 1;
  std::vector<std::size_t> last;
  for (std::size_t c = 300; c-- > 170;) last.push_back(c);
  EXPECT_EQ(rightmost_pivots(identity, primary_prime()), last);
}

// An interrupt raised while block k is reported stops the elimination before
// block k + 1 (Stopped propagates), at every k.
TEST(RightmostPivots, AStopBetweenBlocksIsHonouredBeforeTheNextBlock) {
  std::mt19937_64 random(11);
  const Rows rows = random_rows(random, 100, 5 * pivot_column_block, primary_prime());
  std::size_t blocks = 0;
  (void)rightmost_pivots(rows, primary_prime(), [&](std::size_t done, std::size_t total) {
    EXPECT_EQ(done, blocks * pivot_column_block);
    EXPECT_EQ(total, 5 * pivot_column_block);
    ++blocks;
  });
  ASSERT_GE(blocks, 2u);  // 100 rows of rank at most 100 < 5 blocks: it ends when the rows are used up
  for (std::size_t k = 0; k < blocks; ++k) {
    std::atomic<bool> interrupt{false};
    const StopRequest request(&interrupt, 0);
    const StopScope scope(request);
    std::size_t calls = 0;
    try {
      (void)rightmost_pivots(rows, primary_prime(), [&](std::size_t, std::size_t) {
        if (calls++ == k) interrupt = true;
      });
      ADD_FAILURE() << "not stopped at block " << k;
    } catch (const Stopped& stopped) {
      EXPECT_EQ(stopped.reason(), StopReason::interrupted);
    }
    EXPECT_EQ(calls, k + 1);
  }
}

}  // namespace
}  // namespace pleat::detail
