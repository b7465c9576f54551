// Regions' rows on their way into certify's modular basis during a walk: the
// walk's in-order delivery (on_region) queues them, and a walk thread reduces
// them (WalkOptions::background) while the others go on walking, so that the
// walk's delivery, which finds the next regions to process, never waits for
// the basis. Internal to enumerate/ (not installed).
#pragma once

#include "core/matrix.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"
#include "core/stop.hpp"
#include "enumerate/walker.hpp"

#include <atomic>
#include <cstddef>
#include <deque>
#include <functional>
#include <memory>
#include <mutex>
#include <thread>
#include <vector>

namespace pleat::detail {

// One smooth region's rows modulo the walk's prime (coefficient_blocks_mod),
// with what certify records when they raise the rank.
struct PendingRows {
  ActivationPattern pattern;
  RationalVector interior;  // the region's exact interior point (its witness)
  std::shared_ptr<const ModularMatrix> rows;  // null: `reduce` forms them
};

// The walk's regions delivered up to and including one region: what certify
// reports of a walk it stopped at that region (restate_walk_at).
struct RegionsSoFar {
  std::size_t regions = 0;
  std::size_t bounded = 0;
  std::size_t nonsmooth = 0;
};

// A first-in first-out queue of PendingRows whose entries are handed to
// `reduce` one at a time and in the order pushed, whichever thread drains
// them: so the basis sees the same rows in the same order as if on_region had
// reduced each region's rows itself, for any thread count. reduce returning
// false closes the backlog (certify's rank met the scaling bound): the
// entries queued after it are dropped unreduced, and so is whatever is
// pushed later, as if the walk had stopped at that entry's region. An entry
// reduced on another thread than the one that pushed it is freed by the next
// push (or with the backlog), on the pushing thread, where certify makes
// them: freed by the reducing thread, their memory crossed processors back
// through the allocator.
class RowBacklog {
 public:
  using Reduce = std::function<bool(const PendingRows&, const RegionsSoFar&)>;
  // limit_bytes: above this many bytes of queued rows, push reduces entries
  // itself until the queue is back under it (bounds the memory when the
  // basis falls behind the walk).
  RowBacklog(Reduce reduce, std::size_t limit_bytes);

  // Queues one region's rows (one thread at a time: the walk's delivery);
  // at: the walk's regions up to and including this one.
  void push(std::shared_ptr<const PendingRows> pending, const RegionsSoFar& at);
  // Reduces the oldest entry; false when the queue was empty or is closed. Any thread.
  bool reduce_one();
  // Reduces every entry queued; true when it did. Polls `stop` before each
  // entry: once it is requested the backlog is closed and the entries left
  // are dropped unreduced (false), as if the walk had stopped at the last
  // entry reduced (last_reduced). The drain after a walk stopped by its time
  // limit at --threads 2 reduced up to 64 MB of rows, seconds past the limit.
  bool reduce_all(const StopRequest& stop);
  // The walk's regions up to the last entry reduced (none: all zero).
  RegionsSoFar last_reduced() const;
  // True once reduce returned false. Any thread.
  bool is_closed() const { return is_closed_.load(std::memory_order_acquire); }
  // Entries queued and not yet taken for reduction (a moment's count). Any thread.
  std::size_t queued() const { return queued_.load(std::memory_order_relaxed); }

 private:
  struct Entry {
    std::shared_ptr<const PendingRows> pending;
    RegionsSoFar at;
  };
  Reduce reduce_;
  std::size_t limit_bytes_;
  std::atomic<bool> is_closed_{false};
  std::atomic<std::size_t> queued_{0};  // queue_.size(), readable without the lock
  mutable std::mutex reducing_;  // held while an entry is reduced: one at a time, in order
  std::mutex queue_mutex_;
  std::deque<Entry> queue_;       // under queue_mutex_
  std::vector<std::shared_ptr<const PendingRows>> spent_;  // reduced, for push to free (under queue_mutex_)
  std::thread::id pusher_;  // the thread of the last push (under queue_mutex_)
  std::size_t queued_bytes_ = 0;  // under queue_mutex_
  RegionsSoFar last_reduced_;     // under reducing_
};

// The walk as if it had stopped at region at.regions (on_region asking it to
// stop there): its region counts and nonsmooth regions are those up to that
// region, and it is neither complete nor certified. Its other counts (facets,
// linear regions, regions per layer, queries, degenerate crossings) stay the
// walk's own: they may include regions delivered after that one, whose rows
// the backlog dropped.
void restate_walk_at(WalkSummary& walk, const RegionsSoFar& at);

}  // namespace pleat::detail
