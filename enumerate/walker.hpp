// The region walker: every full-dimensional activation region of a network
// on a domain, each once, with an exact certificate, its facets and the
// neighbour across each.
//
// Why a walk across facets finds every region: the regions and their faces
// tile the (convex) domain. Join interior points of two regions by a segment;
// perturbed slightly it avoids every face of dimension <= n0-2 and so passes
// from region to region only through relative interiors of facets. The
// facet-adjacency graph is therefore connected, and a breadth-first walk that
// crosses every facet of every region it reaches reaches them all.
//
// Crossing a facet is exact: at a rational point q in the facet's relative
// interior every neuron that is nonzero at q keeps its sign; the neurons that
// vanish at q get their far-side state layer by layer from the far side's own
// affine map (already-decided earlier layers): identically zero -> 'z'; a
// linear part parallel to the facet normal -> the sign of its derivative
// across the facet; any other linear part means the neuron's bent hyperplane
// passes through q transversally on the far side, so both states occur next to
// q and both are tried (each candidate is kept only if its cell has interior).
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/stop.hpp"
#include "enumerate/domain.hpp"
#include "lp/oracle.hpp"
#include "lp/polyhedron.hpp"

#include <any>
#include <atomic>
#include <cstddef>
#include <limits>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

struct RegionFacet {
  std::vector<std::size_t> neurons;        // neuron ids whose bent hyperplane holds the facet
  std::optional<std::size_t> domain_side;  // index of the domain constraint it lies on
  RationalVector normal;                   // primitive integer vector; region is on normal.x + offset > 0
  Rational offset;
  std::optional<ActivationPattern> neighbor;  // null on the domain boundary
  std::vector<ActivationPattern> other_neighbors;  // further regions next to the crossing point (degenerate crossings)
  // A point of the facet's relative interior, checked exactly: the facet's
  // constraints are 0 there, every other constraint of the region > 0.
  lp::FacetPoint relative_interior;
};

// "No such index": the neuron of a constraint that is a domain side, the
// domain side of a neuron's constraint.
inline constexpr std::size_t no_index = std::numeric_limits<std::size_t>::max();

// A region's certificates, kept only when WalkOptions::keep_certificates.
struct RegionCertificates {
  lp::Polyhedron cell;                     // the region's constraints, neurons then domain sides
  std::vector<std::size_t> constraint_neuron;  // neuron id per constraint, or no_index for a domain side
  lp::FacetClassification classification;
  std::optional<lp::BoundednessVerdict> boundedness;  // on the neuron constraints only
};

struct Region {
  std::size_t id = 0;  // 0-based, in output order (level by level, patterns sorted within a level)
  ActivationPattern pattern;
  lp::InteriorPoint interior;  // strictly inside: every constraint > 0 there (checked exactly)
  bool bounded = false;  // as a subset of R^n0, before domain clipping
  bool touches_domain_boundary = false;
  std::vector<RegionFacet> facets;
  AffineMap affine;      // the network's output on the region, exact
  std::vector<std::size_t> nonsmooth_neurons;  // 'z' neurons with nonzero backward signal
  std::optional<RegionCertificates> certificates;
  // What WalkOptions::prepare_region returned for this region (empty without
  // that hook, or when the walk was driven by a walker that does not call it).
  std::any prepared;
};

// StopReason and to_string(StopReason) live in core/stop.hpp.

struct WalkProgress {
  std::size_t regions = 0;
  std::size_t frontier = 0;
  double seconds = 0;
};

struct WalkOptions {
  unsigned threads = 0;                     // 0: all cores
  std::size_t max_regions = 0;              // 0: no cap
  double time_limit_seconds = 0;            // 0: none
  bool keep_certificates = false;
  // Fill WalkSummary::patterns (every region's pattern, kept to the end).
  // Off, the walk keeps per region beyond its frontier 2 bits per neuron
  // (rounded up to 8 bytes) and 20-28 bytes (its index slot, id and
  // union-find entry); region records, affine maps and neighbour lists are
  // streamed.
  bool keep_patterns = true;
  // Every LP query answered by the exact solver, no double proposal (tests
  // compare it with the default walk; same regions and facets, slower).
  bool exact_only = false;
  const std::atomic<bool>* interrupt = nullptr;  // set from a signal handler to stop cleanly
  // The time limit and the interrupt are polled between regions and inside
  // each region's exact work (core/stop.hpp), so a stop acts within about a
  // second even when one region takes minutes.
  // Called for each region in output order; return false to stop the walk
  // (StopReason::requested, e.g. a rank that met its bound).
  std::function<bool(const Region&)> on_region;
  // Optional: called for each region by the thread that processed it, right
  // after, in no particular order and concurrently with other calls and with
  // on_region (so it must only read what on_region does not write); its
  // result reaches on_region as Region::prepared. Lets a caller's per-region
  // work that does not depend on the order run on every thread.
  std::function<std::any(const Region&)> prepare_region;
  // When true, on_region runs as soon as the regions before it are done (on
  // the calling thread; once the walk is stopping, on any of its threads),
  // still one call at a time and in output order, while the other threads go
  // on processing this level and the next (false:
  // on the calling thread after each chunk of a level, with the other threads
  // idle). For on_region callbacks that do heavy serial work and touch no
  // thread-bound state. on_region runs without the walk's StopScope either way.
  bool on_region_in_pool = false;
  // Optional, with on_region_in_pool: serial work on_region leaves behind (a
  // queue it fills), one unit per call; returns false when none is pending.
  // One walk thread runs it before starting another region (the second, so
  // that what it works on stays in one processor's cache, while the caller's
  // runs on_region; the caller's when it is the only one), with no
  // StopScope, concurrently with on_region and the processing of regions. The walk may return with work
  // still pending (and never calls it without on_region_in_pool): the caller
  // finishes it.
  std::function<bool()> background;
  std::function<void(const WalkProgress&)> on_progress;  // every 0.2 s during a level (distributed walk: also after it)
};

