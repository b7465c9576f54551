#include "enumerate/detail/row_backlog.hpp"

#include "enumerate/detail/parallel_for.hpp"

#include <atomic>
#include <cstdint>
#include <memory>
#include <thread>
#include <utility>
#include <vector>

namespace pleat::detail {

RowBacklog::RowBacklog(Reduce reduce, std::size_t limit_bytes)
    : reduce_(std::move(reduce)), limit_bytes_(limit_bytes), owner_(std::this_thread::get_id()) {}

// The pusher's: frees the rows of the slots reduced since it last looked.
// The acquire pairs with reduce_one's release of taken_: the reducer's reads
// of those slots happen before these writes.
void RowBacklog::free_reduced() {
  taken_seen_ = taken_.load(std::memory_order_acquire);
  for (; freed_ < taken_seen_; ++freed_) {
    Slot& done = slot(freed_);
    done.pending.rows.reset();
    held_bytes_ -= done.bytes;
    done.bytes = 0;
  }
}

void RowBacklog::push(const ActivationPattern& pattern, const RationalVector& interior,
                      std::shared_ptr<const ModularMatrix> rows, const RegionsSoFar& at) {
  if (is_closed()) return;
  const std::size_t index = written_.load(std::memory_order_relaxed);  // written by pushes alone
  // Room: the slot's last entry reduced (the ring full: reduced here) and its rows freed.
  while (index - taken_seen_ >= capacity) {
    free_reduced();
    if (index - taken_seen_ >= capacity && !reduce_one() && is_closed()) return;
  }
  if (held_bytes_ > 0 || freed_ + capacity <= index) free_reduced();
  std::unique_ptr<Slot[]>& chunk = chunks_[(index % capacity) / chunk_slots];
  if (!chunk) chunk = std::make_unique<Slot[]>(chunk_slots);
  Slot& next = slot(index);
  next.bytes = rows ? rows->rows() * rows->cols() * sizeof(std::uint64_t) : 0;
  next.pending.pattern = pattern;  // into the slot's own memory
  next.pending.interior = interior;
  next.pending.rows = std::move(rows);
  next.at = at;
  held_bytes_ += next.bytes;
  // Release: the slot (and its chunk) is written before the reducer, which
  // reads written_ with acquire, reads it.
  written_.store(index + 1, std::memory_order_release);
  while (held_bytes_ > limit_bytes_ && reduce_one()) free_reduced();
}

bool RowBacklog::reduce_one() {
  const std::lock_guard reducing(reducing_);
  const std::size_t taken = taken_.load(std::memory_order_relaxed);  // written under reducing_ alone
  const std::size_t written = written_.load(std::memory_order_acquire);  // slots below it: published
  if (is_closed()) {  // dropped unreduced
    if (taken != written) taken_.store(written, std::memory_order_release);
    return false;
  }
  if (taken == written) return false;
  Slot& oldest = slot(taken);
  const bool is_open = reduce_(oldest.pending, oldest.at);
  last_reduced_ = oldest.at;
  if (std::this_thread::get_id() == owner_) oldest.pending.rows.reset();  // the pushing thread: freed now
  if (!is_open) is_closed_.store(true, std::memory_order_release);
  // Release: this thread's reads of the slot happen before the pusher reuses
  // it or frees its rows. Closed: what is queued is dropped.
  taken_.store(is_open ? taken + 1 : written_.load(std::memory_order_acquire), std::memory_order_release);
  return true;
}

bool RowBacklog::reduce_all(const StopRequest& stop) {
  while (!stop.is_requested())
    if (!reduce_one()) return true;
  const std::lock_guard reducing(reducing_);
  const std::size_t written = written_.load(std::memory_order_acquire);
  const bool is_drained = taken_.load(std::memory_order_relaxed) == written || is_closed();
  is_closed_.store(true, std::memory_order_release);
  taken_.store(written, std::memory_order_release);
  return is_drained;
}

bool RowBacklog::reduce_all(const StopRequest& stop, unsigned threads, const Form& form) {
  const std::size_t first = taken_.load(std::memory_order_acquire), end = written_.load(std::memory_order_acquire);
  if (threads < 2 || is_closed() || end - first < 2 * ahead) return reduce_all(stop);
  // Entry i's rows go to formed[i % ahead], memory used again and again (new
  // memory costs a page fault a page), which the entry points to without
  // owning it; on the way out (an error included) no entry points there.
  std::vector<ModularMatrix> formed(ahead);
  struct Unpoint {
    RowBacklog& backlog;
    std::size_t first, end;
    ~Unpoint() {
      for (std::size_t i = first; i < end; ++i) backlog.slot(i).pending.rows.reset();
    }
  } unpoint{*this, first, end};
  std::vector<std::atomic<char>> formed_ready(end - first);  // each 0 until its entry's claimer is done
  alignas(64) std::atomic<std::size_t> next_to_form{first};  // the entries below it are claimed
  alignas(64) std::atomic<std::size_t> reduced_below{first};
  alignas(64) std::atomic<bool> finished{false};
  auto form_ahead = [&] {  // claims entries in order, at most `ahead` past the last reduced
    for (std::size_t i; !finished.load(std::memory_order_acquire) && (i = next_to_form.fetch_add(1)) < end;) {
      while (i >= reduced_below.load(std::memory_order_acquire) + ahead) {
        if (finished.load(std::memory_order_acquire)) return;
        std::this_thread::yield();
      }
      try {
        PendingRows& pending = slot(i).pending;
        if (!pending.rows && form(pending, formed[i % ahead]))
          pending.rows = std::shared_ptr<const ModularMatrix>(std::shared_ptr<void>(), &formed[i % ahead]);
      } catch (...) {  // reduce forms this entry's rows itself, and meets the error there
        formed_ready[i - first].store(1, std::memory_order_release);
        return;
      }
      formed_ready[i - first].store(1, std::memory_order_release);
    }
  };
  auto reduce_in_order = [&] {
    struct Finish {
      std::atomic<bool>& finished;
      ~Finish() { finished.store(true, std::memory_order_release); }
    } finish{finished};
    for (std::size_t i = first; i < end; ++i) {
      // Unclaimed (so not being formed: the entries before it are reduced):
      // claimed here and reduced as it is, its rows formed by reduce.
      std::size_t unclaimed = i;
      if (!next_to_form.compare_exchange_strong(unclaimed, i + 1))
        while (!formed_ready[i - first].load(std::memory_order_acquire)) std::this_thread::yield();
      if (stop.is_requested() || !reduce_one()) return;
      slot(i).pending.rows.reset();  // reduce_one frees the rows only on the pushing thread
      reduced_below.store(i + 1, std::memory_order_release);
    }
  };
  parallel_for(2, threads, [&](std::size_t task) { task == 0 ? reduce_in_order() : form_ahead(); });
  return reduce_all(stop);  // a stop's close, or nothing left
}

std::size_t RowBacklog::queued() const {
  const std::size_t taken = taken_.load(std::memory_order_relaxed);
  const std::size_t written = written_.load(std::memory_order_relaxed);
  return written > taken ? written - taken : 0;
}

RegionsSoFar RowBacklog::last_reduced() const {
  const std::lock_guard reducing(reducing_);
  return last_reduced_;
}

void restate_walk_at(WalkSummary& walk, const RegionsSoFar& at) {
  walk.regions = at.regions;
  walk.bounded_regions = at.bounded;
  walk.nonsmooth_regions.resize(at.nonsmooth);
  walk.complete = false;
  walk.certified = false;
  walk.stop_reason = StopReason::requested;
}

}  // namespace pleat::detail
