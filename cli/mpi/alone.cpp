// cli/process_group.hpp in a build without MPI (PLEAT_MPI=OFF): pleat always
// runs alone.
#include "cli/process_group.hpp"

#include "core/errors.hpp"

#include <iostream>

namespace pleat::cli {

ProcessGroupSession::ProcessGroupSession(int&, char**&) {}
ProcessGroupSession::~ProcessGroupSession() = default;

int ProcessGroupSession::fail(const std::string& message, int exit_code) {
  std::cerr << "pleat: " << message << "\n";
  return exit_code;
}

WalkTransport* process_group() { return nullptr; }

void send_to_leader(const std::string&) { throw usage_error("send_to_leader: pleat runs alone (built without MPI)"); }

std::optional<std::pair<std::size_t, std::string>> receive_at_leader() {
  throw usage_error("receive_at_leader: pleat runs alone (built without MPI)");
}

}  // namespace pleat::cli
