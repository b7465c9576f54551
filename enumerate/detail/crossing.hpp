// Crossing a facet in the walker: the far side's activation pattern(s) at a
// point of a facet, from the near side's exact maps (see enumerate/walker.hpp
// for why this is exact). Double images only filter signs; every sign is exact.
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "enumerate/detail/integer_maps.hpp"

#include <optional>
#include <span>
#include <vector>

namespace pleat::detail {

// Double images (core/filtered_sign.hpp) of a region's pre-activation maps,
// per ReLU layer: each row's linear part, then its offset. For filtered signs
// at crossing points; built once per region.
struct MapImages {
  std::vector<std::vector<double>> layers;
};

MapImages map_images(const Network& network, const PatternMaps& maps);

// Every far-side candidate at q (extend_across), signs filtered against images
// when given, exact otherwise. Sorted, distinct; may include patterns whose
// cell has no interior next to q (the caller checks).
std::vector<ActivationPattern> patterns_across_filtered(const Network& network, const ActivationPattern& near_pattern,
                                                        const PatternMaps& near_maps, const MapImages* images,
                                                        const RationalVector& q, const RationalVector& direction,
                                                        const RationalVector& facet_normal);

// The far side's pattern at a point q of a facet of the near region, in the
// common case, from the near side's fraction-free pre-activation maps (one per
// layer). Precondition: the neurons that vanish at q are exactly those with
// vanishing[neuron] (by id) and the near pattern's 'z' neurons; every other
// neuron is nonzero at q (the fast paths prove this of each facet point: the
// facet's rows are 0 there and every other row is > 0). Those keep their
// sign; a vanishing neuron is 'z' (zero linear part) or takes the sign of its
// derivative across the facet (linear part parallel to facet_normal, the
// facet's row normal; across is its negative). nullopt when the crossing
// needs patterns_across_filtered (a vanishing neuron above a layer that
// changed, or one crossed transversally). Exact.
std::optional<ActivationPattern> pattern_across_in_integers(const Network& network, const std::vector<IntegerMap>& maps,
                                                            const ActivationPattern& near,
                                                            const std::vector<char>& vanishing,
                                                            std::span<const Integer* const> facet_normal);

}  // namespace pleat::detail
