#include "enumerate/detail/row_backlog.hpp"

#include <utility>

namespace pleat::detail {

namespace {

// The rows' bytes (none yet: nothing counted; such an entry holds a pattern
// and a point, as certify's list of smooth regions does for every region).
std::size_t bytes_of(const PendingRows& pending) {
  return pending.rows ? pending.rows->rows() * pending.rows->cols() * sizeof(std::uint64_t) : 0;
}

}  // namespace

RowBacklog::RowBacklog(Reduce reduce, std::size_t limit_bytes)
    : reduce_(std::move(reduce)), limit_bytes_(limit_bytes) {}

void RowBacklog::push(std::shared_ptr<const PendingRows> pending, const RegionsSoFar& at) {
  if (is_closed()) return;
  bool is_over = false;
  std::vector<std::shared_ptr<const PendingRows>> spent;
  {
    const std::lock_guard lock(queue_mutex_);
    spent.swap(spent_);
    pusher_ = std::this_thread::get_id();
    queued_bytes_ += bytes_of(*pending);
    queue_.push_back(Entry{std::move(pending), at});
    queued_.store(queue_.size(), std::memory_order_relaxed);
    is_over = queued_bytes_ > limit_bytes_;
  }
  while (is_over && reduce_one()) {
    const std::lock_guard lock(queue_mutex_);
    is_over = queued_bytes_ > limit_bytes_;
  }
}

bool RowBacklog::reduce_one() {
  const std::lock_guard reducing(reducing_);
  Entry oldest;
  {
    const std::lock_guard lock(queue_mutex_);
    if (is_closed()) queue_.clear();
    if (queue_.empty()) {
      queued_.store(0, std::memory_order_relaxed);
      return false;
    }
    oldest = std::move(queue_.front());
    queue_.pop_front();
    queued_.store(queue_.size(), std::memory_order_relaxed);
  }
  if (!reduce_(*oldest.pending, oldest.at)) is_closed_.store(true, std::memory_order_release);
  last_reduced_ = oldest.at;
  const std::lock_guard lock(queue_mutex_);
  queued_bytes_ -= bytes_of(*oldest.pending);  // counted until reduced: the rows are held till then
  if (std::this_thread::get_id() != pusher_) spent_.push_back(std::move(oldest.pending));
  if (is_closed()) {
    queue_.clear();
    queued_bytes_ = 0;
    queued_.store(0, std::memory_order_relaxed);
  }
  return true;
}

bool RowBacklog::reduce_all(const StopRequest& stop) {
  while (!stop.is_requested())
    if (!reduce_one()) return true;
  const std::lock_guard reducing(reducing_);
  const std::lock_guard lock(queue_mutex_);
  const bool is_drained = queue_.empty() || is_closed();
  is_closed_.store(true, std::memory_order_release);
  queue_.clear();
  queued_bytes_ = 0;
  queued_.store(0, std::memory_order_relaxed);
  return is_drained;
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
