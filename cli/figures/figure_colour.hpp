// Colouring the regions of a 2-input figure (pleat draw --colour-by): the
// palette choice, the legend and the notes for each mode.
#pragma once

#include "cli/figures/figure.hpp"
#include "core/network.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <set>
#include <string>
#include <vector>

namespace pleat::cli {

// region: adjacent regions differ (smallest-last greedy colouring);
// first_layer: one colour per cell of the first layer's hyperplanes, adjacent
// cells differ; gradient: |grad F_1| on the sequential scale; rank: the rows
// each region adds to the rank of those before it in walk order.
enum class ColourMode { region, first_layer, gradient, rank };

// The option's words: region, gradient, layer1, rank.
std::vector<std::string> colour_mode_names();

// Precondition: name is one of colour_mode_names() (throws usage_error).
ColourMode colour_mode_from_name(const std::string& name);

// Fills figure.colours, figure.polygons[*].colour, the legend and the notes.
// adjacent[i] lists the regions adjacent to regions[i] (indices into regions);
// every polygon's region indexes regions.
void colour_regions(const Network& network, const std::vector<const Region*>& regions,
                    const std::vector<std::set<std::size_t>>& adjacent, ColourMode mode, Figure& figure);

}  // namespace pleat::cli
