// The ranks of a distributed walk as threads of one process: an in-memory
// WalkTransport for unit tests (enumerate/distributed_walk.hpp). Header-only;
// include as "tests/support/thread_transport.hpp".
#pragma once

#include "enumerate/distributed_walk.hpp"

#include <algorithm>
#include <barrier>
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace pleat::test {

// The ranks' mailboxes: every collective writes this rank's part, waits for
// all ranks, reads, and waits again before the next collective may write.
struct Board {
  explicit Board(std::size_t ranks)
      : sync(static_cast<std::ptrdiff_t>(ranks)), mail(ranks, std::vector<std::string>(ranks)), numbers(ranks) {}
  std::barrier<> sync;
  std::vector<std::vector<std::string>> mail;  // [from][to]
  std::vector<std::vector<std::uint64_t>> numbers;
};

class ThreadTransport : public WalkTransport {
 public:
  ThreadTransport(Board& board, std::size_t rank) : board_(board), rank_(rank) {}
  std::size_t rank() const override { return rank_; }
  std::size_t size() const override { return board_.mail.size(); }
  std::vector<std::string> exchange(std::vector<std::string> outgoing) override {
    for (std::size_t r = 0; r < size(); ++r) sent_ += r == rank_ ? 0 : outgoing[r].size();
    board_.mail[rank_] = std::move(outgoing);
    board_.sync.arrive_and_wait();
    std::vector<std::string> incoming(size());
    for (std::size_t s = 0; s < size(); ++s) incoming[s] = std::move(board_.mail[s][rank_]);
    board_.sync.arrive_and_wait();
    return incoming;
  }
  std::vector<std::string> gather_to_leader(std::string bytes) override {
    std::vector<std::string> outgoing(size());
    outgoing[0] = std::move(bytes);
    std::vector<std::string> incoming = exchange(std::move(outgoing));
    if (rank_ != 0) incoming.clear();
    return incoming;
  }
  std::string broadcast_from_leader(std::string bytes) override {
    std::vector<std::string> outgoing(size());
    if (rank_ == 0)
      for (auto& message : outgoing) message = bytes;
    return std::move(exchange(std::move(outgoing))[0]);
  }
  std::vector<std::uint64_t> maximum(std::vector<std::uint64_t> values) override {
    return reduce(std::move(values), [](std::uint64_t a, std::uint64_t b) { return std::max(a, b); });
  }
  std::vector<std::uint64_t> sum(std::vector<std::uint64_t> values) override {
    return reduce(std::move(values), [](std::uint64_t a, std::uint64_t b) { return a + b; });
  }
  std::uint64_t bytes_sent() const override { return sent_; }

 private:
  template <class Operation>
  std::vector<std::uint64_t> reduce(std::vector<std::uint64_t> values, Operation operation) {
    board_.numbers[rank_] = values;
    board_.sync.arrive_and_wait();
    for (std::size_t s = 0; s < size(); ++s)
      for (std::size_t i = 0; i < values.size(); ++i)
        values[i] = s == rank_ ? values[i] : operation(values[i], board_.numbers[s][i]);
    board_.sync.arrive_and_wait();
    return values;
  }
  Board& board_;
  std::size_t rank_;
  std::uint64_t sent_ = 0;
};

}  // namespace pleat::test