struct WalkSummary {
  std::size_t regions = 0;
  std::size_t bounded_regions = 0;
  std::size_t linear_regions = 0;
  std::vector<std::size_t> regions_per_layer;
  std::vector<std::pair<ActivationPattern, std::vector<std::size_t>>> nonsmooth_regions;
  std::size_t facets = 0;  // interior facets, each counted once (adjacent region pairs)
  bool complete = false;
  StopReason stop_reason = StopReason::none;
  bool certified = false;  // complete and every certificate checked exactly
  lp::QueryCounts counts;
  std::size_t degenerate_crossings = 0;  // crossings where the far side had to be branched
  double seconds = 0;
  std::vector<ActivationPattern> patterns;  // sorted, all regions found (empty unless WalkOptions::keep_patterns)
};

// Walks the network's regions on the domain. Regions are delivered to
// options.on_region in a deterministic order (identical for any thread count).
// Preconditions: domain.dim == network.input_dim.
WalkSummary walk_regions(const Network& network, const Domain& domain, const WalkOptions& options);

// The walk's work on one region, for walks driven from elsewhere (the
// distributed walk, enumerate/distributed_walk.hpp): for each pattern exactly
// what walk_regions computes for that pattern of its level, so a walk built
// on it delivers the same regions. Not thread-safe: one per thread.
class RegionWorker {
 public:
  // Preconditions: as walk_regions.
  RegionWorker(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only = false);
  ~RegionWorker();
  RegionWorker(const RegionWorker&) = delete;
  RegionWorker& operator=(const RegionWorker&) = delete;

  struct Outcome {
    // The region with id 0 (the caller numbers it), or nullopt when the
    // pattern's cell has empty interior (a crossing candidate that was not a
    // region: walk_regions then does not certify the walk).
    std::optional<Region> region;
    std::size_t degenerate_crossings = 0;  // crossings of this region whose far side was branched
  };
  // Exact. Throws Stopped when the current thread's StopScope asks to stop
  // (core/stop.hpp) and limit_error as walk_regions.
  Outcome process(const ActivationPattern& pattern);
  // LP queries of every region processed so far.
  lp::QueryCounts counts() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// The pattern of the region the walk starts in (its id 0): the region at the
// domain's centre, or, when the centre lies on a bent hyperplane, the region
// at the first of a fixed sequence of nearby points of the domain that lies
// off every bent hyperplane (a point on the moment curve through the centre
// when none of them does). Deterministic and exact; pleat verify re-derives
// id 0 with it. Preconditions: as walk_regions.
ActivationPattern walk_start_pattern(const Network& network, const Domain& domain);

// One region's record as walk_regions would deliver it (id 0), or nullopt
// when the pattern's cell has empty interior on the domain. Exact; for
// inspecting a single region without walking. Its points come from the
// general lp::Oracle path (the interior point is find_centre's centre); a
// 2- or 3-input walk proves the same facets, neighbours and boundedness on
// its plane or space path (lp/plane_cell.hpp, lp/space_cell.hpp), whose
// interior and facet points may differ.
[[nodiscard]] std::optional<Region> describe_region(const Network& network, const Domain& domain,
                                                    const ActivationPattern& pattern, bool keep_certificates = false);

// The cell of one pattern and the crossing of a facet, which the walker,
// verify and the region geometry share, are in enumerate/pattern_cell.hpp.

// The pattern of the region that contains the given point (which must not lie
// on a bent hyperplane: nullopt then). Exact.
[[nodiscard]] std::optional<ActivationPattern> region_pattern_at(const Network& network, const RationalVector& point);

}  // namespace pleat
