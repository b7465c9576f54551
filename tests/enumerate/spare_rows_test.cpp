// SpareRows (enumerate/detail/row_backlog.hpp): certify's kept rows copied
// into vectors made ahead on another thread hold the same values as a plain
// copy, whether a spare waits or not, and at most `depth` wait.
#include "enumerate/detail/row_backlog.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <cstdint>
#include <thread>
#include <vector>

namespace pleat {
namespace {

std::vector<std::uint64_t> numbered_row(std::size_t columns, std::uint64_t first) {
  std::vector<std::uint64_t> row(columns);
  for (std::size_t c = 0; c < columns; ++c) row[c] = first + 7 * c;
  return row;
}

TEST(SpareRows, CopiesTheRowWithOrWithoutASpare) {
  detail::SpareRows spare(600);  // past a 4 KiB page, like a kept row's
  const std::vector<std::uint64_t> row = numbered_row(600, 3);
  EXPECT_EQ(spare.copy(row.data()), row);  // none waits: a plain copy
  spare.top_up();
  ASSERT_EQ(spare.waiting(), 1u);
  EXPECT_EQ(spare.copy(row.data()), row);  // into the spare
  EXPECT_EQ(spare.waiting(), 0u);
  EXPECT_EQ(spare.copy(row.data()), row);
}

TEST(SpareRows, HoldsAtMostDepth) {
  detail::SpareRows spare(5);
  for (std::size_t i = 0; i < 3 * detail::SpareRows::depth; ++i) spare.top_up();
  EXPECT_EQ(spare.waiting(), detail::SpareRows::depth);
  for (std::size_t i = 0; i < detail::SpareRows::depth + 2; ++i) {
    const std::vector<std::uint64_t> row = numbered_row(5, i);
    EXPECT_EQ(spare.copy(row.data()), row);
  }
  EXPECT_EQ(spare.waiting(), 0u);
}

// One thread tops up while another copies, as the drain's two threads do
// (ThreadSanitizer: the counts order each spare's making before its use).
TEST(SpareRows, OneThreadTopsUpWhileAnotherCopies) {
  constexpr std::size_t columns = 64, copies = 20000;
  detail::SpareRows spare(columns);
  std::atomic<bool> done{false};
  std::thread maker([&] {
    while (!done.load(std::memory_order_acquire)) spare.top_up();
  });
  std::size_t wrong = 0;
  for (std::size_t i = 0; i < copies; ++i) {
    const std::vector<std::uint64_t> row = numbered_row(columns, i);
    if (spare.copy(row.data()) != row) ++wrong;
  }
  done.store(true, std::memory_order_release);
  maker.join();
  EXPECT_EQ(wrong, 0u);
}

}  // namespace
}  // namespace pleat
