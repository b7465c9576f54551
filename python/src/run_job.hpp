// Running one of pleat's jobs from Python: without the GIL (other Python
// threads run meanwhile, and two jobs in two threads overlap), and with
// Ctrl-C. The job runs in a worker thread; the calling thread waits without
// the GIL and, every 50 ms, takes the GIL to run Python's pending signal
// handlers. A KeyboardInterrupt sets the job's interrupt flag, which pleat
// polls, so the job returns what it found as bounds (stop reason
// "interrupted"); any other exception from a handler also stops the job and
// is raised once it has returned.
#pragma once

#include "core/thread_caches.hpp"

#include <pybind11/pybind11.h>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <exception>
#include <mutex>
#include <optional>
#include <thread>

namespace pleat::python {

namespace py = pybind11;

template <class Job>
auto run_without_gil(Job&& job, std::atomic<bool>& interrupt) -> decltype(job()) {
  using Result = decltype(job());
  std::optional<Result> result;
  std::exception_ptr failure;
  std::mutex mutex;
  std::condition_variable finished;
  bool is_done = false;
  std::optional<py::error_already_set> handler_error;
  {
    py::gil_scoped_release release;
    std::thread worker([&] {
      free_number_caches_at_thread_exit();
      try {
        result.emplace(job());
      } catch (...) {
        failure = std::current_exception();
      }
      const std::lock_guard lock(mutex);
      is_done = true;
      finished.notify_all();
    });
    std::unique_lock lock(mutex);
    while (!finished.wait_for(lock, std::chrono::milliseconds(50), [&] { return is_done; })) {
      if (interrupt.load()) continue;
      lock.unlock();
      {
        py::gil_scoped_acquire acquire;
        if (PyErr_CheckSignals() != 0) {
          interrupt.store(true);
          if (PyErr_ExceptionMatches(PyExc_KeyboardInterrupt)) PyErr_Clear();
          else handler_error.emplace();  // fetches the error
        }
      }
      lock.lock();
    }
    lock.unlock();
    worker.join();
  }
  if (handler_error) throw std::move(*handler_error);
  if (failure) std::rethrow_exception(failure);
  return std::move(*result);
}

}  // namespace pleat::python
