// Shared by the libFuzzer targets in fuzz/: the fuzz input as a file, and
// running one pleat subcommand in-process the way cli/main.cpp does.
//
// What counts as a finding: a crash, a sanitizer report, a time-out, or an
// exception other than input_error / usage_error leaving a reader or a
// command (cli/main.cpp would print it as "internal error", which no input
// may cause). Bad input must end in a clear input_error, nothing else.
#pragma once

#include "cli/command.hpp"

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace pleat::fuzz {

// The input bytes in an anonymous in-memory file (memfd), for readers that
// take a path. Precondition: one instance per process at a time is enough;
// any number works.
class InputFile {
 public:
  InputFile(const std::uint8_t* data, std::size_t size);
  ~InputFile();
  InputFile(const InputFile&) = delete;
  InputFile& operator=(const InputFile&) = delete;

  // "/proc/self/fd/N": opens the same bytes from the start each time.
  const std::string& path() const { return path_; }

 private:
  int descriptor_ = -1;
  std::string path_;
};

// A file of the source tree (data/, tests/data/), for fixed arguments.
std::string source_file(std::string_view relative);

// A scratch path for outputs ("/tmp/pleat-fuzz-<pid>-<name>").
std::string scratch_path(std::string_view name);

// Runs `pleat ARGUMENTS...` in-process with only the subcommand that
// `register_command` declares. Returns the action's exit code, or 2 for bad
// input or usage (input_error, usage_error, a command-line parse error), as
// cli/main.cpp does. Any other exception propagates to the fuzzer.
int run_subcommand(void (*register_command)(cli::CommandTable&), const std::vector<std::string>& arguments);

}  // namespace pleat::fuzz
