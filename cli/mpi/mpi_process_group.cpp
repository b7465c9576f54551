// cli/process_group.hpp on MPI (PLEAT_MPI=ON): the job's processes and the
// collectives of a distributed walk. Only the main thread calls MPI
// (MPI_THREAD_FUNNELED): the walk's worker threads never do.
#include "cli/process_group.hpp"

#include "core/errors.hpp"

#include <mpi.h>

#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <climits>
#include <cstdlib>
#include <cstring>
#include <iostream>
#include <memory>
#include <numeric>
#include <thread>

namespace pleat::cli {
namespace {

// Launchers that start MPI jobs say so in the environment: Open MPI's mpirun,
// PMIx (srun --mpi=pmix, prterun), PMI-1/2 (srun --mpi=pmi2, MPICH's hydra).
bool is_started_by_mpi_launcher() {
  for (const char* name : {"OMPI_COMM_WORLD_SIZE", "PMIX_RANK", "PMI_RANK", "PMI_SIZE"})
    if (const char* value = std::getenv(name); value && *value) return true;
  return false;
}

// A message size as MPI's int count; a level whose messages pass 2 GiB is a
// documented limit, not a crash.
int as_count(std::size_t bytes) {
  if (bytes > static_cast<std::size_t>(INT_MAX))
    throw limit_error("a distributed walk's message passed 2 GiB (" + std::to_string(bytes) +
                      " bytes in one level); use more processes or a smaller domain");
  return static_cast<int>(bytes);
}

// Waits for a nonblocking collective without holding a core: tests it and,
// between tests, sleeps from 20 us doubling up to 1 ms. A rank that finished
// its share of a level first would otherwise spin inside MPI until the last
// one is done, taking a core from the ranks still working whenever ranks
// share cores (oversubscribed, or beside other jobs). A level costs a few
// collectives, so the added latency is a few ms per level at most.
void wait_gently(MPI_Request& request) {
  auto pause = std::chrono::microseconds(20);
  for (int is_done = 0;;) {
    MPI_Test(&request, &is_done, MPI_STATUS_IGNORE);
    if (is_done) return;
    std::this_thread::sleep_for(pause);
    pause = std::min(pause * 2, std::chrono::microseconds(1000));
  }
}

std::vector<int> displacements_of(const std::vector<int>& counts) {
  std::vector<int> displacements(counts.size(), 0);
  std::size_t total = 0;
  for (std::size_t i = 0; i < counts.size(); ++i) {
    displacements[i] = as_count(total);
    total += static_cast<std::size_t>(counts[i]);
  }
  as_count(total);
  return displacements;
}

class MpiTransport : public WalkTransport {
 public:
  MpiTransport() {
    int rank = 0, size = 1;
    MPI_Comm_rank(MPI_COMM_WORLD, &rank);
    MPI_Comm_size(MPI_COMM_WORLD, &size);
    rank_ = static_cast<std::size_t>(rank);
    size_ = static_cast<std::size_t>(size);
  }
  std::size_t rank() const override { return rank_; }
  std::size_t size() const override { return size_; }

  std::vector<std::string> exchange(std::vector<std::string> outgoing) override {
    std::vector<int> send_counts(size_), receive_counts(size_);
    std::string send;
    for (std::size_t r = 0; r < size_; ++r) {
      send_counts[r] = as_count(outgoing[r].size());
      if (r != rank_) sent_ += outgoing[r].size();
      send += outgoing[r];
      std::string().swap(outgoing[r]);
    }
    MPI_Request request;
    MPI_Ialltoall(send_counts.data(), 1, MPI_INT, receive_counts.data(), 1, MPI_INT, MPI_COMM_WORLD, &request);
    wait_gently(request);
    const std::vector<int> send_displacements = displacements_of(send_counts);
    const std::vector<int> receive_displacements = displacements_of(receive_counts);
    std::string received(static_cast<std::size_t>(receive_displacements.back() + receive_counts.back()), '\0');
    MPI_Ialltoallv(send.data(), send_counts.data(), send_displacements.data(), MPI_BYTE, received.data(),
                   receive_counts.data(), receive_displacements.data(), MPI_BYTE, MPI_COMM_WORLD, &request);
    wait_gently(request);
    std::vector<std::string> incoming(size_);
    for (std::size_t s = 0; s < size_; ++s)
      incoming[s] = received.substr(static_cast<std::size_t>(receive_displacements[s]),
                                    static_cast<std::size_t>(receive_counts[s]));
    return incoming;
  }

