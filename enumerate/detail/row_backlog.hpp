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

#include <algorithm>
#include <array>
#include <atomic>
#include <cstddef>
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
// pushed later, as if the walk had stopped at that entry's region.
//
// A ring of reused entries (slots) with no lock between the pushing thread
// and the reducing one: the pusher copies a region's pattern and point into
// the next slot (into the memory the slot held from its last use: no
// allocation once the ring went round) and publishes it by a count the reducer
// reads (written_); the reducer publishes what it finished by a count the
// pusher reads only when it must (taken_: the ring full or rows held). Per
// region, so, the slot's lines and the counts' go to the reducer once and
// nothing else crosses: with a lock, a deque and a shared record per entry,
// each region's hand-off moved the lock's line, the queue's and the record's
// (and its reference count's) both ways, and the walk's delivery on a
// 2-thread certify of 2,15,15,15,1 took nearly twice its one-thread time in
// hours when a line took 330 ns to cross. An entry's rows are freed on the
// pushing thread (by the next push once reduced elsewhere, or by the reducer
// when it is that thread), where certify makes them: freed by the reducing
// thread, their memory crossed processors back through the allocator.
class RowBacklog {
 public:
  using Reduce = std::function<bool(const PendingRows&, const RegionsSoFar&)>;
  // limit_bytes: above this many bytes of queued rows, or with the ring full,
  // push reduces entries itself until it is back under it (bounds the memory
  // when the basis falls behind the walk).
  RowBacklog(Reduce reduce, std::size_t limit_bytes);
  RowBacklog(const RowBacklog&) = delete;
  RowBacklog& operator=(const RowBacklog&) = delete;

  // Queues a copy of one region's pattern and point, and its rows (one push
  // at a time, each ordered after the one before: the walk's delivery); at:
  // the walk's regions up to and including this one.
  void push(const ActivationPattern& pattern, const RationalVector& interior,
            std::shared_ptr<const ModularMatrix> rows, const RegionsSoFar& at);
  void push(const PendingRows& pending, const RegionsSoFar& at) {
    push(pending.pattern, pending.interior, pending.rows, at);
  }
  // Reduces the oldest entry; false when the queue was empty or is closed. Any thread.
  bool reduce_one();
  // Reduces every entry queued; true when it did. Polls `stop` before each
  // entry: once it is requested the backlog is closed and the entries left
  // are dropped unreduced (false), as if the walk had stopped at the last
  // entry reduced (last_reduced). The drain after a walk stopped by its time
  // limit at --threads 2 reduced up to 64 MB of rows, seconds past the limit.
  bool reduce_all(const StopRequest& stop);
  // Forms an entry's rows into `rows` ahead of its reduction; false when it
  // forms none (reduce then finds or forms them itself).
  using Form = std::function<bool(const PendingRows&, ModularMatrix& rows)>;
  // reduce_all once no other thread pushes or reduces (the walk has ended),
  // on up to two of `threads`: while one reduces the entries in order,
  // another forms the rows of the next `ahead` (form) for reduce to find in
  // their entries; an entry the other has not reached is reduced as it is.
  // The same entries reduced in the same order, with the same rows, as
  // reduce_all(stop); the stop is polled before each entry.
  bool reduce_all(const StopRequest& stop, unsigned threads, const Form& form);
  static constexpr std::size_t ahead = 16;
  // The walk's regions up to the last entry reduced (none: all zero).
  RegionsSoFar last_reduced() const;
  // True once reduce returned false. Any thread.
  bool is_closed() const { return is_closed_.load(std::memory_order_acquire); }
  // Entries queued and not yet reduced (a moment's count). Any thread.
  std::size_t queued() const;

  static constexpr std::size_t chunk_slots = 64;
  // Entries the ring holds: 2,30,30,30,1's walk, reduction-bound, queues
  // about 1300 (at 64 MB of rows) before push reduces them itself.
  static constexpr std::size_t capacity = 64 * chunk_slots;

