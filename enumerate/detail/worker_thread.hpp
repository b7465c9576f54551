// Starting the threads of enumerate/'s parallel work. Internal to enumerate/
// (not installed).
#pragma once

#include <chrono>
#include <cstddef>
#include <functional>
#include <thread>

namespace pleat::detail {

// A thread running body, placed first on a processor other than the calling
// thread's (the index-th other one, round robin) and free to move as usual
// once it runs. Why: a new thread may be queued behind its busy parent and
// start only when the scheduler next balances its processors; on the 2-core
// virtual machine we measure on that took 2-4 ms (and under 0.15 ms placed
// so), longer than a certify phase's share of a small walk. Linux only; on
// other systems, or when the process may use one processor only, a plain
// std::thread.
std::thread start_worker_thread(std::function<void()> body, std::size_t index);

// One look's wait in a spin loop that keeps the processor (x86's pause; a
// few nanoseconds elsewhere). The walk's threads and certify's loop helpers
// spin so, not yielding, for their first tens to hundreds of microseconds of
// waiting: on a machine shared with other programs, a yield hands this core
// to one of them for the rest of its time slice (a millisecond or more), while
// the work waited for usually comes within microseconds.
inline void relax_processor() {
#if defined(__x86_64__) || defined(__i386__)
  for (int i = 0; i < 16; ++i) __builtin_ia32_pause();
#endif
}

// The spin of the walk's and the loop helpers' waits: while waiting() holds,
// for at most `total`, pausing (relax_processor) between looks for the first
// `pause` of it, then yielding. waiting() is read first, before any wait.
template <class Waiting>
void spin_while(Waiting&& waiting, std::chrono::microseconds pause, std::chrono::microseconds total) {
  using clock = std::chrono::steady_clock;
  const auto start = clock::now();
  const auto pause_until = start + pause, until = start + total;
  for (auto now = start; waiting() && now < until; now = clock::now()) {
    if (now < pause_until) relax_processor();
    else std::this_thread::yield();
  }
}

}  // namespace pleat::detail
