// The exact building blocks under the walk that verify (walk_check), the
// proof bundle and the region geometry use too: the cell of one activation
// pattern, and the patterns across a facet at one of its points. Not part of
// the walker's own interface (enumerate/walker.hpp).
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <vector>

namespace pleat {

// The constraints of the cell of one pattern (neurons, then domain sides), or
// nullopt when the pattern is inconsistent with its own maps (a state '1'/'0'
// on an identically-zero neuron, 'z' on a nonzero one, or a constant
// constraint of the wrong sign). Exact.
struct PatternCell {
  lp::Polyhedron cell;
  std::vector<std::size_t> constraint_neuron;  // neuron id, or no_index for a domain side
  std::vector<std::size_t> constraint_domain_side;  // domain index, or no_index for a neuron
  PatternMaps maps;
};
std::optional<PatternCell> build_pattern_cell(const Network& network, const Domain& domain,
                                              const ActivationPattern& pattern);

// All patterns of regions next to q on the far side of a facet, where q is in
// the relative interior of a facet of the region with near_pattern and
// direction points strictly to the far side. Exact; candidates may have empty
// interior (the caller checks). Throws limit_error when more than 16 neurons
// of one layer vanish at q transversally (2^n candidates); walk_regions
// passes that on.
std::vector<ActivationPattern> patterns_across(const Network& network, const ActivationPattern& near_pattern,
                                               const RationalVector& q, const RationalVector& direction,
                                               const RationalVector& facet_normal);
// The same, given the near pattern's maps (maps_on_pattern), as the walker has them.
std::vector<ActivationPattern> patterns_across(const Network& network, const ActivationPattern& near_pattern,
                                               const PatternMaps& near_maps, const RationalVector& q,
                                               const RationalVector& direction, const RationalVector& facet_normal);

}  // namespace pleat
