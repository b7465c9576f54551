// StopRequest, StopScope and poll_stop (core/stop.hpp).
#include "core/stop.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <thread>

namespace pleat {
namespace {

TEST(StopRequest, DefaultNeverStops) {
  const StopRequest request;
  EXPECT_EQ(request.reason(), StopReason::none);
  EXPECT_NO_THROW(request.throw_if_requested());
}

TEST(StopRequest, InterruptFlagIsSeen) {
  std::atomic<bool> flag{false};
  const StopRequest request(&flag, 0);
  EXPECT_EQ(request.reason(), StopReason::none);
  flag = true;
  EXPECT_EQ(request.reason(), StopReason::interrupted);
  try {
    request.throw_if_requested();
    FAIL() << "no Stopped thrown";
  } catch (const Stopped& stopped) {
    EXPECT_EQ(stopped.reason(), StopReason::interrupted);
  }
}

TEST(StopRequest, DeadlineCountsFromTheGivenStart) {
  const auto long_ago = StopRequest::Clock::now() - std::chrono::seconds(10);
  EXPECT_EQ(StopRequest(nullptr, 5, long_ago).reason(), StopReason::time_limit);
  EXPECT_EQ(StopRequest(nullptr, 60, long_ago).reason(), StopReason::none);
  EXPECT_EQ(StopRequest(nullptr, 0, long_ago).reason(), StopReason::none);  // 0: no limit
}

TEST(StopRequest, InterruptWinsOverTheClock) {
  std::atomic<bool> flag{true};
  const auto long_ago = StopRequest::Clock::now() - std::chrono::seconds(10);
  EXPECT_EQ(StopRequest(&flag, 1, long_ago).reason(), StopReason::interrupted);
}

TEST(PollStop, DoesNothingWithoutAScope) {
  EXPECT_EQ(current_stop_request(), nullptr);
  EXPECT_NO_THROW(poll_stop());
}

TEST(PollStop, ThrowsInsideAScopeAndScopesNest) {
  std::atomic<bool> outer_flag{false}, inner_flag{true};
  const StopRequest outer(&outer_flag, 0), inner(&inner_flag, 0);
  {
    const StopScope outer_scope(outer);
    EXPECT_NO_THROW(poll_stop());
    {
      const StopScope inner_scope(inner);
      EXPECT_EQ(current_stop_request(), &inner);
      EXPECT_THROW(poll_stop(), Stopped);
    }
    EXPECT_EQ(current_stop_request(), &outer);
    EXPECT_NO_THROW(poll_stop());
  }
  EXPECT_EQ(current_stop_request(), nullptr);
}

TEST(PollStop, ScopeBelongsToOneThread) {
  std::atomic<bool> flag{true};
  const StopRequest request(&flag, 0);
  const StopScope scope(request);
  bool other_thread_threw = false;
  std::thread other([&] {
    try {
      poll_stop();
    } catch (const Stopped&) {
      other_thread_threw = true;
    }
  });
  other.join();
  EXPECT_FALSE(other_thread_threw);
  EXPECT_THROW(poll_stop(), Stopped);
}

TEST(StopReason, SpecNames) {
  EXPECT_EQ(to_string(StopReason::none), "");
  EXPECT_EQ(to_string(StopReason::time_limit), "time-limit");
  EXPECT_EQ(to_string(StopReason::max_regions), "max-regions");
  EXPECT_EQ(to_string(StopReason::interrupted), "interrupted");
}

}  // namespace
}  // namespace pleat
