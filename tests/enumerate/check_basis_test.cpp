// Another basis of the kernel check's vectors (enumerate/detail/check_basis.hpp):
// rows sharing a part with large entries up to a factor come out with that
// part cancelled, the rows span exactly the space they spanned (also when
// they are dependent), no row costs more, and rows with small entries are
// left alone.
#include "enumerate/detail/check_basis.hpp"

#include "core/matrix.hpp"
#include "core/rank.hpp"

#include <gtest/gtest.h>

#include <cstddef>
#include <random>
#include <vector>

namespace pleat::detail {
namespace {

RationalMatrix dense(const std::vector<IntegerEntries>& rows, std::size_t cols) {
  RationalMatrix out(rows.size(), cols);
  for (std::size_t r = 0; r < rows.size(); ++r)
    for (const auto& [c, value] : rows[r]) out(r, c) = Rational(value);
  return out;
}

RationalMatrix stacked(const RationalMatrix& a, const RationalMatrix& b) {
  RationalMatrix out(0, a.cols());
  for (std::size_t r = 0; r < a.rows(); ++r) out.append_row(a.row(r));
  for (std::size_t r = 0; r < b.rows(); ++r) out.append_row(b.row(r));
  return out;
}

IntegerEntries sparse(const std::vector<Integer>& values) {
  IntegerEntries out;
  for (std::size_t c = 0; c < values.size(); ++c)
    if (sgn(values[c]) != 0) out.emplace_back(c, values[c]);
  return out;
}

std::size_t total_cost(const std::vector<IntegerEntries>& rows) {
  std::size_t total = 0;
  for (const IntegerEntries& row : rows) total += check_cost(row);
  return total;
}

// Rows s_i + a_i t: s_i a few small entries on columns 0..19, t 20 entries
// of about 300 bits on columns 20..39, a_i small; then a row with small
// entries only, and (dependent) the sum of the first two.
std::vector<IntegerEntries> rows_sharing_a_tail(std::mt19937_64& random, bool dependent) {
  const std::size_t cols = 40;
  std::vector<Integer> tail(cols, 0);
  for (std::size_t c = 20; c < cols; ++c) {
    tail[c] = Integer(static_cast<unsigned long>(random() | 1)) << 290;
    tail[c] += static_cast<unsigned long>(random() % 1000);
  }
  std::vector<std::vector<Integer>> rows;
  for (std::size_t i = 0; i < 4; ++i) {
    std::vector<Integer> row(cols, 0);
    for (int e = 0; e < 4; ++e) row[random() % 20] = static_cast<long>(random() % 199) - 99;
    row[i] = 1;  // independent
    const long factor = static_cast<long>(random() % 9) + 1;
    for (std::size_t c = 20; c < cols; ++c) row[c] += factor * tail[c];
    rows.push_back(row);
  }
  std::vector<Integer> small(cols, 0);
  small[5] = 3;
  small[31] = -7;
  rows.push_back(small);
  if (dependent) {
    std::vector<Integer> sum(cols);
    for (std::size_t c = 0; c < cols; ++c) sum[c] = rows[0][c] + rows[1][c];
    rows.push_back(sum);
  }
  std::vector<IntegerEntries> out;
  for (const auto& row : rows) out.push_back(sparse(row));
  return out;
}

TEST(CheckBasis, SharedLargePartsAreCancelledAndTheSpanIsTheSame) {
  std::mt19937_64 random(5);
  for (int trial = 0; trial < 20; ++trial) {
    const bool dependent = trial % 2 == 1;
    const std::vector<IntegerEntries> before = rows_sharing_a_tail(random, dependent);
    std::vector<IntegerEntries> after = before;
    lower_check_cost(after);
    ASSERT_EQ(after.size(), before.size());
    const RationalMatrix a = dense(before, 40), b = dense(after, 40);
    const std::size_t rank = rank_exact(a);
    EXPECT_EQ(rank, 5u);
    EXPECT_EQ(rank_exact(b), rank) << "trial " << trial;
    EXPECT_EQ(rank_exact(stacked(a, b)), rank) << "trial " << trial;  // the same span
    for (std::size_t r = 0; r < before.size(); ++r) EXPECT_LE(check_cost(after[r]), check_cost(before[r]));
    // One row keeps the tail; the other three independent ones lose it.
    std::size_t with_large = 0;
    for (const IntegerEntries& row : after)
      for (const auto& [c, value] : row)
        if (mpz_sizeinbase(value.get_mpz_t(), 2) > 64) {
          ++with_large;
          break;
        }
    EXPECT_EQ(with_large, 1u) << "trial " << trial;
    EXPECT_LT(total_cost(after), total_cost(before) / 2);
    EXPECT_EQ(after[4], before[4]);  // small entries only: left alone
  }
}

TEST(CheckBasis, RowsWithoutLargeEntriesOrAloneAreLeftAlone) {
  std::vector<IntegerEntries> small = {sparse({1, 2, 0, 3}), sparse({2, 4, 0, 6}), sparse({0, 0, 5, 0})};
  std::vector<IntegerEntries> copy = small;
  lower_check_cost(copy);
  EXPECT_EQ(copy, small);
  std::vector<IntegerEntries> alone = {sparse({Integer(1) << 200, Integer(3) << 190}), sparse({1, 0, 1})};
  copy = alone;
  lower_check_cost(copy);
  EXPECT_EQ(copy, alone);
}

// count rows u_i + (i + 1) t, u_i a unit vector, t 20 entries of about 300
// bits: every row but one can lose the tail.
std::vector<IntegerEntries> many_rows_sharing_a_tail(std::size_t count) {
  std::mt19937_64 random(11);
  const std::size_t cols = count + 20;
  std::vector<Integer> tail(cols, 0);
  for (std::size_t c = count; c < cols; ++c) tail[c] = Integer(static_cast<unsigned long>(random() | 1)) << 290;
  std::vector<IntegerEntries> rows;
  for (std::size_t i = 0; i < count; ++i) {
    std::vector<Integer> row(cols, 0);
    row[i] = 1;
    for (std::size_t c = count; c < cols; ++c) row[c] = static_cast<long>(i + 1) * tail[c];
    rows.push_back(sparse(row));
  }
  return rows;
}

// The search is quadratic in the rows with large entries, so past
// max_heavy_rows_lowered it is not made (a batch rank's hundreds of kernel
// vectors); at the limit it still is.
TEST(CheckBasis, TooManyRowsWithLargeEntriesAreLeftAlone) {
  const std::vector<IntegerEntries> at_limit = many_rows_sharing_a_tail(max_heavy_rows_lowered);
  std::vector<IntegerEntries> copy = at_limit;
  lower_check_cost(copy);
  EXPECT_LT(total_cost(copy), total_cost(at_limit) / 2);
  const std::vector<IntegerEntries> beyond = many_rows_sharing_a_tail(max_heavy_rows_lowered + 1);
  copy = beyond;
  lower_check_cost(copy);
  EXPECT_EQ(copy, beyond);
}

}  // namespace
}  // namespace pleat::detail
