// pleat's exception types, one home for all of them. The command line maps
// each to its exit code (cli/main.cpp): input_error and usage_error 2,
// limit_error 1; anything else is an internal error (exit 1, a bug).
#pragma once

#include <stdexcept>

namespace pleat {

// A broken precondition of a library call (misuse, not an expected outcome).
struct usage_error : std::logic_error {
  using std::logic_error::logic_error;
};

// Input that is not what the file format or a command expects. The message
// names the place (a JSON path, a line, an argument).
struct input_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

// A documented limit of pleat was reached: not bad input, not a bug (e.g. more
// than 16 neurons vanishing at one crossing point). The message names the
// limit; the command line prints it as it is (exit 1).
struct limit_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

}  // namespace pleat
