// Regions' rows on their way into certify's modular basis during a full walk:
// the walk's in-order delivery (on_region) queues them, and a walk thread
// reduces them (WalkOptions::background) while the others go on walking, so
// that the walk's delivery, which finds the next regions to process, never
// waits for the basis. Internal to enumerate/ (not installed).
#pragma once

#include "core/matrix.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"

#include <cstddef>
#include <deque>
#include <functional>
#include <memory>
#include <mutex>

namespace pleat::detail {

// One smooth region's rows modulo the walk's prime (coefficient_blocks_mod),
// with what certify records when they raise the rank.
struct PendingRows {
  ActivationPattern pattern;
  RationalVector interior;  // the region's exact interior point (its witness)
  ModularMatrix rows;
};

// A first-in first-out queue of PendingRows whose entries are handed to
// `reduce` one at a time and in the order pushed, whichever thread drains
// them: so the basis sees the same rows in the same order as if on_region had
// reduced each region's rows itself, for any thread count.
class RowBacklog {
 public:
  using Reduce = std::function<void(const PendingRows&)>;
  // limit_bytes: above this many bytes of queued rows, push reduces entries
  // itself until the queue is back under it (bounds the memory when the
  // basis falls behind the walk).
  RowBacklog(Reduce reduce, std::size_t limit_bytes);

  // Queues one region's rows (one thread at a time: the walk's delivery).
  void push(std::shared_ptr<const PendingRows> pending);
  // Reduces the oldest entry; false when the queue was empty. Any thread.
  bool reduce_one();
  // Reduces every entry queued.
  void reduce_all();

 private:
  Reduce reduce_;
  std::size_t limit_bytes_;
  std::mutex reducing_;  // held while an entry is reduced: one at a time, in order
  std::mutex queue_mutex_;
  std::deque<std::shared_ptr<const PendingRows>> queue_;  // under queue_mutex_
  std::size_t queued_bytes_ = 0;                           // under queue_mutex_
};

}  // namespace pleat::detail