 private:
  struct alignas(64) Slot {  // lines of its own: the pusher writes the next slot while the reducer reads this one
    PendingRows pending;
    RegionsSoFar at;
    std::size_t bytes = 0;  // the rows' bytes, counted until the pusher frees them
  };
  Slot& slot(std::size_t index) const { return chunks_[(index % capacity) / chunk_slots][index % chunk_slots]; }
  void free_reduced();

  // Set at construction, or (chunks_) by the pusher before it publishes the
  // first slot in the chunk, which the reducer reads only after it.
  Reduce reduce_;
  std::size_t limit_bytes_;
  std::thread::id owner_;  // the thread that made the backlog
  std::array<std::unique_ptr<Slot[]>, capacity / chunk_slots> chunks_;
  std::atomic<bool> is_closed_{false};
  // Entries pushed: written by the pusher (release, after the slot), read by the reducer.
  alignas(64) std::atomic<std::size_t> written_{0};
  // The pusher's alone (pushes are ordered one after another).
  alignas(64) std::size_t freed_ = 0;   // slots below it hold no rows to free
  std::size_t taken_seen_ = 0;          // taken_ as the pusher last read it
  std::size_t held_bytes_ = 0;          // rows' bytes in slots [freed_, written_)
  // Entries reduced (or dropped): written under reducing_ (release, once the
  // slot is no longer read), read by the pusher (acquire) before it reuses or frees a slot.
  alignas(64) std::atomic<std::size_t> taken_{0};
  mutable std::mutex reducing_;  // held while an entry is reduced: one at a time, in order
  RegionsSoFar last_reduced_;     // under reducing_
};

// Vectors of `columns` entries, made and first touched ahead by a thread with
// time to spare, for certify's reduction to copy the rows it keeps into: on
// this virtual machine a fresh page's first touch costs about 10 us, and a
// kept row's copy is a page. Topped up by the drain's second thread
// (reduce_all with a Form), idle about half the drain, while the first
// reduces in order, the serial stage: on 2,15,15,15,1 at 2 threads the
// drain's reducer met about 285 first touches, 135 so. Not during the walk:
// there the thread with the delivery processes regions all the while, and the
// walk then ended later by what the reducer saved. One thread tops up and one
// takes at a time (a ring of `depth` with a count each); the threads that
// take in turn are ordered by the backlog's lock. The values are the same.
class SpareRows {
 public:
  explicit SpareRows(std::size_t columns) : columns_(columns) {}
  SpareRows(const SpareRows&) = delete;
  SpareRows& operator=(const SpareRows&) = delete;
  // Makes one spare vector when fewer than `depth` wait.
  void top_up() {
    const std::size_t made = made_.load(std::memory_order_relaxed);
    if (made - taken_.load(std::memory_order_acquire) >= depth) return;
    ring_[made % depth] = ModularVector(columns_);  // zeroed: every page touched here
    made_.store(made + 1, std::memory_order_release);
  }
  // A copy of the `columns` entries at row, in a spare vector when one waits.
  ModularVector copy(const std::uint64_t* row) {
    const std::size_t taken = taken_.load(std::memory_order_relaxed);
    if (taken == made_.load(std::memory_order_acquire)) return ModularVector(row, row + columns_);
    ModularVector spare = std::move(ring_[taken % depth]);
    std::copy(row, row + columns_, spare.begin());
    taken_.store(taken + 1, std::memory_order_release);
    return spare;
  }
  // Spare vectors made and not yet taken (a moment's count). Any thread.
  std::size_t waiting() const {
    return made_.load(std::memory_order_acquire) - taken_.load(std::memory_order_acquire);
  }
  static constexpr std::size_t depth = 16;

 private:
  std::size_t columns_;
  std::array<ModularVector, depth> ring_;
  alignas(64) std::atomic<std::size_t> made_{0};
  alignas(64) std::atomic<std::size_t> taken_{0};
};

// The walk as if it had stopped at region at.regions (on_region asking it to
// stop there): its region counts and nonsmooth regions are those up to that
// region, and it is neither complete nor certified. Its other counts (facets,
// linear regions, regions per layer, queries, degenerate crossings) stay the
// walk's own: they may include regions delivered after that one, whose rows
// the backlog dropped.
void restate_walk_at(WalkSummary& walk, const RegionsSoFar& at);

}  // namespace pleat::detail
