#include "core/stop.hpp"

namespace pleat {
namespace {
thread_local const StopRequest* current_request = nullptr;
}  // namespace

std::string to_string(StopReason reason) {
  switch (reason) {
    case StopReason::none: return "";
    case StopReason::time_limit: return "time-limit";
    case StopReason::max_regions: return "max-regions";
    case StopReason::interrupted: return "interrupted";
    case StopReason::requested: return "requested";
  }
  return "";
}

StopRequest::StopRequest(const std::atomic<bool>* interrupt, double time_limit_seconds, Clock::time_point started)
    : interrupt_(interrupt), has_deadline_(time_limit_seconds > 0), started_(started) {
  // Callers range-check limits (the CLI allows at most 10^9 s); the cast
  // below is safe for any limit under about 292 years.
  if (has_deadline_)
    deadline_ = started + std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(time_limit_seconds));
}

StopReason StopRequest::reason() const {
  if (interrupt_ && interrupt_->load(std::memory_order_relaxed)) return StopReason::interrupted;
  if (has_deadline_ && Clock::now() >= deadline_) return StopReason::time_limit;
  return StopReason::none;
}

void StopRequest::throw_if_requested() const {
  if (const StopReason why = reason(); why != StopReason::none) throw Stopped(why);
}

double StopRequest::elapsed_seconds() const {
  return std::chrono::duration<double>(Clock::now() - started_).count();
}

const char* Stopped::what() const noexcept {
  switch (reason_) {
    case StopReason::interrupted: return "stopped: interrupted";
    case StopReason::time_limit: return "stopped: time limit reached";
    default: return "stopped";
  }
}

StopScope::StopScope(const StopRequest& request) : previous_(current_request) { current_request = &request; }

StopScope::~StopScope() { current_request = previous_; }

const StopRequest* current_stop_request() { return current_request; }

void poll_stop() {
  if (current_request) current_request->throw_if_requested();
}

}  // namespace pleat
