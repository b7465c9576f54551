// Re-checking a saved walk with exact arithmetic and lp/checker.hpp alone (no
// LP solver): what `pleat verify` runs. The saved records are rebuilt into
// cells from the network and the patterns, never trusted as given.
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

// One region line with its certificate (pleat walk --certificates).
struct SavedRegion {
  std::size_t line = 0;  // for messages
  ActivationPattern pattern;
  RationalVector point;
  bool bounded = false;
  std::vector<SavedFacet> facets;
  RationalMatrix affine_linear;
  RationalVector affine_offset;
  bool has_certificate = false;
  lp::FacetClassification classification;  // groups index build_pattern_cell's constraint order
  std::optional<lp::BoundednessVerdict> boundedness;
};

struct WalkCheck {
  bool is_verified = false;
  std::string failure;  // the first failure, naming the line and what is wrong
  std::size_t regions = 0;
};

// Checks every region (interior point, constraint classification, facet
// points and their neighbours' closed inequalities, boundedness, affine map)
// and completeness (each pattern once; every neighbour present). Exact.
WalkCheck check_saved_walk(const Network& network, const Domain& domain, const std::vector<SavedRegion>& regions);

}  // namespace pleat
