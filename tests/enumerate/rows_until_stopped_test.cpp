// certify's points stage adds a batch's rows a chunk at a time, polling the
// stop between (enumerate/detail/rows_until_stopped.hpp): one add_rows call
// for the batch ran up to a second past --time-limit on 3,40,40,40,1. The
// basis must be what one call leaves, and a stop must act after the chunk it
// came in, not after the batch.
#include "enumerate/detail/rows_until_stopped.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <cstdint>
#include <functional>
#include <random>
#include <vector>

namespace pleat::detail {
namespace {

__extension__ typedef unsigned __int128 Wide;

// 300 rows of 160 columns: random combinations of 120 random rows, so that
// about 120 raise the rank and the rest are dependent, mixed.
std::vector<ModularVector> mixed_rows(std::uint64_t prime) {
  std::mt19937_64 random(7);
  std::vector<ModularVector> generators(120, ModularVector(160));
  for (auto& row : generators)
    for (auto& entry : row) entry = random() % prime;
  std::vector<ModularVector> rows;
  for (std::size_t k = 0; k < 300; ++k) {
    ModularVector row(160, 0);
    for (std::size_t g = 0; g < (k % 3 == 0 ? 120 : 3); ++g) {
      const ModularVector& generator = generators[random() % generators.size()];
      const Wide factor = random() % prime;
      for (std::size_t c = 0; c < row.size(); ++c)
        row[c] = static_cast<std::uint64_t>((row[c] + factor * generator[c]) % prime);
    }
    rows.push_back(std::move(row));
  }
  return rows;
}

void serially(std::size_t count, const std::function<void(std::size_t)>& body) {
  for (std::size_t i = 0; i < count; ++i) body(i);
}

TEST(RowsUntilStopped, WithoutAStopTheBasisIsOneAddRowsCallsAtEveryRankLimit) {
  const std::uint64_t prime = primary_prime();
  const std::vector<ModularVector> rows = mixed_rows(prime);
  for (const std::size_t limit : {std::size_t{5}, std::size_t{48}, std::size_t{97}, std::size_t{1000}}) {
    ModularRowBasis chunked(prime, 160), whole(prime, 160);
    std::vector<bool> chunked_kept, whole_kept;
    const std::size_t considered = add_rows_until_stopped(chunked, rows, limit, chunked_kept, serially, StopRequest());
    EXPECT_EQ(considered, whole.add_rows(rows, limit, whole_kept, serially)) << "limit " << limit;
    EXPECT_EQ(chunked_kept, whole_kept) << "limit " << limit;
    EXPECT_EQ(chunked.pivot_columns(), whole.pivot_columns()) << "limit " << limit;
    EXPECT_TRUE(chunked.rows() == whole.rows()) << "limit " << limit;
  }
}

TEST(RowsUntilStopped, AStopInTheFirstChunkEndsTheRowsAfterIt) {
  const std::uint64_t prime = primary_prime();
  const std::vector<ModularVector> rows = mixed_rows(prime);
  std::atomic<bool> interrupt{false};
  const StopRequest stop(&interrupt, 0);
  // The stop comes while the first chunk's residuals are computed.
  const auto stopping = [&](std::size_t count, const std::function<void(std::size_t)>& body) {
    interrupt = true;
    serially(count, body);
  };
  ModularRowBasis basis(prime, 160), first_chunk(prime, 160);
  std::vector<bool> kept, first_kept;
  EXPECT_EQ(add_rows_until_stopped(basis, rows, 1000, kept, stopping, stop), 48u);
  first_chunk.add_rows(std::vector<ModularVector>(rows.begin(), rows.begin() + 48), 1000, first_kept, serially);
  EXPECT_EQ(basis.rank(), first_chunk.rank());
  EXPECT_TRUE(basis.rows() == first_chunk.rows());
  ASSERT_EQ(kept.size(), rows.size());
  for (std::size_t k = 0; k < rows.size(); ++k) EXPECT_EQ(kept[k], k < 48 && first_kept[k]) << "row " << k;
  // Stopped before: nothing is added.
  ModularRowBasis untouched(prime, 160);
  EXPECT_EQ(add_rows_until_stopped(untouched, rows, 1000, kept, serially, stop), 0u);
  EXPECT_EQ(untouched.rank(), 0u);
}

}  // namespace
}  // namespace pleat::detail