  std::vector<std::string> gather_to_leader(std::string bytes) override {
    int count = as_count(bytes.size());
    std::vector<int> counts(size_, 0);
    MPI_Request request;
    MPI_Igather(&count, 1, MPI_INT, counts.data(), 1, MPI_INT, 0, MPI_COMM_WORLD, &request);
    wait_gently(request);
    if (rank_ != 0) {
      sent_ += bytes.size();
      MPI_Igatherv(bytes.data(), count, MPI_BYTE, nullptr, nullptr, nullptr, MPI_BYTE, 0, MPI_COMM_WORLD, &request);
      wait_gently(request);
      return {};
    }
    const std::vector<int> displacements = displacements_of(counts);
    std::string received(static_cast<std::size_t>(displacements.back() + counts.back()), '\0');
    MPI_Igatherv(bytes.data(), count, MPI_BYTE, received.data(), counts.data(), displacements.data(), MPI_BYTE, 0,
                 MPI_COMM_WORLD, &request);
    wait_gently(request);
    std::vector<std::string> by_rank(size_);
    for (std::size_t r = 0; r < size_; ++r)
      by_rank[r] = received.substr(static_cast<std::size_t>(displacements[r]), static_cast<std::size_t>(counts[r]));
    return by_rank;
  }

  std::string broadcast_from_leader(std::string bytes) override {
    unsigned long long length = bytes.size();
    MPI_Request request;
    MPI_Ibcast(&length, 1, MPI_UNSIGNED_LONG_LONG, 0, MPI_COMM_WORLD, &request);
    wait_gently(request);
    bytes.resize(length);
    if (rank_ == 0) sent_ += length * (size_ - 1);
    MPI_Ibcast(bytes.data(), as_count(length), MPI_BYTE, 0, MPI_COMM_WORLD, &request);
    wait_gently(request);
    return bytes;
  }

  std::vector<std::uint64_t> maximum(std::vector<std::uint64_t> values) override { return reduce(values, MPI_MAX); }
  std::vector<std::uint64_t> sum(std::vector<std::uint64_t> values) override { return reduce(values, MPI_SUM); }
  std::uint64_t bytes_sent() const override { return sent_; }

 private:
  std::vector<std::uint64_t> reduce(std::vector<std::uint64_t>& values, MPI_Op operation) {
    std::vector<std::uint64_t> result(values.size());
    MPI_Request request;
    MPI_Iallreduce(values.data(), result.data(), static_cast<int>(values.size()), MPI_UINT64_T, operation,
                   MPI_COMM_WORLD, &request);
    wait_gently(request);
    return result;
  }

  std::size_t rank_ = 0;
  std::size_t size_ = 1;
  std::uint64_t sent_ = 0;
};

std::unique_ptr<MpiTransport> job;  // set while this process is in an MPI job
int saved_standard_error = -1;      // ranks other than 0: where their error messages go

}  // namespace

ProcessGroupSession::ProcessGroupSession(int& argc, char**& argv) {
  if (!is_started_by_mpi_launcher()) return;
  int provided = 0;
  MPI_Init_thread(&argc, &argv, MPI_THREAD_FUNNELED, &provided);
  job = std::make_unique<MpiTransport>();
  if (job->rank() == 0) return;
  // Rank 0 alone prints; the others keep a way to report their own failure.
  saved_standard_error = dup(STDERR_FILENO);
  const int null = open("/dev/null", O_WRONLY);
  if (null >= 0) {
    dup2(null, STDOUT_FILENO);
    dup2(null, STDERR_FILENO);
    close(null);
  }
}

ProcessGroupSession::~ProcessGroupSession() {
  if (!job) return;
  job.reset();
  MPI_Finalize();
}

int ProcessGroupSession::fail(const std::string& message, int exit_code) {
  std::cout.flush();
  if (!job || job->rank() == 0) {
    std::cerr << "pleat: " << message << "\n";
    std::cerr.flush();
  } else if (saved_standard_error >= 0) {
    const std::string line = "pleat (rank " + std::to_string(job->rank()) + "): " + message + "\n";
    [[maybe_unused]] const ssize_t written = write(saved_standard_error, line.data(), line.size());
  }
  if (job && job->size() > 1) MPI_Abort(MPI_COMM_WORLD, exit_code);
  return exit_code;
}

WalkTransport* process_group() { return job.get(); }

namespace {
constexpr int leader_inbox_tag = 1;  // the collectives use no tags; this keeps them apart anyway
}

void send_to_leader(const std::string& bytes) {
  if (!job || job->rank() == 0) throw usage_error("send_to_leader: only ranks other than 0 of a job send");
  MPI_Send(bytes.data(), as_count(bytes.size()), MPI_BYTE, 0, leader_inbox_tag, MPI_COMM_WORLD);
}

std::optional<std::pair<std::size_t, std::string>> receive_at_leader() {
  if (!job || job->rank() != 0) throw usage_error("receive_at_leader: only rank 0 of a job receives");
  int has_message = 0;
  MPI_Status status;
  MPI_Iprobe(MPI_ANY_SOURCE, leader_inbox_tag, MPI_COMM_WORLD, &has_message, &status);
  if (!has_message) return std::nullopt;
  int count = 0;
  MPI_Get_count(&status, MPI_BYTE, &count);
  std::string bytes(static_cast<std::size_t>(count), '\0');
  MPI_Recv(bytes.data(), count, MPI_BYTE, status.MPI_SOURCE, leader_inbox_tag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
  return std::make_pair(static_cast<std::size_t>(status.MPI_SOURCE), std::move(bytes));
}

}  // namespace pleat::cli
