// Re-checking a saved walk with exact arithmetic: what `pleat verify` runs.
// The saved records are rebuilt into cells from the network and the patterns,
// never trusted as given: every field of a region line is either re-derived
// and compared, or checked through the certificate it carries
// (docs/formats.md, pleat-regions/1, lists which).
//
// Certificates are checked by lp/checker.hpp alone. The one place an LP
// solver is asked anything is a degenerate crossing that the file resolves by
// leaving a far-side candidate out: the solver proposes a proof that the
// candidate has no interior next to the facet point, and that proof is
// checked exactly too (a verdict never rests on the solver).
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/domain.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

struct SavedFacet {
  RationalVector normal;
  Rational offset;
  std::optional<std::size_t> domain_side;
  std::vector<std::size_t> neurons;
  std::optional<ActivationPattern> neighbor;
  std::vector<ActivationPattern> other_neighbors;
  RationalVector point;
};

// One constraint of a certificate's copy of the cell; neuron is nullopt for a
// domain side.
struct SavedConstraint {
  lp::Constraint constraint;
  std::optional<std::size_t> neuron;
};

// One region line with its certificate (pleat walk --certificates).
struct SavedRegion {
  std::size_t line = 0;  // for messages
  std::size_t id = 0;
  ActivationPattern pattern;
  RationalVector point;
  bool bounded = false;
  bool touches_domain_boundary = false;
  std::vector<SavedFacet> facets;
  RationalMatrix affine_linear;
  RationalVector affine_offset;
  std::vector<std::size_t> nonsmooth_neurons;  // empty when the line has none
  bool has_certificate = false;
  RationalVector certificate_point;             // the certificate's copy of `point`
  std::vector<SavedConstraint> certificate_constraints;
  lp::FacetClassification classification;  // groups index build_pattern_cell's constraint order
  std::optional<lp::BoundednessVerdict> boundedness;
};

struct WalkCheck {
  bool is_verified = false;
  std::string failure;  // the first failure, naming the line and what is wrong
  std::size_t regions = 0;
};

// Checks every region: its id (0, 1, ... in file order, id 0 at the domain's
// centre, the order breadth-first from it as the walk numbers), interior point, the
// certificate's copy of the cell, the classification of its constraints, each
// facet's hyperplane, point, neuron ids and domain side, the neighbours across
// each facet (exactly the regions that crossing at the facet point reaches:
// present, on the far side, with the facet point in their closure, never the
// region itself, and naming this region back), touches_domain_boundary,
// boundedness, the affine map and the non-smooth neurons. Completeness: each
// pattern once and every neighbour present. Exact.
[[nodiscard]] WalkCheck check_saved_walk(const Network& network, const Domain& domain, const std::vector<SavedRegion>& regions);

}  // namespace pleat
