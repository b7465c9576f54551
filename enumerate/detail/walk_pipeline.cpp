#include "enumerate/detail/walk_pipeline.hpp"

#include "enumerate/detail/worker_thread.hpp"

#include <algorithm>
#include <chrono>
#include <thread>
#include <utility>
#include <vector>

namespace pleat::detail {

struct WalkPipeline::Hooks {
  const StopRequest& stop;
  const Process& process;
  const Consume& consume;
  const Tick& on_tick;
  const Background& background;
};

WalkPipeline::WalkPipeline(std::size_t workers, std::size_t window)
    : workers_(std::max<std::size_t>(1, workers)), window_(std::max<std::size_t>(1, window)), retired_(workers_) {}

std::size_t WalkPipeline::add(ActivationPattern pattern) {
  const std::lock_guard lock(mutex_);
  tasks_.push_back(WalkTask{std::move(pattern), nullptr});
  states_.push_back(State::waiting);
  return offset_ + tasks_.size() - 1;
}

void WalkPipeline::retire(WalkTask& task) {
  if (!task.processed) return;
  if (task.worker == consumer_) {
    task.processed.reset();
    return;
  }
  const std::lock_guard lock(mutex_);
  retired_[task.worker].push_back(std::move(task.processed));
}

void WalkPipeline::release_before(std::size_t before) {
  const std::lock_guard lock(mutex_);
  while (offset_ < before && !tasks_.empty()) {
    tasks_.pop_front();
    states_.pop_front();
    ++offset_;
  }
  next_claim_ = std::max(next_claim_, offset_);
}

bool WalkPipeline::is_needed_done() const {
  return needed_ && states_[*needed_ - offset_] == State::done;
}

// The task the consumer needs when nobody has it yet; else the first waiting
// task in the order added, unless the window is full.
std::optional<std::size_t> WalkPipeline::claim() {
  const auto take = [&](std::size_t index) {
    states_[index - offset_] = State::claimed;
    ++in_flight_;
    ++held_;
    return index;
  };
  if (needed_ && states_[*needed_ - offset_] == State::waiting) return take(*needed_);
  if (held_ >= window_) return std::nullopt;
  const std::size_t end = offset_ + states_.size();
  while (next_claim_ < end && states_[next_claim_ - offset_] != State::waiting) ++next_claim_;
  if (next_claim_ == end) return std::nullopt;
  return take(next_claim_++);
}

// Under the lock: wakes the sleeping threads and ends the spinning ones' wait.
void WalkPipeline::signal_change() {
  version_.fetch_add(1, std::memory_order_release);
  changed_.notify_all();
}

// Under the lock: signal_change when a thread is waiting. A thread registers
// (waiting_) under the lock before it last reads the state it waits on
// change of, and reads version_ again under the lock before it sleeps, so a
// change made under the lock either is seen or finds it registered. The
// consumer changes something at every region; signalled unconditionally,
// each change wrote version_, a line the other threads had read.
void WalkPipeline::note_change() {
  if (waiting_ > 0) signal_change();
}

// The background worker's, without the lock: a consume happened since
// background last found nothing pending (the consume's own work, such as
// certify's rows, happens before it is published: release there, acquire here).
bool WalkPipeline::may_have_background() const {
  return consumed_published_.load(std::memory_order_acquire) != background_idle_at_;
}

void WalkPipeline::fail(std::exception_ptr error) {
  if (!error_) error_ = std::move(error);
  is_over_ = true;
  signal_change();
}

// Called and returns with the lock held; processes without it.
void WalkPipeline::process_one(std::unique_lock<std::mutex>& lock, std::size_t worker, std::size_t index,
                               const Hooks& hooks) {
  WalkTask& task = tasks_[index - offset_];  // stays put: a deque's elements do not move on push_back
  task.worker = worker;
  std::vector<std::unique_ptr<Processed>> spent;
  spent.swap(retired_[worker]);
  lock.unlock();
  spent.clear();  // records this thread made, consumed elsewhere
  State finished = State::done;
  try {
    hooks.process(worker, task);
  } catch (const Stopped& stopped) {  // mid-task: it stays unprocessed
    lock.lock();
    if (stopped_ == StopReason::none) stopped_ = stopped.reason();
    finished = State::waiting;
  } catch (...) {
    lock.lock();
    fail(std::current_exception());
    finished = State::waiting;
  }
  if (!lock.owns_lock()) lock.lock();
  states_[index - offset_] = finished;
  --in_flight_;
  if (finished == State::waiting) --held_;
  // Someone may be waiting to consume it, or (stopped) for the last task in flight.
  if (stopped_ != StopReason::none) signal_change();
  else if (needed_ == index) note_change();
}

// Consumes while the task needed next is done; one thread at a time.
void WalkPipeline::consume_ready(std::unique_lock<std::mutex>& lock, std::size_t worker, const Hooks& hooks) {
  static const StopRequest never;
  is_consuming_ = true;
  consumer_ = worker;
  while (!is_over_ && is_needed_done()) {
    const std::size_t index = *needed_;
    WalkTask& task = tasks_[index - offset_];
    lock.unlock();
    std::optional<std::size_t> next;
    try {
      const StopScope unstoppable(never);  // consume has no partial result to abandon
      next = hooks.consume(index, task);
    } catch (...) {
      lock.lock();
      fail(std::current_exception());
      break;
    }
    lock.lock();
    ++consumed_;
    --held_;
    consumed_published_.store(consumed_, std::memory_order_release);  // its background work: pending now
    needed_ = next;
    if (!next) {
      is_over_ = true;
      signal_change();
    } else {
      note_change();  // new tasks, a new task needed, room in the window, or background work
    }
  }
  is_consuming_ = false;
}

// Background work, without the lock, on one thread (may_run_background): up
// to background_burst units while there are more and no stop is asked, so
// that this thread takes the lock, which the consumer takes several times per
// region, once per burst and not twice per unit (the consumer leaves about one
// unit per region: a burst runs ahead only when the work fell behind).
void WalkPipeline::run_background(std::unique_lock<std::mutex>& lock, const Hooks& hooks) {
  static const StopRequest never;
  constexpr int background_burst = 8;
  lock.unlock();
  try {
    const StopScope unstoppable(never);  // like consume: nothing partial to abandon
    for (int unit = 0; unit < background_burst && !hooks.stop.is_requested(); ++unit) {
      if (hooks.background()) continue;
      // None pending: read how far the consumer got, then look once more, so
      // that a consume published before the look is not missed (the count is
      // read only when the work runs dry, not before every unit: its line
      // then stays with the consumer, which writes it at every region).
      const std::size_t published = consumed_published_.load(std::memory_order_acquire);
      if (hooks.background()) continue;
      background_idle_at_ = published;  // none pending up to that consume
      break;
    }
  } catch (...) {
    lock.lock();
    fail(std::current_exception());
    return;
  }
  lock.lock();
}

// Worker 0 (run's caller) consumes while the run goes on, and worker 1 alone
// runs the background work (worker 0 when there is no other), so that what
// each keeps from call to call (the walk's pattern store and levels;
// certify's row basis, a megabyte) stays in one processor's cache. Moving
// between processors costs every cache line it touches: on our 2-core
// virtual machine a line crossed in 50 ns in some hours and 320 ns in others
// (two threads bouncing a flag), and with consume and background on
// whichever thread was free a 2-thread certify of 2,15,15,15,1 spent 12 ms
// of thread time more than one thread (41 against 29). Once stopped (the
// caller may have left), any thread consumes.
bool WalkPipeline::may_consume(std::size_t worker) const {
  return worker == 0 || stopped_ != StopReason::none;
}

bool WalkPipeline::may_run_background(std::size_t worker) const {
  return worker == std::min<std::size_t>(1, workers_ - 1);
}

// Nothing to do: before sleeping, watch for a change for a while without the
// lock. The consumer adds tasks every few tens of microseconds, and waking a
// sleeping thread costs about as much. Pausing (relax_processor) for the first
// 50 us, one or two regions' work, in which most waits end; then yielding
// between looks: by then the thread whose work this one waits for may need
// this core. True when something changed.
// The background worker watches for a consume too (may_have_background);
// every consume also changes version_ while it waits, which is what decides.
bool WalkPipeline::spin_for_change(std::unique_lock<std::mutex>& lock, bool watches_background) {
  const std::uint64_t seen = version_.load(std::memory_order_acquire);
  lock.unlock();
  spin_while(
      [&] {
        return version_.load(std::memory_order_acquire) == seen && !(watches_background && may_have_background());
      },
      std::chrono::microseconds(50), std::chrono::microseconds(200));
  lock.lock();
  return version_.load(std::memory_order_relaxed) != seen;
}

void WalkPipeline::serve(std::size_t worker, const Hooks& hooks) {
  using clock = std::chrono::steady_clock;
  auto last_tick = clock::now();
  const auto tick = [&](std::unique_lock<std::mutex>& lock) {
    if (worker != 0 || !hooks.on_tick || clock::now() - last_tick < std::chrono::milliseconds(200)) return;
    const std::size_t consumed = consumed_;
    const std::size_t added = offset_ + tasks_.size();
    lock.unlock();
    hooks.on_tick(consumed, added);
    lock.lock();
    last_tick = clock::now();
  };
  const StopScope scope(hooks.stop);
  std::unique_lock lock(mutex_);
  while (!is_over_) {
    if (!is_consuming_ && is_needed_done() && may_consume(worker)) {
      consume_ready(lock, worker, hooks);
      continue;
    }
    if (stopped_ == StopReason::none) {
      if (const StopReason reason = hooks.stop.reason(); reason != StopReason::none) {
        stopped_ = reason;
        signal_change();
      }
    }
    if (stopped_ != StopReason::none) break;  // what is done gets consumed by whoever finishes it
    const bool runs_background = hooks.background && may_run_background(worker);
    if (runs_background && may_have_background()) {
      run_background(lock, hooks);
      continue;
    }
    if (const auto index = claim()) {
      process_one(lock, worker, *index, hooks);
      tick(lock);
      continue;
    }
    ++waiting_;  // until the wait ends, changes signal (note_change)
    const bool is_changed = spin_for_change(lock, runs_background);
    if (!is_changed && worker == 0) changed_.wait_for(lock, std::chrono::milliseconds(200));
    else if (!is_changed) changed_.wait(lock);
    --waiting_;
    if (!is_changed && worker == 0) tick(lock);
  }
}

WalkPipeline::~WalkPipeline() {
  {
    const std::lock_guard lock(mutex_);
    is_over_ = true;  // threads started for a run that never came: they end
    signal_change();
  }
  for (auto& thread : threads_) thread.join();
}

// A worker started before run: watches for run's hooks (pausing for the first
// millisecond, the caller's set-up before run, then yielding, for up to 20 ms
// in all: waking a sleeping thread on an idle virtual machine can take
// milliseconds), then sleeps until they come; serves them, or ends when the
// pipeline does without a run.
void WalkPipeline::await_run(std::size_t worker) {
  spin_while([&] { return version_.load(std::memory_order_acquire) == 0; }, std::chrono::milliseconds(1),
             std::chrono::milliseconds(20));
  const Hooks* hooks = nullptr;
  {
    std::unique_lock lock(mutex_);
    changed_.wait(lock, [&] { return hooks_ != nullptr || is_over_; });
    hooks = hooks_;
  }
  if (hooks != nullptr) serve(worker, *hooks);
}

void WalkPipeline::start() {
  if (!threads_.empty()) return;
  try {
    for (std::size_t worker = 1; worker < workers_; ++worker)
      threads_.push_back(start_worker_thread([this, worker] { await_run(worker); }, worker - 1));
  } catch (...) {  // a thread that could not start: end those that did
    {
      const std::lock_guard lock(mutex_);
      fail(std::current_exception());
    }
    for (auto& thread : threads_) thread.join();
    threads_.clear();
    throw;
  }
}

StopReason WalkPipeline::run(std::size_t first, const StopRequest& stop, const Process& process,
                             const Consume& consume, const Tick& on_tick, const Background& background) {
  const Hooks hooks{stop, process, consume, on_tick, background};
  start();
  {
    const std::lock_guard lock(mutex_);
    needed_ = first;
    hooks_ = &hooks;
    signal_change();
  }
  serve(0, hooks);
  for (auto& thread : threads_) thread.join();
  threads_.clear();
  if (error_) std::rethrow_exception(error_);
  return stopped_;
}

}  // namespace pleat::detail
