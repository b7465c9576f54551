// One region walk across several processes (ranks), with the result of
// walk_regions: the same regions, delivered to on_region on rank 0 in the
// same order, and the same summary there.
//
// The walk is level-synchronous breadth-first. Each activation pattern has
// one owner, rank owner_of_pattern(pattern, ranks), which alone keeps it in
// its set of patterns seen and processes its region (RegionWorker, on the
// rank's threads as walk_regions does). After a level, every rank sends the
// neighbour patterns its regions found to their owners in one exchange; each
// owner keeps those it had not seen, sorted, as its part of the next level.
// Each rank's processed regions, in pattern order, go to rank 0, which merges
// the sorted streams into the single-process order (level by level, sorted by
// pattern), numbers the regions, calls on_region and keeps what the summary
// needs. A reduction per level agrees on a stop and on whether the next level
// is empty (the end). Nothing here knows MPI: the ranks talk through a
// WalkTransport (cli/mpi/ gives one on MPI; tests run ranks as threads).
//
// A stop (time limit, interrupt, max_regions, on_region returning false)
// ends the walk after the level it happens in, keeping on rank 0 the regions
// of that level before the first one some rank did not finish: bounds, never
// certified, as walk_regions.
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/stop.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <atomic>
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace pleat {

// The collective operations of a distributed walk. Every rank calls each of
// them in the same order (they are collectives: a rank that does not call
// one blocks the others). Implementations throw on a transport failure.
class WalkTransport {
 public:
  virtual ~WalkTransport() = default;
  virtual std::size_t rank() const = 0;  // 0 .. size()-1; rank 0 leads
  virtual std::size_t size() const = 0;
  // Sends outgoing[r] to rank r (outgoing.size() == size()); returns what
  // each rank sent to this one, by sender.
  virtual std::vector<std::string> exchange(std::vector<std::string> outgoing) = 0;
  // Rank 0 receives every rank's bytes, by rank (its own included); the
  // other ranks receive an empty vector.
  virtual std::vector<std::string> gather_to_leader(std::string bytes) = 0;
  // Every rank receives rank 0's bytes (the others' argument is ignored).
  virtual std::string broadcast_from_leader(std::string bytes) = 0;
  // Element-wise maximum / sum over the ranks of equally long vectors.
  virtual std::vector<std::uint64_t> maximum(std::vector<std::uint64_t> values) = 0;
  virtual std::vector<std::uint64_t> sum(std::vector<std::uint64_t> values) = 0;
  // Bytes this rank has sent to other ranks so far (statistics).
  virtual std::uint64_t bytes_sent() const = 0;
};

// The rank that owns a pattern: a fixed hash of its states modulo ranks, the
// same in every process and build. Precondition: ranks > 0.
std::size_t owner_of_pattern(const ActivationPattern& pattern, std::size_t ranks);

// What a distributed walk cost in messages (rank 0's view after the walk).
struct DistributedWalkStatistics {
  std::size_t ranks = 0;
  std::size_t levels = 0;
  std::uint64_t bytes_sent = 0;  // by every rank to the others, this walk
};

// Work beside a walk on the regions each rank processes itself, with one
// note per region carried to rank 0 beside the region (certify's reduction
// of region rows modulo a prime: enumerate/distributed_certify.hpp).
class OwnedRegionWork {
 public:
  virtual ~OwnedRegionWork() = default;
  // Every rank, once per level, on its main thread: the regions it
  // processed, in its (pattern) order; null for a pattern whose cell was not
  // a region. Returns one note for each of the first k regions; k below
  // regions.size() only when `stop` asked to stop (the rest of the level is
  // then left undone on this rank, as if the walk had stopped there).
  virtual std::vector<std::string> notes_for_level(const std::vector<const Region*>& regions,
                                                   const StopRequest& stop) = 0;
  // Rank 0: the region the walk delivers next and its note, just before
  // WalkOptions::on_region receives it.
  virtual void take_note(const Region& region, std::string note) = 0;
  // After every level's delivery: rank 0's news (news_after_level) reaches
  // every other rank (take_news) before the next level starts.
  virtual std::string news_after_level() { return {}; }
  virtual void take_news(std::string_view /*news*/) {}
};

// What a rank other than 0 does beyond plain walks: the work beside a walk
// that rank 0 started with side work, and tasks rank 0 hands out between
// walks (lead_distributed_task).
class FollowerWork {
 public:
  virtual ~FollowerWork() = default;
  // For a walk rank 0 led with side work, given its setup bytes: the work to
  // run beside it here (owned by this object; valid until the next call).
  virtual OwnedRegionWork& start_walk(std::string_view setup) = 0;
  // A task's bytes. It may call the transport's collectives, in the same
  // order as rank 0's part of the task.
  virtual void run_task(std::string_view task, WalkTransport& transport) = 0;
};

// Rank 0: one walk across every rank, while the others are in
// follow_distributed_walks. Returns walk_regions' summary (timing apart) and
// calls options.on_region / on_progress here only. The options' time limit,
// certificates, exact-only and threads go to every rank; each rank polls its
// own interrupt flag (options.interrupt here). May be called several times
// (certify walks at most once), then finish_distributed_walks once.
// Preconditions: as walk_regions; every rank has the same network and domain.
// statistics, when given, receives the walk's message counts.
// side (may be null): work beside the walk; every follower then runs its
// FollowerWork::start_walk(side_setup) (a follower without FollowerWork
// throws usage_error) and rank 0 runs side itself.
WalkSummary lead_distributed_walk(const Network& network, const Domain& domain, const WalkOptions& options,
                                  WalkTransport& transport, DistributedWalkStatistics* statistics = nullptr,
                                  OwnedRegionWork* side = nullptr, std::string_view side_setup = {});

// Rank 0: every follower runs FollowerWork::run_task(task); rank 0 then
// runs its own part of the task (the same collectives in the same order).
void lead_distributed_task(WalkTransport& transport, std::string_view task);

// Rank 0: no more walks; the followers return.
void finish_distributed_walks(WalkTransport& transport);

// Every rank but 0: takes part in rank 0's walks and tasks until it finishes
// them. interrupt (may be null) is this process's Ctrl-C flag; threads 0:
// all cores. work (may be null: plain walks only) runs side work and tasks.
void follow_distributed_walks(const Network& network, const Domain& domain, WalkTransport& transport,
                              const std::atomic<bool>* interrupt, FollowerWork* work = nullptr);

}  // namespace pleat
