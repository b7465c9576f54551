// The MPI job this pleat is one process of, when mpirun (or srun with an MPI
// plugin) started it: `mpirun -n P pleat walk NET ...` runs one walk across
// P processes (enumerate/distributed_walk.hpp). Only the pleat executable has
// this (cli/mpi/: MPI when built with PLEAT_MPI, else a stand-in that always
// runs alone); the libraries and the Python module never see MPI.
//
// In a job, rank 0 reads, prints and writes everything; the other ranks read
// the same inputs, take part in the work and print nothing. walk, certify and
// survey run across the job; any other command runs on rank 0 alone.
#pragma once

#include "enumerate/distributed_walk.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <utility>

namespace pleat::cli {

// Taken at the top of main. Joins the MPI job when the environment says an
// MPI launcher started this process; otherwise (and in a build without MPI)
// does nothing and pleat runs alone, exactly as without MPI. On ranks other
// than 0 it sends standard output and standard error to /dev/null; their
// error messages (fail) still reach the launcher's standard error.
class ProcessGroupSession {
 public:
  ProcessGroupSession(int& argc, char**& argv);
  ~ProcessGroupSession();  // leaves the job (MPI_Finalize)
  ProcessGroupSession(const ProcessGroupSession&) = delete;
  ProcessGroupSession& operator=(const ProcessGroupSession&) = delete;

  // After an error: prints "pleat: MESSAGE" (other ranks: "pleat (rank R):
  // MESSAGE") and returns the exit code; in a job of several processes it
  // aborts the whole job with that code instead of returning, since the
  // others may be waiting for this one in a collective.
  int fail(const std::string& message, int exit_code);
};

// The job's transport, or null when pleat runs alone.
WalkTransport* process_group();

// Point to point beside the walks' collectives, for work handed in as it
// finishes (survey samples). A rank other than 0 sends one message to rank
// 0 (messages from one rank arrive in the order sent); rank 0 takes one that
// has arrived, with its sender, or nullopt when none has (never waits).
// Preconditions: in a job (usage_error otherwise).
void send_to_leader(const std::string& bytes);
std::optional<std::pair<std::size_t, std::string>> receive_at_leader();

// In a job, and not rank 0.
inline bool is_follower_process() {
  const WalkTransport* group = process_group();
  return group && group->rank() != 0;
}

// The commands that run across a job's processes.
inline bool runs_across_processes(const std::string& command) {
  return command == "walk" || command == "certify" || command == "survey";
}

// walk_regions, alone or, in a job, across its processes (rank 0 only; the
// others are in follow_walks). Same regions, order and summary either way.
// statistics (may be null) is filled only in a job.
inline WalkSummary walk_here_or_across(const Network& network, const Domain& domain, const WalkOptions& options,
                                       DistributedWalkStatistics* statistics = nullptr) {
  if (WalkTransport* group = process_group())
    return lead_distributed_walk(network, domain, options, *group, statistics);
  return walk_regions(network, domain, options);
}

// Rank 0, in a job: after the command's last walk, releases the others.
// Alone: nothing.
inline void finish_walks_across() {
  if (WalkTransport* group = process_group()) finish_distributed_walks(*group);
}

// Ranks other than 0: take part in rank 0's walks (and, with work, its
// tasks: certify's) until it finishes, then return the exit status (130 when
// interrupted).
inline int follow_walks(const Network& network, const Domain& domain, const std::atomic<bool>& interrupt,
                        FollowerWork* work = nullptr) {
  follow_distributed_walks(network, domain, *process_group(), &interrupt, work);
  return interrupt.load() ? 130 : 0;
}

}  // namespace pleat::cli
