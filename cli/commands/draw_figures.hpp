// The pieces of `pleat draw` that turn a scene into a figure: the plane
// (2 inputs), the graph (1 input) and the mesh (3 inputs), each as SVG, TikZ,
// CSV or OFF text with its counts. Internal to cli/commands (draw_command.cpp
// parses the options, walks or reads the regions and chooses the view).
#pragma once

#include "cli/domain_options.hpp"
#include "cli/figures/figure_colour.hpp"
#include "cli/figures/figure_scene.hpp"
#include "cli/walk_options.hpp"
#include "core/network.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace pleat::cli::draw {

// The options of `pleat draw`, as parsed.
struct DrawArguments {
  std::string network_path;
  std::string output_path;
  std::string view_text;
  ColourMode colour_by = ColourMode::region;
  bool colour_given = false;  // --color-by was on the command line
  std::string from_path;
  DomainOptions domain;
  bool labels = false;
  bool no_lines = false;
  bool no_stats = false;
  bool no_legend = false;
  std::string title;
  std::string size_text;
  std::string table_path;
  bool quiet = false;
  WalkLimitOptions limits;  // --threads only
};

enum class Format { svg, tikz, csv, off };

// What is drawn: the regions, the view, whether the cells are clipped by the
// domain's sides too (a saved walk, --domain), and how many regions the
// domain has in all when known (so the figure can say how many lie outside).
struct Scene {
  View view;
  std::vector<Region> regions;
  bool with_domain_sides = false;
  std::optional<std::size_t> total_regions;
};

// Regions narrower than this in the SVG are reported: a reader cannot see them.
inline constexpr double thin_width_px = 3;

// A drawing and its counts.
struct Drawn {
  std::string text;
  std::string table;  // --table: one row per region drawn (per face of a mesh)
  std::size_t vertices = 0, edges = 0, regions = 0;
  std::size_t thin = 0;  // regions under thin_width_px wide in the SVG (2 inputs)
};

// The regions on a plane, clipped to the view (2 inputs).
Drawn draw_plane(const Network& network, const Scene& scene, const DrawArguments& arguments, Format format);
// The graph of a network with 1 input over the view.
Drawn draw_line(const Network& network, const Scene& scene, const DrawArguments& arguments, Format format);
// The region mesh of a network with 3 inputs (OFF).
Drawn draw_mesh(const Network& network, const Scene& scene);

}  // namespace pleat::cli::draw
