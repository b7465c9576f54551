// Certified functional dimension of a network's parameter on a domain: the
// exact rank of the stacked parameter-Jacobian rows over every smooth region
// (shared/design.md, "Functional dimension").
//
// Lower bound: coefficient-block rows reduced modulo a word-size prime as the
// walk delivers regions (a rank mod p never exceeds the rank over Q). Upper
// bound: the scaling bound (every row is orthogonal to every hidden neuron's
// scaling direction), or, when the rank stays below it, the scaling
// directions plus the extra kernel directions: read modulo p off the walk's
// basis, lifted to Q (rational reconstruction from that prime for rows with
// small entries, the others row by row over further primes), and proved
// exactly on every smooth region (modulo 2^64n or several primes, above a
// proved bound on the entries: a deterministic proof of zero), on all
// threads. certified is true only when the two bounds meet, both are proved
// and nothing stopped the run.
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/stop.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace pleat {

class CertifyAcross;  // enumerate/distributed_certify.hpp

// What makes a direction beyond the scaling ones flat, when it is recognised
// by the direction's support (none: not one of these).
enum class Mechanism { none, dead_neuron, always_active_neuron, zero_outgoing_weights, duplicate_neurons };

// The output word of a mechanism: "dead-neuron", "always-active-neuron",
// "zero-outgoing-weights", "duplicate-neurons"; "" for none.
std::string_view mechanism_word(Mechanism mechanism);

// A kernel direction beyond the scaling ones, with the mechanism behind it
// when one is recognised.
struct ExtraKernelDirection {
  // Its nonzero entries (parameter index, value), indices increasing; 0 at
  // the other parameters. Most extra directions of a random network have a
  // few nonzeros among hundreds of parameters, and a dense vector costs an
  // allocation per entry (a fifth of certify's time after the walk on
  // 2,15,15,15,1).
  std::vector<std::pair<std::size_t, Rational>> entries;
  std::size_t length = 0;  // D
  Mechanism mechanism = Mechanism::none;
  std::vector<std::size_t> neurons;

  // The direction as a vector of length D, in parameter order.
  RationalVector dense() const {
    RationalVector out(length);
    for (const auto& [index, value] : entries) out[index] = value;
    return out;
  }
};

// Progress after the walk: phase "kernel" (lifting the extra directions:
// done = 0 the walk's prime alone, 1 further primes for rows with large
// entries, 2 an exact p-adic solve), "check" (done of total smooth regions checked) or
// "naming" (done of total extra directions named); with keep_rows, "rows" (done
// of total contributing regions whose exact rows are formed).
struct CertifyProgress {
  const char* phase = "";
  std::size_t done = 0;
  std::size_t total = 0;  // 0 when unknown
  double seconds = 0;     // since certify started
};

struct FunctionalDimensionOptions {
  // threads, limits, interrupt, progress (on_region is taken over). The time
  // limit and the interrupt cover every phase, not only the walk: a stopped
  // run returns its proved bounds, certified = false.
  WalkOptions walk;
  // Called from the calling thread during the phases after the walk.
  std::function<void(const CertifyProgress&)> on_phase;
  bool stop_at_scaling_bound = true;
  // With stop_at_scaling_bound, before any walk: draw exact points strictly
  // inside the domain (InteriorPointSource, seed points_seed), decide each
  // point's pattern exactly, and stack the rows of the smooth regions they
  // land in. When the rank meets the scaling bound the value is certified
  // with no walk (certified_by_points); when it stalls, the walk runs and
  // keeps the rows found. When the random points stall, lines through the
  // domain are swept first (enumerate/line_sweep.hpp): one proposed point in
  // every linear piece a line crosses, each decided exactly like the random
  // ones, reaching thin and far regions (sweep_lines; off: random points only).
  // Either phase also ends early when the rank is more than 1/16 below the
  // bound and, at the rate it rose over the phase's recent batches, could not
  // reach the bound within the phase's budget, or its rise decays
  // geometrically towards a rank 16 or more rows short (then the lines are
  // skipped too; on a domain of at most 2 inputs, where the walk is cheap,
  // judged from the second batch on, the first two before any of their rows
  // is eliminated: detail/reach_forecast.hpp): a network below its bound
  // (give_up_early, off: only the stalls and budgets above end them). Speed
  // only: the value and its proof do not depend on it.
  bool points_first = true;
  bool sweep_lines = true;
  bool give_up_early = true;
  std::uint64_t points_seed = 1;
  bool keep_rows = false;  // fill FunctionalDimensionResult::rows (exact rows of contributing regions)
  // With keep_rows: when set, each contributing region's exact rows are
  // given to it as they are formed, in order, and FunctionalDimensionResult::rows
  // stays empty (one region's rows held at a time, not all of them: certify
  // --rows-out writes each region's text at once). It returns whether it
  // wants more: false (the file it writes failed, say) ends the rows there,
  // no more formed (rows_regions counts those given; rows_interrupted stays
  // false; the value and its proof are settled before). An exception it
  // throws ends the call.
  std::function<bool(const RationalMatrix& region_rows)> on_region_rows;
  // The walk to run when one is needed: walk_regions when empty, or one that
  // delivers the same regions in the same order (the walk across processes,
  // enumerate/distributed_walk.hpp). Called at most once.
  std::function<WalkSummary(const Network&, const Domain&, const WalkOptions&)> walker;
  // When set (not null), the walk, the reduction of its regions' rows and
  // the exact check of every region run across the processes of a
  // distributed walk instead (enumerate/distributed_certify.hpp; walker is
  // then not used). The result is the same. Must outlive the call.
  CertifyAcross* across = nullptr;
  // Fill FunctionalDimensionResult::kernel (dense: rows x D rationals, large
  // for deep networks; the proof itself does not need it).
  bool keep_kernel = false;
};

struct FunctionalDimensionResult {
  std::size_t parametric_dimension = 0;
  std::size_t scaling_bound = 0;
  std::optional<std::size_t> functional_dimension;  // set only when certified
  std::size_t lower_bound = 0;
  std::size_t upper_bound = 0;
  bool certified = false;
  std::size_t regions_walked = 0;
  std::size_t regions_contributing = 0;
  bool walk_complete = false;
  bool early_stop = false;
  // Why the run stopped before its end: the walk's reason, or the time limit
  // or interrupt seen in a later phase; none when it ran to its end (an
  // early stop at the scaling bound is an end).
  StopReason stop_reason = StopReason::none;
  WalkSummary walk;
  // The no-walk path: certified from points alone (then regions_walked is 0
  // and early_stop is true), how many points were drawn, and the witnesses:
  // the exact points whose regions' rows raised the rank, in that order: the
  // points drawn first, then the interior points of the walked regions that
  // contributed rows (regions_contributing in all, the same on any number of
  // threads or ranks). Their regions' rows have rank lower_bound modulo a
  // prime, hence over Q: the lower bound of a run cut short is exportable and
  // re-checked by certifying with these points (the CLI's --points).
  bool certified_by_points = false;
  std::size_t points_drawn = 0;
  std::vector<RationalVector> witness_points;
  std::vector<std::pair<ActivationPattern, std::vector<std::size_t>>> nonsmooth_regions;
  std::vector<ExtraKernelDirection> extra_kernel;
  RationalMatrix rows;    // with keep_rows (and no on_region_rows): exact coefficient-block rows of the contributing regions
  // With keep_rows, rows are those of the first rows_regions of the
  // regions_contributing regions, in order: all of them unless an interrupt
  // came while the rows were formed (phase "rows", after the value was
  // settled: the value stands, rows_interrupted says the rows are cut short).
  std::size_t rows_regions = 0;
  bool rows_interrupted = false;
  // With keep_kernel, a basis of the exact kernel proved on every smooth
  // region: the independent scaling directions (ScalingStructure), then the
  // extra directions (empty on an early stop or when cut short).
  RationalMatrix kernel;
  double seconds = 0;
  // Of which the exact points and lines drawn before any walk (0 when none
  // were drawn); walk.seconds is the walk's, the rest the proof after it.
  double points_seconds = 0;
};

// Precondition: domain.dim == network.input_dim.
FunctionalDimensionResult certify_functional_dimension(const Network& network, const Domain& domain,
                                                       const FunctionalDimensionOptions& options);

// The smallest index of a pattern whose coefficient-block rows some row of
// vectors (length D each) does not annihilate, or nullopt when every row
// annihilates every pattern's rows. Exact and deterministic: word arithmetic
// modulo primes whose product exceeds a proved bound on the integer the dot
// product becomes after clearing denominators (so zero modulo all of them is
// zero); the answer is the same for any thread count.
std::optional<std::size_t> first_region_not_annihilated(const Network& network, const RationalMatrix& vectors,
                                                        const std::vector<ActivationPattern>& patterns,
                                                        unsigned threads = 1);

// A canonical basis of span(kernel) modulo span(scaling): kernel rows reduced
// against the RREF of the scaling rows (their pivot columns cleared), then put
// in reduced row-echelon form. Depends only on the two spans. Exact.
RationalMatrix extra_kernel_basis(const RationalMatrix& kernel, const RationalMatrix& scaling);

}  // namespace pleat
