// A documented limit of pleat was reached: not bad input, not a bug. The
// message names the limit; the command line prints it as it is (exit 1).
#pragma once

#include <stdexcept>

namespace pleat {

struct limit_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

}  // namespace pleat
