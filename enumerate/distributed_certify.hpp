// certify_functional_dimension's work on a walk's regions spread over the
// ranks of a distributed walk (enumerate/distributed_walk.hpp), with the
// same result as in one process.
//
// Rows: rank 0 adds the coefficient-block rows (modulo the walk's prime) of
// every region to certify's basis in the walk's order, as alone, computing
// those of its own regions itself. Every other rank computes the rows of the
// regions it owns and sends rank 0 only those outside the span of certify's
// basis as it stood after the previous level (a replica kept from rank 0's
// news of the rows it kept, starting from the rows found by points): a row
// inside that span is dependent on rows before it in the walk's order, so
// certify alone would not have kept it either. Rank 0 thus keeps exactly the
// rows it would have kept alone (the same rank, the same rows kept, the same
// early stop), and the rows travel only while the rank still rises.
//
// Check: the exact check of the extra kernel directions on every smooth
// region (enumerate/detail/kernel_check.hpp) runs on every rank over the
// smooth regions it owns; the candidate is proved only when no rank rejects
// it and none was stopped (a collective maximum of the verdicts).
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"
#include "core/stop.hpp"
#include "enumerate/distributed_walk.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <atomic>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <set>
#include <utility>
#include <vector>

namespace pleat {

// The parts of certify_functional_dimension that run across processes
// (FunctionalDimensionOptions::across).
class CertifyAcross {
 public:
  virtual ~CertifyAcross() = default;

  // A region's rows modulo the walk's prime, each with its index among the
  // region's coefficient-block rows (coefficient_blocks_mod).
  using IndexedRows = std::vector<std::pair<std::size_t, ModularVector>>;

  // The walk: the same regions, order and summary as walk_regions. Just
  // before options.on_region(region), for a region without nonsmooth
  // neurons whose pattern is not in `skip`, region_rows() holds the rows of
  // the region that are outside the span, modulo prime, of start_rows and
  // of the rows certify kept (row_kept) in the levels before (every row, for
  // rank 0's own regions): every row that raises the rank of start_rows plus
  // all rows of the regions delivered before, in row order, and maybe more
  // (empty for the other regions). Called at most once. Preconditions: as
  // walk_regions; prime is the prime of reduce_modulo_some_prime for this
  // network; start_rows has network.parametric_dimension() columns and
  // residues below prime.
  virtual WalkSummary walk(const Network& network, const Domain& domain, const WalkOptions& options,
                           std::uint64_t prime, const ModularMatrix& start_rows,
                           const std::set<ActivationPattern>& skip) = 0;
  virtual const IndexedRows& region_rows() const = 0;
  // During the walk: a row of region_rows() that certify's basis kept (in
  // the order kept), so that the other ranks can leave out the rows it spans.
  virtual void row_kept(const ModularVector& row) = 0;

  // After a walk that was complete: true exactly when every row of
  // candidate (D columns) annihilates the coefficient-block rows of every
  // region of the walk without nonsmooth neurons, each rank checking the
  // regions it owns on `threads` threads (detail::AnnihilationCheck: exact).
  // A stop on any rank (stop here, the time limit or an interrupt there)
  // sets stopped and returns false; stop_reason() then says why.
  // progress(done, total) counts this rank's regions.
  virtual bool annihilates_every_region(const RationalMatrix& candidate, unsigned threads, const StopRequest& stop,
                                        bool& stopped,
                                        const std::function<void(std::size_t, std::size_t)>& progress) = 0;
  virtual StopReason stop_reason() const = 0;
};

// Rank 0's CertifyAcross over the transport's ranks, which are in
// follow_distributed_walks with certify_follower_work. The followers' time
// limit for the check counts time_limit_seconds (0: none) from this call;
// their interrupt is their own.
std::unique_ptr<CertifyAcross> lead_certify_across(WalkTransport& transport, double time_limit_seconds);

struct CertifyFollowerOptions {
  // Test hook: this rank adds 1 to every entry of the candidate's first row
  // before checking it, as if it had received a wrong candidate, so that it
  // rejects it (when it owns a region whose rows do not all sum to zero).
  bool alter_candidate = false;
};

// What a rank other than 0 runs during certify, beside the walk and after it
// (follow_distributed_walks's FollowerWork). interrupt (may be null) is this
// process's Ctrl-C flag. The network must outlive the result.
std::unique_ptr<FollowerWork> certify_follower_work(const Network& network, const std::atomic<bool>* interrupt,
                                                    const CertifyFollowerOptions& options = {});

}  // namespace pleat
