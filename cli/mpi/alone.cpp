// cli/process_group.hpp in a build without MPI (PLEAT_MPI=OFF): pleat always
// runs alone.
#include "cli/process_group.hpp"

#include <iostream>

namespace pleat::cli {

ProcessGroupSession::ProcessGroupSession(int&, char**&) {}
ProcessGroupSession::~ProcessGroupSession() = default;

int ProcessGroupSession::fail(const std::string& message, int exit_code) {
  std::cerr << "pleat: " << message << "\n";
  return exit_code;
}

WalkTransport* process_group() { return nullptr; }

}  // namespace pleat::cli
