// Stopping a long computation cleanly: a time limit, an interrupt flag (set
// from a signal handler), or both. Every long phase polls one StopRequest so
// that a stop acts within a fraction of a second, even in the middle of one
// region's exact arithmetic on a deep network.
//
// Two ways to poll:
//   - explicitly, where a loop can return what it has: request.reason();
//   - deep inside exact work that has no partial result to return: install
//     the request for the current thread (StopScope) and call poll_stop(),
//     which throws Stopped; the code that installed the scope catches it and
//     reports what it had finished as bounds.
// poll_stop() is cheap (a thread-local pointer, an atomic load and a
// monotonic clock read, tens of nanoseconds), so loops over layers or rows
// may call it on every iteration.
#pragma once

#include <atomic>
#include <chrono>
#include <exception>
#include <string>

namespace pleat {

// Why a run ended early. The spec's names (to_string) are "time-limit",
// "max-regions", "interrupted"; "requested" is a caller's own stop (e.g. a
// rank that met its bound).
enum class StopReason { none, time_limit, max_regions, interrupted, requested };
std::string to_string(StopReason reason);  // "" for none

class StopRequest {
 public:
  using Clock = std::chrono::steady_clock;

  StopRequest() = default;  // never stops
  // interrupt may be null; time_limit_seconds <= 0 means no limit. The limit
  // counts from `started` (default: now).
  StopRequest(const std::atomic<bool>* interrupt, double time_limit_seconds, Clock::time_point started = Clock::now());

  // none, interrupted or time_limit (an interrupt wins over the clock).
  StopReason reason() const;
  bool is_requested() const { return reason() != StopReason::none; }
  // Throws Stopped when a stop is requested.
  void throw_if_requested() const;

  double elapsed_seconds() const;

 private:
  const std::atomic<bool>* interrupt_ = nullptr;
  bool has_deadline_ = false;
  Clock::time_point started_ = Clock::now();
  Clock::time_point deadline_{};
};

// Thrown by poll_stop / throw_if_requested. Not an error: whoever installed
// the request catches it and reports bounds.
class Stopped : public std::exception {
 public:
  explicit Stopped(StopReason reason) : reason_(reason) {}
  StopReason reason() const { return reason_; }
  const char* what() const noexcept override;

 private:
  StopReason reason_;
};

// Installs `request` as the current thread's stop request until the scope
// ends (scopes nest; the previous one is restored). The request must outlive
// the scope.
class StopScope {
 public:
  explicit StopScope(const StopRequest& request);
  ~StopScope();
  StopScope(const StopScope&) = delete;
  StopScope& operator=(const StopScope&) = delete;

 private:
  const StopRequest* previous_;
};

// The current thread's request (null when no scope is installed), e.g. to
// hand it to worker threads, which install their own StopScope with it.
const StopRequest* current_stop_request();

// Throws Stopped when the current thread's request asks to stop; does
// nothing without a StopScope.
void poll_stop();

}  // namespace pleat
