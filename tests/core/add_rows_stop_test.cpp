// ModularRowBasis::add_rows polls its stop before each chunk of rows
// (certify's points stage: one call for a batch ran up to a second past
// --time-limit on 3,40,40,40,1 when it polled none). With a stop never
// requested the basis must be what a call without one leaves, and a stop must
// act after the chunk it came in, not after the batch.
#include "core/rank.hpp"
#include "core/stop.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <cstdint>
#include <functional>
#include <random>
#include <vector>

namespace pleat {
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

TEST(AddRowsStop, WithAStopNeverRequestedTheBasisIsACallWithoutOneAtEveryRankLimit) {
  const std::uint64_t prime = primary_prime();
  const std::vector<ModularVector> rows = mixed_rows(prime);
  for (const std::size_t limit : {std::size_t{5}, std::size_t{48}, std::size_t{97}, std::size_t{1000}}) {
    ModularRowBasis stoppable(prime, 160), whole(prime, 160);
    std::vector<bool> stoppable_kept, whole_kept;
    const StopRequest never;
    const std::size_t considered = stoppable.add_rows(rows, limit, stoppable_kept, serially, &never);
    EXPECT_EQ(considered, whole.add_rows(rows, limit, whole_kept, serially)) << "limit " << limit;
    EXPECT_EQ(stoppable_kept, whole_kept) << "limit " << limit;
    EXPECT_EQ(stoppable.pivot_columns(), whole.pivot_columns()) << "limit " << limit;
    EXPECT_TRUE(stoppable.rows() == whole.rows()) << "limit " << limit;
  }
}

TEST(AddRowsStop, AStopInTheFirstChunkEndsTheRowsAfterIt) {
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
  EXPECT_EQ(basis.add_rows(rows, 1000, kept, stopping, &stop), 48u);  // add_rows' chunk (core/modular_basis.cpp)
  first_chunk.add_rows(std::vector<ModularVector>(rows.begin(), rows.begin() + 48), 1000, first_kept, serially);
  EXPECT_EQ(basis.rank(), first_chunk.rank());
  EXPECT_TRUE(basis.rows() == first_chunk.rows());
  ASSERT_EQ(kept.size(), rows.size());
  for (std::size_t k = 0; k < rows.size(); ++k) EXPECT_EQ(kept[k], k < 48 && first_kept[k]) << "row " << k;
  // Stopped before: nothing is added.
  ModularRowBasis untouched(prime, 160);
  EXPECT_EQ(untouched.add_rows(rows, 1000, kept, serially, &stop), 0u);
  EXPECT_EQ(untouched.rank(), 0u);
}

}  // namespace
}  // namespace pleat
