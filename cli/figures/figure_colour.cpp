#include "cli/figures/figure_colour.hpp"

#include "cli/common.hpp"
#include "cli/figures/figure_scene.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <string>

namespace pleat::cli {
namespace {

// The categorical palette, extended with sequential colours when a colouring
// needs more than its six.
void use_palette(Figure& figure, std::size_t needed) {
  figure.colours = categorical_palette();
  for (std::size_t extra = figure.colours.size(); extra < needed; ++extra)
    figure.colours.push_back(sequential_colour(static_cast<double>(extra % 7) / 6.0));
}

std::size_t colours_used(const std::vector<std::size_t>& colour) {
  return colour.empty() ? 0 : *std::max_element(colour.begin(), colour.end()) + 1;
}

std::vector<std::size_t> colour_by_region(const std::vector<std::set<std::size_t>>& adjacent, Figure& figure) {
  std::vector<std::size_t> colour = smallest_last_colouring(adjacent);
  use_palette(figure, colours_used(colour));
  figure.legend_title = "Regions";
  figure.notes.push_back("adjacent regions never share");
  figure.notes.push_back("a colour (smallest-last greedy)");
  return colour;
}

// Regions with the same first-layer states form one cell of the first
// layer's hyperplane arrangement; neighbouring cells get different colours.
std::vector<std::size_t> colour_by_first_layer(const Network& network, const std::vector<const Region*>& regions,
                                               const std::vector<std::set<std::size_t>>& adjacent, Figure& figure) {
  const std::size_t n = regions.size();
  const std::size_t width = network.relu_layer_count() ? network.layers[0].width() : 0;
  std::map<std::vector<NeuronState>, std::size_t> cell_of;
  std::vector<std::size_t> cell(n);
  for (std::size_t i = 0; i < n; ++i) {
    const auto& states = regions[i]->pattern.states;
    const std::vector<NeuronState> prefix(states.begin(), states.begin() + static_cast<std::ptrdiff_t>(width));
    cell[i] = cell_of.emplace(prefix, cell_of.size()).first->second;
  }
  std::vector<std::set<std::size_t>> cell_adjacent(cell_of.size());
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j : adjacent[i])
      if (cell[i] != cell[j]) cell_adjacent[cell[i]].insert(cell[j]);
  const std::vector<std::size_t> cell_colour = smallest_last_colouring(cell_adjacent);
  std::vector<std::size_t> colour(n);
  for (std::size_t i = 0; i < n; ++i) colour[i] = cell_colour[cell[i]];
  use_palette(figure, colours_used(cell_colour));
  figure.legend_title = "Layer-1 cells";
  figure.notes.push_back(count_of(cell_of.size(), "cell") + " of the first layer's");
  figure.notes.push_back("hyperplanes; neighbours differ");
  return colour;
}

// The first output's gradient norm on a sequential scale (double: a picture,
// not a claim).
std::vector<std::size_t> colour_by_gradient(const Network& network, const std::vector<const Region*>& regions,
                                            Figure& figure) {
  const std::size_t n = regions.size();
  std::vector<double> norm(n);
  for (std::size_t i = 0; i < n; ++i) {
    double sum = 0;
    for (std::size_t t = 0; t < regions[i]->affine.linear.cols(); ++t) {
      const double g = to_double(regions[i]->affine.linear(0, t));
      sum += g * g;
    }
    norm[i] = std::sqrt(sum);
  }
  const double low = n ? *std::min_element(norm.begin(), norm.end()) : 0;
  const double high = n ? *std::max_element(norm.begin(), norm.end()) : 1;
  const double span = high > low ? high - low : 1;
  std::map<std::string, std::size_t> index_of;
  std::vector<std::size_t> colour(n);
  for (std::size_t i = 0; i < n; ++i) {
    const std::string c = sequential_colour((norm[i] - low) / span);
    colour[i] = index_of.emplace(c, index_of.size()).first->second;
  }
  figure.colours.assign(index_of.size(), "");
  for (const auto& [c, index] : index_of) figure.colours[index] = c;
  figure.legend_title = network.output_dim() > 1 ? "|grad F_1|" : "|grad F|";
  // Plain decimals (never "1.2e+03"), three significant digits of the span.
  const double magnitude = std::floor(std::log10(std::max(std::abs(high - low), std::abs(high)) + 1e-300));
  const int decimals = std::clamp(2 - static_cast<int>(magnitude), 0, 12);
  for (int step = 0; step <= 4; ++step) {
    figure.colours.push_back(sequential_colour(step / 4.0));
    figure.swatches.push_back(
        FigureSwatch{figure.colours.size() - 1, fixed_point_text(low + (high - low) * step / 4.0, decimals)});
  }
  return colour;
}

// The rows each region adds to the rank of the regions before it in walk
// order (exact modular ranks: a lower bound, as the notes say).
std::vector<std::size_t> colour_by_rank(const Network& network, const std::vector<const Region*>& regions,
                                        Figure& figure) {
  const std::vector<std::size_t> rows = new_rows_in_walk_order(network, regions);
  const std::size_t most = network.output_dim() * (network.input_dim + 1);
  std::map<std::size_t, std::size_t> count;
  std::size_t total = 0;
  for (std::size_t r : rows) ++count[r], total += r;
  for (std::size_t r = 0; r <= most; ++r) figure.colours.push_back(sequential_colour(static_cast<double>(r) / most));
  figure.legend_title = "New rows (walk order)";
  for (const auto& [r, k] : count)
    figure.swatches.push_back(FigureSwatch{r, count_of(r, "row") + ": " + count_of(k, "region")});
  figure.notes.push_back("rows each region adds to the rank");
  figure.notes.push_back("of those before it; all together");
  figure.notes.push_back("rank " + std::to_string(total) + " or more (exact: certify)");
  return rows;
}

}  // namespace

std::vector<std::string> colour_mode_names() { return {"region", "gradient", "layer1", "rank"}; }

ColourMode colour_mode_from_name(const std::string& name) {
  if (name == "region") return ColourMode::region;
  if (name == "gradient") return ColourMode::gradient;
  if (name == "layer1") return ColourMode::first_layer;
  if (name == "rank") return ColourMode::rank;
  throw usage_error("unknown colour mode '" + name + "'");
}

void colour_regions(const Network& network, const std::vector<const Region*>& regions,
                    const std::vector<std::set<std::size_t>>& adjacent, ColourMode mode, Figure& figure) {
  std::vector<std::size_t> colour;
  switch (mode) {
    case ColourMode::region: colour = colour_by_region(adjacent, figure); break;
    case ColourMode::first_layer: colour = colour_by_first_layer(network, regions, adjacent, figure); break;
    case ColourMode::gradient: colour = colour_by_gradient(network, regions, figure); break;
    case ColourMode::rank: colour = colour_by_rank(network, regions, figure); break;
  }
  for (auto& polygon : figure.polygons) polygon.colour = colour[polygon.region];
}

}  // namespace pleat::cli
