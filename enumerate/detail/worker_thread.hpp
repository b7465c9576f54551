// Starting the threads of enumerate/'s parallel work. Internal to enumerate/
// (not installed).
#pragma once

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

}  // namespace pleat::detail
