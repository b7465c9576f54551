// --threads and the time limit as every command that walks takes them (walk,
// certify, sample, track, draw), declared and applied in one place so that
// they are checked and mean the same everywhere.
#pragma once

#include "enumerate/walker.hpp"

#include <CLI/CLI.hpp>

#include <atomic>
#include <cstdint>
#include <string>

namespace pleat::cli {

struct WalkLimitOptions {
  std::uint64_t threads = 0;  // 0: all cores; at most max_threads (common.hpp)
  double time_limit = 0;      // seconds, 0 < t <= 1e9; 0 when the option was not given (no limit)
};

// Declares --threads and, when time_limit_name is not empty, the time limit
// under that name (--time-limit, --time-limit-each), both checked as they are
// read (add_threads_option, add_seconds_option).
void add_walk_limit_options(CLI::App& command, WalkLimitOptions& options, const std::string& threads_description,
                            const std::string& time_limit_name = "", const std::string& time_limit_description = "");

// Sets the walk's threads, time limit and interrupt flag from the options.
// The flag must outlive the walk.
void apply_walk_limits(const WalkLimitOptions& options, const std::atomic<bool>& interrupt, WalkOptions& walk);

}  // namespace pleat::cli
