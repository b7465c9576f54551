// detail::rows_in_span (enumerate/detail/span_proof.hpp): rows built as
// rational combinations of kept rows are proved in their span; a row
// altered in one entry, on a pivot column or off it (where the solve does
// not look, only the exact check), in any chunk, is refused.
#include "enumerate/detail/span_proof.hpp"

#include "core/stop.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <random>

namespace pleat::detail {
namespace {

constexpr std::size_t columns = 12;

// Integers of about 100 bits, so that the solve lifts several p-adic digits.
Integer large_integer(std::mt19937_64& random) {
  Integer value = static_cast<long>(random() % 2001) - 1000;
  value *= Integer(1) << 90;
  value += static_cast<unsigned long>(random() % 1000003);
  return value;
}

std::vector<IntegerRow> kept_rows(std::mt19937_64& random, std::size_t count) {
  std::vector<IntegerRow> rows(count, IntegerRow(columns));
  for (IntegerRow& row : rows)
    for (Integer& value : row) value = large_integer(random);
  return rows;
}

// Rows sum_i c_i kept[i] with small integer c_i; the caller then scales the
// kept rows by 7, so that the coefficients become c_i / 7 (not integers).
std::vector<IntegerRow> combinations(std::mt19937_64& random, const std::vector<IntegerRow>& kept, std::size_t count) {
  std::vector<IntegerRow> rows(count, IntegerRow(columns));
  for (IntegerRow& row : rows)
    for (const IntegerRow& source : kept) {
      const long coefficient = static_cast<long>(random() % 11) - 5;
      for (std::size_t c = 0; c < columns; ++c) row[c] += coefficient * source[c];
    }
  return rows;
}

std::vector<IntegerRow> times_seven(std::vector<IntegerRow> rows) {
  for (IntegerRow& row : rows)
    for (Integer& value : row) value *= 7;
  return rows;
}

// The first kept.size() columns: nonsingular for random kept rows (checked
// by the true cases below, which would fail otherwise).
std::vector<std::size_t> leading_pivots(std::size_t count) {
  std::vector<std::size_t> pivots;
  for (std::size_t c = 0; c < count; ++c) pivots.push_back(c);
  return pivots;
}

TEST(SpanProof, CombinationsOfTheKeptRowsAreInTheirSpan) {
  std::mt19937_64 random(1);
  const std::vector<IntegerRow> base = kept_rows(random, 5);
  const std::vector<IntegerRow> others = combinations(random, base, 9);
  const std::vector<IntegerRow> kept = times_seven(base);
  EXPECT_TRUE(rows_in_span(kept, leading_pivots(5), others));
  EXPECT_TRUE(rows_in_span(kept, leading_pivots(5), others, {}, 2));  // five chunks
  EXPECT_TRUE(rows_in_span(kept, leading_pivots(5), {}));
}

// The race's probe (batch_dimension.cpp): the digits one row's
// coefficients take, nullopt below them; it proves nothing, and the proof
// after it (the same solver, its LU kept) still proves the combinations and
// still refuses a row altered in one entry.
TEST(SpanProof, AProbeCountsDigitsAndTheProofAfterItIsStillExact) {
  std::mt19937_64 random(3);
  const std::vector<IntegerRow> base = kept_rows(random, 10);  // 10 unknowns: the p-adic lifting
  std::vector<IntegerRow> others = combinations(random, base, 5);
  const std::vector<IntegerRow> kept = times_seven(base);
  const std::vector<std::size_t> pivots = leading_pivots(10);
  SpanProof span(kept, pivots);
  const std::optional<std::size_t> digits = span.probe_digits(others[0], SquareSolver::unlimited);
  ASSERT_TRUE(digits.has_value());
  ASSERT_GE(*digits, 1u);
  EXPECT_EQ(span.digits(), *digits);
  EXPECT_FALSE(span.probe_digits(others[0], 0).has_value());
  EXPECT_EQ(span.probe_digits(others[0], *digits), digits);
  EXPECT_TRUE(span.prove(others, {}, 2));
  others[3][11] += 1;  // off the pivots: only the exact check sees it
  EXPECT_FALSE(span.prove(others, {}, 2));
  others[3][11] -= 1;
  others[4][0] += 1;  // on a pivot
  EXPECT_FALSE(span.prove(others));
}

TEST(SpanProof, ARowAlteredInOneEntryIsRefused) {
  std::mt19937_64 random(2);
  const std::vector<IntegerRow> base = kept_rows(random, 5);
  const std::vector<IntegerRow> others = combinations(random, base, 7);
  const std::vector<IntegerRow> kept = times_seven(base);
  for (std::size_t row : {0u, 6u})
    for (std::size_t column : {1u, 4u, 5u, 11u}) {  // pivot columns 1 and 4; 5 and 11 are checked only exactly
      std::vector<IntegerRow> altered = others;
      altered[row][column] += 1;
      SCOPED_TRACE("row " + std::to_string(row) + ", column " + std::to_string(column));
      EXPECT_FALSE(rows_in_span(kept, leading_pivots(5), altered));
      EXPECT_FALSE(rows_in_span(kept, leading_pivots(5), altered, {}, 3));  // in the first or the last chunk
    }
}

// Rows wider than the exact check's blocks of 256 columns of K (the rows of
// a network of more than 256 parameters): an entry altered in any block, at
// either side of a block's border, is refused; the rows as they are proved.
TEST(SpanProof, RowsWiderThanTheChecksBlocksAreCheckedOnEveryColumn) {
  for (std::size_t wide : {255u, 256u, 257u, 512u, 513u, 600u}) {  // blocks of 256 columns: around their edges
    std::mt19937_64 random(4);
    std::vector<IntegerRow> base(3, IntegerRow(wide));
    for (IntegerRow& row : base)
      for (Integer& value : row) value = static_cast<long>(random() % 2001) - 1000;
    std::vector<IntegerRow> others(4, IntegerRow(wide));
    for (IntegerRow& row : others)
      for (const IntegerRow& source : base) {
        const long coefficient = static_cast<long>(random() % 11) - 5;
        for (std::size_t c = 0; c < wide; ++c) row[c] += coefficient * source[c];
      }
    const std::vector<IntegerRow> kept = times_seven(base);
    SCOPED_TRACE("width " + std::to_string(wide));
    EXPECT_TRUE(rows_in_span(kept, leading_pivots(3), others));
    for (std::size_t column : {0u, 3u, 254u, 255u, 256u, 257u, 511u, 512u, 599u}) {
      if (column >= wide) continue;
      for (std::size_t row : {0u, 3u}) {
        std::vector<IntegerRow> altered = others;
        altered[row][column] += 1;
        SCOPED_TRACE("row " + std::to_string(row) + ", column " + std::to_string(column));
        EXPECT_FALSE(rows_in_span(kept, leading_pivots(3), altered));
      }
    }
    std::vector<IntegerRow> last = others;  // the last column of the last block
    last[2][wide - 1] -= 1;
    EXPECT_FALSE(rows_in_span(kept, leading_pivots(3), last));
  }
}

TEST(SpanProof, WithoutKeptRowsOnlyZeroRowsAreInTheSpan) {
  const std::vector<IntegerRow> zero(2, IntegerRow(columns));
  EXPECT_TRUE(rows_in_span({}, {}, zero));
  std::vector<IntegerRow> one = zero;
  one[1][7] = 1;
  EXPECT_FALSE(rows_in_span({}, {}, one));
}

TEST(SpanProof, ProgressCountsTheRowsProvedAndAStopIsHonouredBetweenChunks) {
  std::mt19937_64 random(3);
  const std::vector<IntegerRow> kept = kept_rows(random, 4);
  const std::vector<IntegerRow> others = combinations(random, kept, 10);
  std::vector<std::size_t> done;
  EXPECT_TRUE(rows_in_span(kept, leading_pivots(4), others, [&](std::size_t now, std::size_t total) {
    EXPECT_EQ(total, 10u);
    done.push_back(now);
    return true;
  }, 4));
  EXPECT_EQ(done, (std::vector<std::size_t>{0, 4, 8}));
  std::atomic<bool> interrupt{false};
  const StopRequest request(&interrupt, 0);
  const StopScope scope(request);
  EXPECT_THROW(rows_in_span(kept, leading_pivots(4), others, [&](std::size_t, std::size_t) {
    interrupt = true;
    return true;
  }, 4), Stopped);
}

// A caller giving up before the last chunk has no proof, though every row
// is in the span.
TEST(SpanProof, GivingUpIsNoProof) {
  std::mt19937_64 random(4);
  const std::vector<IntegerRow> kept = kept_rows(random, 4);
  const std::vector<IntegerRow> others = combinations(random, kept, 10);
  std::size_t calls = 0;
  EXPECT_FALSE(rows_in_span(kept, leading_pivots(4), others, [&](std::size_t done, std::size_t) {
    ++calls;
    return done < 8;
  }, 4));
  EXPECT_EQ(calls, 3u);
}

}  // namespace
}  // namespace pleat::detail
