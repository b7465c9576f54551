// A walk's region work and its ordered delivery, run together on a walk's
// threads with no barrier between levels (walk_regions with
// WalkOptions::on_region_in_pool). Internal to enumerate/ (not installed).
#pragma once

#include "core/pattern.hpp"
#include "core/stop.hpp"
#include "enumerate/detail/region_processor.hpp"

#include <atomic>
#include <condition_variable>
#include <cstddef>
#include <cstdint>
#include <deque>
#include <exception>
#include <functional>
#include <memory>
#include <mutex>
#include <optional>
#include <thread>
#include <vector>

namespace pleat::detail {

// One pattern of the walk and, once a worker has processed it, its region.
struct WalkTask {
  ActivationPattern pattern;
  std::unique_ptr<Processed> processed;  // written by the thread that processed the task
  std::size_t worker = 0;                // that thread's worker number
};

// Tasks are numbered 0, 1, 2, ... in the order they are added. Any thread
// processes any task, preferring the one the consumer needs next, then the
// others in the order they were added; the caller's thread consumes them in
// the order the consumer asks for, while the others go on processing, and
// background work runs on one other thread (see may_consume,
// may_run_background). So a
// walk's next level is processed while this one is still being delivered,
// and what is delivered, and in which order, does not depend on the thread
// count.
class WalkPipeline {
 public:
  // process(worker, task): fills task.processed; runs concurrently with other
  // calls and with consume, under a StopScope of run's request; must touch
  // only its own task and what consume does not write.
  using Process = std::function<void(std::size_t worker, WalkTask& task)>;
  // consume(index, task): the task's processed region, one call at a time, in
  // the order asked for and with no StopScope; may add tasks and release
  // consumed ones. Returns the index of the task it needs next (added
  // already), or nothing: the run is over.
  using Consume = std::function<std::optional<std::size_t>(std::size_t index, WalkTask& task)>;
  // on_tick(consumed, added): every 0.2 s, on the thread that called run.
  using Tick = std::function<void(std::size_t consumed, std::size_t added)>;
  // background(): one unit of serial work that consume left behind (empty:
  // none); returns false when none is pending. One call at a time, with no
  // StopScope, concurrently with process and consume. Once it returned false,
  // asked once more right away (run_background), then again only after a
  // consume.
  using Background = std::function<bool()>;

  // workers >= 1 threads, the caller's included; at most `window` tasks
  // (at least 1) are processed or in process and not yet consumed, besides
  // the one the consumer needs (it bounds the regions held in memory).
  WalkPipeline(std::size_t workers, std::size_t window);
  // Ends threads start() began when run never came.
  ~WalkPipeline();
  WalkPipeline(const WalkPipeline&) = delete;
  WalkPipeline& operator=(const WalkPipeline&) = delete;

  // Optional, before run: starts the other workers' threads now, so that
  // their start-up overlaps the caller's own set-up (starting a thread costs
  // up to milliseconds on an idle virtual machine: more than a small walk).
  // They wait for run (watching for it for a few milliseconds before they
  // sleep). run calls it when the caller did not.
  void start();

  // Adds a task (before run, or from consume); returns its index.
  std::size_t add(ActivationPattern pattern);
  // Frees tasks [.., before), which must all have been consumed (from consume).
  void release_before(std::size_t before);
  // From consume: frees the task's processed record on the thread that made
  // it (now, when that is this one; else before its next task), so that its
  // memory goes back to that thread's allocator cache: freed by the consumer,
  // each record's memory crossed threads (a 2-thread certify of 2,15,15,15,1
  // spent about 2 ms more in the allocator).
  void retire(WalkTask& task);

  // Runs from task `first` (added already) until consume returns nothing, a
  // stop, or an exception. A stop (stop.reason() polled between tasks, or
  // Stopped thrown inside one, which leaves it unprocessed) ends the
  // processing; tasks already processed are still consumed as long as the one
  // needed next is among them. Returns the stop's reason (none when consume
  // ended the run). Rethrows the first other exception once every thread has
  // ended. Called once.
  // Worker 1 (worker 0 when it is the only one) runs pending background work
  // before starting another task (on one thread: right after each consume,
  // as if consume did it): it is the serial stage that would otherwise hold
  // back the end of the run, while the other threads process. Work still
  // pending when the run ends is left to the caller.
  StopReason run(std::size_t first, const StopRequest& stop, const Process& process, const Consume& consume,
                 const Tick& on_tick, const Background& background = {});

 private:
  enum class State : unsigned char { waiting, claimed, done };
  struct Hooks;
  void serve(std::size_t worker, const Hooks& hooks);
  void await_run(std::size_t worker);
  bool is_needed_done() const;
  std::optional<std::size_t> claim();
  void process_one(std::unique_lock<std::mutex>& lock, std::size_t worker, std::size_t index, const Hooks& hooks);
  void consume_ready(std::unique_lock<std::mutex>& lock, std::size_t worker, const Hooks& hooks);
  bool may_consume(std::size_t worker) const;
  bool may_run_background(std::size_t worker) const;
  void run_background(std::unique_lock<std::mutex>& lock, const Hooks& hooks);
  void signal_change();
  bool spin_for_change(std::unique_lock<std::mutex>& lock, bool watches_background);
  void fail(std::exception_ptr error);

  bool may_have_background() const;
  void note_change();

  std::size_t workers_;
  std::size_t window_;
  // Counts changes waiting threads watch for (spin_for_change), on a cache
  // line of its own: a spinning thread's looks do not take the lock's line
  // from the thread that holds it.
  alignas(64) std::atomic<std::uint64_t> version_{0};
  // consumed_, published for the background worker, which reads it without
  // the lock (its own line: written by the consumer alone, once per region).
  alignas(64) std::atomic<std::size_t> consumed_published_{0};
  // The background worker's alone: consumed_published_ as it was read before
  // background last found nothing pending.
  alignas(64) std::size_t background_idle_at_ = 0;
  alignas(64) std::mutex mutex_;
  std::condition_variable changed_;
  // Everything below is guarded by mutex_.
  std::size_t waiting_ = 0;  // threads watching for a change (spin_for_change, changed_)
  std::deque<WalkTask> tasks_;  // tasks offset_, offset_ + 1, ...
  std::deque<State> states_;
  std::size_t offset_ = 0;
  std::size_t next_claim_ = 0;           // no task below it is waiting
  std::optional<std::size_t> needed_;    // the task consume asks for next
  bool is_consuming_ = false;
  bool is_over_ = false;                 // consume ended the run, or an exception did
  StopReason stopped_ = StopReason::none;  // set: no task is started any more
  std::size_t in_flight_ = 0;            // tasks being processed
  std::size_t held_ = 0;                 // claimed and not yet consumed
  std::size_t consumed_ = 0;
  std::exception_ptr error_;
  std::size_t consumer_ = 0;  // the worker consuming, while one is
  std::vector<std::vector<std::unique_ptr<Processed>>> retired_;  // by worker: records retire left it to free
  const Hooks* hooks_ = nullptr;      // run's, once it started
  std::vector<std::thread> threads_;  // workers 1, 2, ... (started by start)
};

}  // namespace pleat::detail
