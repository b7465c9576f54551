// Serial work a walk's delivery leaves behind: detail::WalkPipeline's
// background hook and certify's queue of rows for its basis
// (detail::RowBacklog), which run it on one walk thread while the others walk.
#include "core/stop.hpp"
#include "enumerate/detail/row_backlog.hpp"
#include "enumerate/detail/walk_pipeline.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <deque>
#include <memory>
#include <mutex>
#include <optional>
#include <set>
#include <stdexcept>
#include <thread>
#include <utility>
#include <vector>

namespace pleat {
namespace {

// A chain of `total` tasks, each consume adding the next one and queueing one
// unit of background work (its index); background pops units in order.
struct BackgroundRun {
  std::vector<std::size_t> done;  // units run by background, in the order run
  std::size_t left = 0;           // units still queued when run returned
  std::size_t most_queued_at_process = 0;  // the longest queue a task's processing saw
  bool overlapped = false;        // two background calls at once
  std::set<std::thread::id> consumers, background_threads;  // the threads that ran consume, background
  std::set<std::thread::id> worker_1;  // the thread that processed as worker 1 (if it processed any)
};

BackgroundRun run_with_background(std::size_t workers, std::size_t total, std::size_t throw_at = SIZE_MAX) {
  BackgroundRun out;
  detail::WalkPipeline pipeline(workers, 16);
  std::mutex mutex;
  std::deque<std::size_t> queue;
  std::atomic<int> inside{0};
  pipeline.add(ActivationPattern{{NeuronState::on}});
  pipeline.run(
      0, StopRequest(),
      [&](std::size_t worker, detail::WalkTask& task) {
        const std::lock_guard lock(mutex);
        out.most_queued_at_process = std::max(out.most_queued_at_process, queue.size());
        if (worker == 1) out.worker_1.insert(std::this_thread::get_id());
        task.processed = std::make_unique<detail::Processed>();
      },
      [&](std::size_t index, detail::WalkTask&) -> std::optional<std::size_t> {
        {
          const std::lock_guard lock(mutex);
          queue.push_back(index);
          out.consumers.insert(std::this_thread::get_id());
        }
        if (index + 1 == total) return std::nullopt;
        return pipeline.add(ActivationPattern{{NeuronState::off}});
      },
      nullptr,
      [&] {
        if (inside.fetch_add(1) != 0) out.overlapped = true;
        std::size_t unit = 0;
        bool is_any = false;
        {
          const std::lock_guard lock(mutex);
          out.background_threads.insert(std::this_thread::get_id());
          if (!queue.empty()) {
            unit = queue.front();
            queue.pop_front();
            is_any = true;
          }
        }
        if (is_any) {
          if (unit == throw_at) throw std::runtime_error("unit");
          std::this_thread::yield();  // give another thread the chance to overlap
          const std::lock_guard lock(mutex);
          out.done.push_back(unit);
        }
        inside.fetch_sub(1);
        return is_any;
      });
  out.left = queue.size();
  return out;
}

// Background units run one at a time, in the order queued; whatever is left
// is still queued for the caller. On one thread a unit runs right after the
// consume that queued it, before the next task is processed (so the queue of
// a one-thread walk never grows).
TEST(WalkBackground, RunsOneAtATimeInOrder) {
  for (std::size_t workers : {1u, 2u, 3u}) {
    const BackgroundRun run = run_with_background(workers, 200);
    EXPECT_FALSE(run.overlapped) << workers;
    EXPECT_EQ(run.done.size() + run.left, 200u);
    for (std::size_t i = 0; i < run.done.size(); ++i) EXPECT_EQ(run.done[i], i);
    if (workers == 1) {
      EXPECT_EQ(run.most_queued_at_process, 0u);
      EXPECT_LE(run.left, 1u);  // at most the last consume's unit
    }
  }
}

// Consume runs on the caller's thread and background work on one other (that
// of worker 1), so that the consumer's data and the background's (certify's
// row basis) each stay in one processor's cache; on one thread, both on the
// caller's.
TEST(WalkBackground, ConsumesOnTheCallerAndRunsBackgroundOnWorkerOne) {
  for (std::size_t workers : {1u, 2u, 3u}) {
    const BackgroundRun run = run_with_background(workers, 300);
    EXPECT_EQ(run.consumers, std::set<std::thread::id>{std::this_thread::get_id()}) << workers;
    if (workers == 1) {
      EXPECT_EQ(run.background_threads, std::set<std::thread::id>{std::this_thread::get_id()});
      continue;
    }
    // (A loaded machine may end the run before worker 1 ever looks for background work.)
    ASSERT_LE(run.background_threads.size(), 1u) << workers;
    if (!run.background_threads.empty()) {
      EXPECT_NE(*run.background_threads.begin(), std::this_thread::get_id()) << workers;
      if (!run.worker_1.empty()) {
        EXPECT_EQ(run.worker_1, run.background_threads) << workers;
      }
    }
  }
}

// A unit that throws ends the run with its exception (on one thread it runs
// for sure; on more the run may end first and leave it queued).
TEST(WalkBackground, RethrowsItsException) {
  EXPECT_THROW(run_with_background(1, 200, 57), std::runtime_error);
  for (std::size_t workers : {2u, 3u}) {
    try {
      const BackgroundRun run = run_with_background(workers, 200, 57);
      EXPECT_LE(run.done.size(), 57u) << workers;  // not run: no unit after it was either
    } catch (const std::runtime_error&) {
    }
  }
}

// Threads started before run (WalkPipeline::start) serve the run like those
// run starts itself; started for a run that never comes, they end with the
// pipeline (its destructor would hang otherwise).
TEST(WalkBackground, ThreadsStartedBeforeTheRun) {
  for (std::size_t workers : {2u, 3u}) {
    detail::WalkPipeline unused(workers, 4);
    unused.start();
  }
  detail::WalkPipeline pipeline(3, 4);
  pipeline.start();
  std::mutex mutex;
  std::vector<std::size_t> workers_seen;
  pipeline.add(ActivationPattern{{NeuronState::on}});
  pipeline.run(
      0, StopRequest(),
      [&](std::size_t worker, detail::WalkTask& task) {
        const std::lock_guard lock(mutex);
        workers_seen.push_back(worker);
        task.processed = std::make_unique<detail::Processed>();
      },
      [&](std::size_t index, detail::WalkTask&) -> std::optional<std::size_t> {
        if (index == 99) return std::nullopt;
        return pipeline.add(ActivationPattern{{NeuronState::off}});
      },
      nullptr);
  EXPECT_EQ(workers_seen.size(), 100u);
  for (std::size_t worker : workers_seen) EXPECT_LT(worker, 3u);
}

// Without background work, every consume runs on the thread that called
// run (worker 0), on which the consumer's own data stays; each processed
// record that consume retires is freed on the thread that processed it (while
// the run goes on; those left at its end, with the pipeline), and every
// record is freed once.
TEST(WalkBackground, ConsumesOnTheCallerAndFreesOnTheMaker) {
  struct Freed {
    std::mutex mutex;
    std::vector<std::pair<std::thread::id, std::thread::id>> made_and_freed;
  };
  struct Marker {
    explicit Marker(Freed* freed_log) : log(freed_log) {}  // clang lacks C++20's Marker(...) aggregate init
    Marker(const Marker&) = delete;
    Marker& operator=(const Marker&) = delete;
    Freed* log;
    std::thread::id made = std::this_thread::get_id();
    ~Marker() {
      const std::lock_guard lock(log->mutex);
      log->made_and_freed.emplace_back(made, std::this_thread::get_id());
    }
  };
  for (std::size_t workers : {1u, 2u, 3u}) {
    Freed freed;
    std::size_t freed_in_run = 0;
    std::set<std::thread::id> consumers;
    {
      detail::WalkPipeline pipeline(workers, 8);
      pipeline.add(ActivationPattern{{NeuronState::on}});
      pipeline.run(
          0, StopRequest(),
          [&](std::size_t, detail::WalkTask& task) {
            task.processed = std::make_unique<detail::Processed>();
            task.processed->region.prepared = std::make_shared<Marker>(&freed);
            std::this_thread::sleep_for(std::chrono::microseconds(20));  // room for the others to take tasks
          },
          [&](std::size_t index, detail::WalkTask& task) -> std::optional<std::size_t> {
            consumers.insert(std::this_thread::get_id());
            pipeline.retire(task);
            EXPECT_EQ(task.processed, nullptr);
            if (index == 299) return std::nullopt;
            for (int k = 0; k < 2; ++k) pipeline.add(ActivationPattern{{NeuronState::off}});
            return index + 1;
          },
          nullptr);
      const std::lock_guard lock(freed.mutex);
      freed_in_run = freed.made_and_freed.size();
    }
    EXPECT_EQ(consumers, std::set<std::thread::id>{std::this_thread::get_id()}) << workers;
    ASSERT_GE(freed.made_and_freed.size(), 300u) << workers;  // each consumed record, and those processed ahead
    for (std::size_t k = 0; k < freed_in_run; ++k)
      EXPECT_EQ(freed.made_and_freed[k].first, freed.made_and_freed[k].second) << workers << " record " << k;
    EXPECT_LE(freed.made_and_freed.size() - freed_in_run, 10 * (workers + 1)) << workers;  // left at the end: few
  }
}

detail::PendingRows rows_of(std::size_t label, std::size_t rows, std::size_t columns) {
  detail::PendingRows pending;
  pending.pattern.states.assign(label + 1, NeuronState::on);
  pending.rows = std::make_shared<const ModularMatrix>(rows, columns);
  return pending;
}

// Entries reach `reduce` one at a time and in the order pushed, whichever
// threads drain the queue; a push that takes the queue over its limit
// reduces entries itself until it is back under it.
TEST(RowBacklog, ReducesInOrderOneAtATimeWithinItsLimit) {
  std::vector<std::size_t> reduced;
  std::atomic<int> inside{0};
  bool overlapped = false;
  const std::size_t entry_bytes = 3 * 10 * sizeof(std::uint64_t);
  detail::RowBacklog backlog(
      [&](const detail::PendingRows& pending, const detail::RegionsSoFar&) {
        if (inside.fetch_add(1) != 0) overlapped = true;
        reduced.push_back(pending.pattern.states.size() - 1);
        inside.fetch_sub(1);
        return true;
      },
      4 * entry_bytes);
  for (std::size_t i = 0; i < 4; ++i) backlog.push(rows_of(i, 3, 10), {i + 1, 0, 0});
  EXPECT_TRUE(reduced.empty());  // at the limit, not over it
  EXPECT_EQ(backlog.queued(), 4u);
  backlog.push(rows_of(4, 3, 10), {5, 0, 0});
  EXPECT_EQ(reduced, (std::vector<std::size_t>{0}));  // one reduced: back at the limit
  EXPECT_EQ(backlog.queued(), 4u);
  std::atomic<bool> is_pushing{true};
  std::thread drainer([&] {
    while (is_pushing || backlog.reduce_one()) {
      backlog.reduce_one();
    }
  });
  for (std::size_t i = 5; i < 2000; ++i) backlog.push(rows_of(i, 3, 10), {i + 1, 0, 0});
  is_pushing = false;
  drainer.join();
  EXPECT_TRUE(backlog.reduce_all(StopRequest()));
  EXPECT_FALSE(overlapped);
  ASSERT_EQ(reduced.size(), 2000u);
  for (std::size_t i = 0; i < reduced.size(); ++i) EXPECT_EQ(reduced[i], i);
  EXPECT_FALSE(backlog.reduce_one());
  EXPECT_EQ(backlog.queued(), 0u);
}

// Entries' rows are freed on the thread that pushed them: one reduced
// elsewhere by the next push, one reduced by the pusher right away (certify
// makes them on the walk's delivery thread and reduces them on another: the
// allocator then takes their memory back where it gave it).
TEST(RowBacklog, FreesEachEntryOnTheThreadThatPushedIt) {
  std::mutex mutex;
  std::vector<std::pair<std::size_t, std::thread::id>> freed;  // label, freeing thread
  const auto entry = [&](std::size_t label) {
    detail::PendingRows pending = rows_of(label, 1, 4);
    pending.rows = std::shared_ptr<const ModularMatrix>(new ModularMatrix(1, 4),
                                                        [&, label](const ModularMatrix* rows) {
                                                          const std::lock_guard lock(mutex);
                                                          freed.emplace_back(label, std::this_thread::get_id());
                                                          delete rows;
                                                        });
    return pending;
  };
  detail::RowBacklog backlog([](const detail::PendingRows&, const detail::RegionsSoFar&) { return true; },
                             std::size_t{1} << 20);
  backlog.push(entry(0), {1, 0, 0});
  std::thread([&] { EXPECT_TRUE(backlog.reduce_one()); }).join();
  EXPECT_TRUE(freed.empty());  // held for the pusher
  backlog.push(entry(1), {2, 0, 0});
  ASSERT_EQ(freed.size(), 1u);
  EXPECT_EQ(freed[0], std::make_pair(std::size_t{0}, std::this_thread::get_id()));
  EXPECT_TRUE(backlog.reduce_one());  // reduced by the pusher: freed now
  ASSERT_EQ(freed.size(), 2u);
  EXPECT_EQ(freed[1], std::make_pair(std::size_t{1}, std::this_thread::get_id()));
}

// The ring goes round (more entries than it holds, reduced behind the pushes
// on another thread and by the pusher when it is full): every entry reaches
// reduce once, in order, with the pattern, point and counts it was pushed
// with, though the slots' memory is reused.
TEST(RowBacklog, ReusedSlotsHandOnEachEntryAsPushed) {
  const std::size_t entries = 5 * detail::RowBacklog::capacity + 7;
  std::vector<std::size_t> seen;
  bool is_faithful = true;
  detail::RowBacklog backlog(
      [&](const detail::PendingRows& pending, const detail::RegionsSoFar& at) {
        const std::size_t label = seen.size();
        is_faithful = is_faithful && pending.pattern.states.size() == label % 37 + 1 &&
                      pending.interior.size() == 2 && pending.interior[0] == Rational(static_cast<long>(label), 3) &&
                      pending.interior[1] == Rational(-1, static_cast<long>(label) + 2) && at.regions == label + 1 &&
                      (pending.rows != nullptr) == (label % 5 == 0);
        seen.push_back(label);
        return true;
      },
      std::size_t{1} << 20);
  std::atomic<bool> is_pushing{true};
  std::thread reducer([&] {
    while (is_pushing) backlog.reduce_one();
  });
  for (std::size_t i = 0; i < entries; ++i) {
    detail::PendingRows pending;
    pending.pattern.states.assign(i % 37 + 1, NeuronState::on);
    pending.interior = {Rational(static_cast<long>(i), 3), Rational(-1, static_cast<long>(i) + 2)};
    if (i % 5 == 0) pending.rows = std::make_shared<const ModularMatrix>(2, 3);
    backlog.push(pending, {i + 1, 0, 0});
  }
  is_pushing = false;
  reducer.join();
  EXPECT_TRUE(backlog.reduce_all(StopRequest()));
  EXPECT_TRUE(is_faithful);
  ASSERT_EQ(seen.size(), entries);
  for (std::size_t i = 0; i < entries; ++i) ASSERT_EQ(seen[i], i);
  EXPECT_EQ(backlog.last_reduced().regions, entries);
}

// A stop (time limit, Ctrl-C) ends the drain after the walk at the next
// entry: the entries left are dropped unreduced, and last_reduced says where
// the walk is cut. The drain polled nothing: certify --time-limit 1 at
// --threads 2 ran 3.9 s reducing rows queued before the stop.
TEST(RowBacklog, ADrainStopsAtTheNextEntryOnceAStopIsRequested) {
  std::vector<std::size_t> reduced;
  std::atomic<bool> interrupt{false};
  detail::RowBacklog backlog(
      [&](const detail::PendingRows& pending, const detail::RegionsSoFar&) {
        reduced.push_back(pending.pattern.states.size() - 1);
        if (reduced.back() == 3) interrupt = true;
        return true;
      },
      std::size_t{1} << 20);
  EXPECT_EQ(backlog.last_reduced().regions, 0u);
  for (std::size_t i = 0; i < 10; ++i)
    backlog.push(rows_of(i, 3, 10), {2 * i + 1, i, i / 2});
  const StopRequest stop(&interrupt, 0);
  EXPECT_FALSE(backlog.reduce_all(stop));
  EXPECT_EQ(reduced, (std::vector<std::size_t>{0, 1, 2, 3}));
  EXPECT_EQ(backlog.last_reduced().regions, 7u);
  EXPECT_EQ(backlog.last_reduced().bounded, 3u);
  EXPECT_EQ(backlog.last_reduced().nonsmooth, 1u);
  EXPECT_TRUE(backlog.is_closed());
  backlog.push(rows_of(10, 3, 10), {21, 10, 5});
  EXPECT_FALSE(backlog.reduce_one());
  EXPECT_EQ(reduced.size(), 4u);
  // Nothing left to drop: done, though a stop is requested.
  detail::RowBacklog empty([](const detail::PendingRows&, const detail::RegionsSoFar&) { return true; }, 1);
  EXPECT_TRUE(empty.reduce_all(stop));
}

// reduce returning false closes the backlog at that entry: the entries
// queued after it, and those pushed later, are dropped unreduced, and it
// hands on the entry's RegionsSoFar unchanged.
TEST(RowBacklog, ClosesAtTheEntryWhoseReductionSaysSo) {
  std::vector<std::size_t> reduced;
  std::optional<detail::RegionsSoFar> closed_at;
  detail::RowBacklog backlog(
      [&](const detail::PendingRows& pending, const detail::RegionsSoFar& at) {
        reduced.push_back(pending.pattern.states.size() - 1);
        if (reduced.back() == 6) closed_at = at;
        return !closed_at;
      },
      std::size_t{1} << 20);
  for (std::size_t i = 0; i < 10; ++i)
    backlog.push(rows_of(i, 3, 10), {2 * i + 1, i, i / 2});
  EXPECT_FALSE(backlog.is_closed());
  EXPECT_TRUE(backlog.reduce_all(StopRequest()));
  EXPECT_TRUE(backlog.is_closed());
  EXPECT_EQ(reduced, (std::vector<std::size_t>{0, 1, 2, 3, 4, 5, 6}));
  ASSERT_TRUE(closed_at);
  EXPECT_EQ(closed_at->regions, 13u);
  EXPECT_EQ(closed_at->bounded, 6u);
  EXPECT_EQ(closed_at->nonsmooth, 3u);
  backlog.push(rows_of(10, 3, 10), {21, 10, 5});
  EXPECT_FALSE(backlog.reduce_one());
  EXPECT_EQ(reduced.size(), 7u);
}

// The walk restated as stopped at a region: its counts up to it, its
// nonsmooth regions up to it, neither complete nor certified.
TEST(RowBacklog, RestatesAWalkAsStoppedAtARegion) {
  WalkSummary walk;
  walk.regions = 40;
  walk.bounded_regions = 12;
  for (std::size_t i = 0; i < 5; ++i)
    walk.nonsmooth_regions.emplace_back(ActivationPattern{}, std::vector<std::size_t>{i});
  walk.complete = true;
  walk.certified = true;
  detail::restate_walk_at(walk, {17, 4, 2});
  EXPECT_EQ(walk.regions, 17u);
  EXPECT_EQ(walk.bounded_regions, 4u);
  ASSERT_EQ(walk.nonsmooth_regions.size(), 2u);
  EXPECT_EQ(walk.nonsmooth_regions[1].second, std::vector<std::size_t>{1});
  EXPECT_FALSE(walk.complete);
  EXPECT_FALSE(walk.certified);
  EXPECT_EQ(walk.stop_reason, StopReason::requested);
}

}  // namespace
}  // namespace pleat
