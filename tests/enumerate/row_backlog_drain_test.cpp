// RowBacklog's drain after the walk with rows formed ahead on a second
// thread (detail::RowBacklog::reduce_all with a Form): the same entries
// reduced in the same order with the same rows as the one-thread drain, a
// stop and an error in form honoured.
#include "core/stop.hpp"
#include "enumerate/detail/parallel_for.hpp"
#include "enumerate/detail/row_backlog.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <cstdint>
#include <memory>
#include <stdexcept>
#include <thread>
#include <vector>

namespace pleat {
namespace {

std::size_t label_of(const detail::PendingRows& pending) { return pending.pattern.states.size() - 1; }

detail::PendingRows entry(std::size_t label, bool with_rows) {
  detail::PendingRows pending;
  pending.pattern.states.assign(label + 1, NeuronState::on);
  if (with_rows) {
    auto rows = std::make_shared<ModularMatrix>(1, 2);
    (*rows)(0, 0) = label;
    (*rows)(0, 1) = 1;  // pushed with its rows: 1, formed ahead: 2
    pending.rows = std::move(rows);
  }
  return pending;
}

// What reduce saw of each entry, in the order reduced.
struct Seen {
  std::size_t label;
  std::uint64_t rows_label;   // the rows' first entry (none: the label's complement)
  std::uint64_t rows_source;  // 1 pushed with the entry, 2 formed ahead, 0 none
};

class Drain : public ::testing::Test {
 protected:
  static constexpr std::size_t entries = 40 * detail::RowBacklog::ahead + 3;
  std::vector<Seen> seen_;
  std::atomic<std::size_t> stop_at_{entries};  // reduce requests a stop at this label
  std::atomic<bool> interrupt_{false};
  detail::RowBacklog backlog_{[this](const detail::PendingRows& pending, const detail::RegionsSoFar&) {
                                const std::size_t label = label_of(pending);
                                // The first entry waits (up to 2 s) for rows formed ahead: the
                                // other thread is then surely under way.
                                const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(2);
                                while (label == 0 && waits_ && formed_ == 0 && std::chrono::steady_clock::now() < until)
                                  std::this_thread::yield();
                                if (pending.rows)
                                  seen_.push_back({label, (*pending.rows)(0, 0), (*pending.rows)(0, 1)});
                                else
                                  seen_.push_back({label, ~std::uint64_t{label}, 0});
                                if (label == stop_at_) interrupt_ = true;
                                return true;
                              },
                              std::size_t{1} << 30};
  bool waits_ = true;  // the first entry's reduction waits for rows formed ahead
  std::atomic<std::size_t> formed_{0}, formed_elsewhere_{0};

  void push_all() {
    for (std::size_t i = 0; i < entries; ++i) backlog_.push(entry(i, i % 5 == 0), {i + 1, 0, 0});
  }
  // Forms rows for every entry but those whose label is a multiple of 7.
  detail::RowBacklog::Form form(std::thread::id caller, std::size_t throw_at = entries) {
    return [this, caller, throw_at](const detail::PendingRows& pending, ModularMatrix& rows) {
      const std::size_t label = label_of(pending);
      if (label == throw_at) throw std::runtime_error("form failed");
      if (label % 7 == 0) return false;
      ++formed_;
      if (std::this_thread::get_id() != caller) ++formed_elsewhere_;
      rows = ModularMatrix(1, 2);
      rows(0, 0) = label;
      rows(0, 1) = 2;
      return true;
    };
  }
  // Every entry up to `last` reduced once, in order, each with its own rows
  // when it has any (pushed ones kept; none where form declined).
  void expect_in_order_with_their_rows(std::size_t last) {
    ASSERT_EQ(seen_.size(), last + 1);
    for (std::size_t i = 0; i <= last; ++i) {
      EXPECT_EQ(seen_[i].label, i);
      if (seen_[i].rows_source != 0) {
        EXPECT_EQ(seen_[i].rows_label, i) << i;
      }
      if (i % 5 == 0) {
        EXPECT_EQ(seen_[i].rows_source, 1u) << i;
      } else if (i % 7 == 0) {
        EXPECT_EQ(seen_[i].rows_source, 0u) << i;
      }
    }
  }
};

TEST_F(Drain, ReducesEveryEntryInOrderWithItsOwnRows) {
  push_all();
  EXPECT_TRUE(backlog_.reduce_all(StopRequest(), 2, form(std::this_thread::get_id())));
  expect_in_order_with_their_rows(entries - 1);
  std::size_t formed_ahead = 0;
  for (const Seen& s : seen_) formed_ahead += s.rows_source == 2;
  EXPECT_GT(formed_ahead, 0u);
  EXPECT_EQ(backlog_.last_reduced().regions, entries);
  EXPECT_EQ(backlog_.queued(), 0u);
  EXPECT_FALSE(backlog_.is_closed());
}

TEST_F(Drain, FormsOnTheOtherThreadWhileTheLoopHelperIsThere) {
  const detail::LoopThreads loop_threads(2);
  push_all();
  EXPECT_TRUE(backlog_.reduce_all(StopRequest(), 2, form(std::this_thread::get_id())));
  expect_in_order_with_their_rows(entries - 1);
  EXPECT_GT(formed_elsewhere_.load(), 0u);
}

TEST_F(Drain, OneThreadFormsNothingAhead) {
  waits_ = false;
  push_all();
  EXPECT_TRUE(backlog_.reduce_all(StopRequest(), 1, form(std::this_thread::get_id())));
  expect_in_order_with_their_rows(entries - 1);
  for (const Seen& s : seen_) EXPECT_NE(s.rows_source, 2u);
}

TEST_F(Drain, AStopEndsItAtTheNextEntry) {
  stop_at_ = 100;
  push_all();
  const StopRequest stop(&interrupt_, 0);
  EXPECT_FALSE(backlog_.reduce_all(stop, 2, form(std::this_thread::get_id())));
  expect_in_order_with_their_rows(100);
  EXPECT_EQ(backlog_.last_reduced().regions, 101u);
  EXPECT_TRUE(backlog_.is_closed());
}

TEST_F(Drain, AnErrorInFormLeavesTheRowsToReduce) {
  push_all();
  EXPECT_TRUE(backlog_.reduce_all(StopRequest(), 2, form(std::this_thread::get_id(), 3 * detail::RowBacklog::ahead)));
  expect_in_order_with_their_rows(entries - 1);
}

}  // namespace
}  // namespace pleat
