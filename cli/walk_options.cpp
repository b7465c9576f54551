#include "cli/walk_options.hpp"

#include "cli/common.hpp"

namespace pleat::cli {

void add_walk_limit_options(CLI::App& command, WalkLimitOptions& options, const std::string& threads_description,
                            const std::string& time_limit_name, const std::string& time_limit_description) {
  add_threads_option(command, options.threads, threads_description);
  if (!time_limit_name.empty()) add_seconds_option(command, time_limit_name, options.time_limit, time_limit_description);
}

void apply_walk_limits(const WalkLimitOptions& options, const std::atomic<bool>& interrupt, WalkOptions& walk) {
  walk.threads = static_cast<unsigned>(options.threads);
  walk.time_limit_seconds = options.time_limit;
  walk.interrupt = &interrupt;
}

}  // namespace pleat::cli
