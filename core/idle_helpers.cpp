#include "core/idle_helpers.hpp"

#include <algorithm>

namespace pleat {

namespace {
thread_local const IdleHelpers* current_helpers = nullptr;
}

IdleHelpersScope::IdleHelpersScope(const IdleHelpers* helpers) : previous_(current_helpers) {
  current_helpers = helpers;
}

IdleHelpersScope::~IdleHelpersScope() { current_helpers = previous_; }

const IdleHelpers* current_idle_helpers() { return current_helpers; }

void for_ranges_with_idle_helpers(std::size_t count, std::size_t least, std::size_t align,
                                  const std::function<void(std::size_t begin, std::size_t end)>& work) {
  const IdleHelpers* helpers = current_helpers;
  least = std::max<std::size_t>(1, least);
  align = std::max<std::size_t>(1, align);
  if (helpers == nullptr || count < 2 * least) {
    if (count > 0) work(0, count);
    return;
  }
  // Several ranges per helper, so that a helper arriving late still takes a share.
  const std::size_t parts = std::min<std::size_t>(8, count / least);
  const std::size_t size = ((count + parts - 1) / parts + align - 1) / align * align;
  const std::size_t used = (count + size - 1) / size;
  helpers->run(used, [&](std::size_t part) { work(part * size, std::min(count, (part + 1) * size)); });
}

}  // namespace pleat
