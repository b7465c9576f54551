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
#include "enumerate/walker.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

// One region line read back from a region file (pleat walk -o): the walker's
// own record, with the line's certificate in region.certificates when it has
// one (cell.constraints and constraint_neuron as written, no_index for a
// domain side), the line number for messages, and the certificate's copy of
// the interior point (compared with region.interior, not trusted).
struct SavedRegion {
  std::size_t line = 0;
  Region region;
  RationalVector certificate_point;
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
