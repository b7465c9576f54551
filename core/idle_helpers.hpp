// Threads that would otherwise wait, lent to serial work deep inside a call:
// a walk lends its idle workers to the region callback it runs in order
// (certify's row reduction, core/rank.hpp). Installed per thread, like
// StopScope, so that the code between lender and borrower need not pass it.
#pragma once

#include <cstddef>
#include <functional>

namespace pleat {

class IdleHelpers {
 public:
  virtual ~IdleHelpers() = default;
  // Runs part(0), ..., part(parts - 1), each exactly once, on the calling
  // thread and on whichever helpers are idle meanwhile (none, possibly);
  // returns when every part is done, rethrowing the first exception one
  // threw. Parts run concurrently: each must write only its own data.
  virtual void run(std::size_t parts, const std::function<void(std::size_t part)>& part) const = 0;
};

// Installs `helpers` (may be null: none) for the current thread until the
// scope ends; scopes nest. The helpers must outlive the scope.
class IdleHelpersScope {
 public:
  explicit IdleHelpersScope(const IdleHelpers* helpers);
  ~IdleHelpersScope();
  IdleHelpersScope(const IdleHelpersScope&) = delete;
  IdleHelpersScope& operator=(const IdleHelpersScope&) = delete;

 private:
  const IdleHelpers* previous_;
};

// The current thread's helpers (null when none are installed).
const IdleHelpers* current_idle_helpers();

// Runs work(begin, end) over [0, count) split into ranges of at least
// `least` items (the last may be shorter; boundaries multiples of `align`),
// on the current thread's idle helpers when there are any and count is at
// least 2 * least, else in one call on this thread. Exact for any split when
// work's results per item do not depend on the range.
void for_ranges_with_idle_helpers(std::size_t count, std::size_t least, std::size_t align,
                                  const std::function<void(std::size_t begin, std::size_t end)>& work);

}  // namespace pleat
