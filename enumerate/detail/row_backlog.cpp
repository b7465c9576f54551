#include "enumerate/detail/row_backlog.hpp"

#include <utility>

namespace pleat::detail {

namespace {

std::size_t bytes_of(const PendingRows& pending) {
  return pending.rows.rows() * pending.rows.cols() * sizeof(std::uint64_t);
}

}  // namespace

RowBacklog::RowBacklog(Reduce reduce, std::size_t limit_bytes)
    : reduce_(std::move(reduce)), limit_bytes_(limit_bytes) {}

void RowBacklog::push(std::shared_ptr<const PendingRows> pending) {
  bool is_over = false;
  {
    const std::lock_guard lock(queue_mutex_);
    queued_bytes_ += bytes_of(*pending);
    queue_.push_back(std::move(pending));
    is_over = queued_bytes_ > limit_bytes_;
  }
  while (is_over && reduce_one()) {
    const std::lock_guard lock(queue_mutex_);
    is_over = queued_bytes_ > limit_bytes_;
  }
}

bool RowBacklog::reduce_one() {
  const std::lock_guard reducing(reducing_);
  std::shared_ptr<const PendingRows> oldest;
  {
    const std::lock_guard lock(queue_mutex_);
    if (queue_.empty()) return false;
    oldest = std::move(queue_.front());
    queue_.pop_front();
  }
  reduce_(*oldest);
  const std::lock_guard lock(queue_mutex_);
  queued_bytes_ -= bytes_of(*oldest);  // counted until reduced: the rows are held till then
  return true;
}

void RowBacklog::reduce_all() {
  while (reduce_one()) {
  }
}

}  // namespace pleat::detail
