// The evidence behind a certified functional dimension, gathered so that a
// reader can re-check it without pleat (`pleat certify --bundle`,
// scripts/check_bundle.py, docs/formats.md "pleat-bundle/1").
//
// Lower bound: regions whose coefficient-block rows (core/jacobian.hpp) hold
// a value x value minor that is nonsingular modulo a prime, hence over Q: the
// rows that raised the rank of a ModularRowBasis, restricted to its pivot
// columns. Upper bound: either the scaling directions (a theorem; no region
// list is needed, so the walk stops once the minor is found) or an exact
// kernel that must annihilate every smooth region's rows, and then the list
// holds every region of the domain with its walk certificates plus, for each
// far-side candidate a crossing reaches but the list leaves out, an exact
// proof that it has no interior next to the facet point.
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <vector>

namespace pleat {

// A candidate region across a facet that the walk left out: its cell's
// tangent cone at the facet point is empty (Gordan multipliers over the
// constraints of the candidate's cell that vanish at the point, in cell order).
struct EmptyAcross {
  ActivationPattern pattern;
  lp::EmptinessCertificate certificate;
};

struct BundleRegion {
  Region region;  // with certificates when ProofBundle::has_every_region
  std::vector<std::vector<EmptyAcross>> empty_across;  // per facet of region.facets
};

// One row of the minor: row `block_row` of region `region`'s coefficient
// blocks (an index into ProofBundle::regions), with its exact entries.
struct MinorRow {
  std::size_t region = 0;
  std::size_t block_row = 0;
  RationalVector values;  // length D
};

struct ProofBundle {
  bool has_every_region = false;
  std::vector<BundleRegion> regions;
  std::vector<MinorRow> minor_rows;        // value rows
  std::vector<std::size_t> minor_columns;  // value parameter indices
};

// Walks the network again and gathers the evidence for `value` (a certified
// functional dimension). with_every_region: keep every region with its
// certificates (needed when the upper bound is a kernel beyond the scaling
// directions); otherwise keep only the regions whose rows raise the rank, and
// stop once it reaches value. walk: threads, time limit and interrupt
// (on_region is taken over). Returns nullopt when the walk was stopped
// before the evidence was complete or the rank modulo the prime stays below
// value; then *stopped_by (when given) is what stopped the walk (none: it was
// not stopped, the evidence fell short). Exact.
std::optional<ProofBundle> gather_proof_bundle(const Network& network, const Domain& domain, std::size_t value,
                                               bool with_every_region, WalkOptions walk,
                                               StopReason* stopped_by = nullptr);

}  // namespace pleat
