// `pleat draw`'s figures from a scene (draw_figures.hpp): the geometry is
// exact (clipped polygons, shared edges, counts); only the final drawing
// coordinates are doubles.
#include "cli/commands/draw_figures.hpp"

#include "cli/common.hpp"
#include "cli/figures/figure.hpp"
#include "cli/figures/figure_mesh.hpp"
#include "enumerate/region_geometry.hpp"

#include <algorithm>
#include <limits>
#include <set>
#include <sstream>
#include <string>
#include <utility>

namespace pleat::cli::draw {
namespace {

// "3 regions outside the view" (nothing when none or not known).
std::vector<std::string> outside_note(const Scene& scene, std::size_t drawn) {
  if (!scene.total_regions || *scene.total_regions <= drawn) return {};
  return {count_of(*scene.total_regions - drawn, "region") + " outside the view"};
}

// The figure's size in the writer's unit: px for SVG, cm for TikZ.
void apply_size(Figure& figure, const DrawArguments& arguments, Format format) {
  if (arguments.size_text.empty()) return;
  const FigureSize size = parse_figure_size(arguments.size_text);
  const double scale = format == Format::svg ? 96 / 2.54 : 1.0;
  figure.width = size.width_cm * scale;
  figure.height = size.height_cm * scale;
}

// The figure's counts under the legend, unless --no-stats (the summary
// printed after drawing has them either way).
void add_stats(Figure& figure, const DrawArguments& arguments, const std::vector<std::string>& lines) {
  if (arguments.no_stats) return;
  figure.notes.push_back("");
  figure.notes.insert(figure.notes.end(), lines.begin(), lines.end());
}

// With --labels, the key says what a number on the map is.
void add_label_note(Figure& figure, const DrawArguments& arguments) {
  if (!arguments.labels) return;
  figure.notes.push_back("");
  figure.notes.push_back("labels: the activation pattern,");
  figure.notes.push_back("or the region's number where");
  figure.notes.push_back("the pattern does not fit (--table)");
}

// What both figures set up alike: title, legend, labels and the view's x
// range (the y range is the plane's view or the graph's values).
Figure start_figure(const DrawArguments& arguments, const View& view, std::string x_label, std::string y_label) {
  Figure figure;
  figure.title = arguments.title;
  figure.show_legend = !arguments.no_legend;
  figure.show_labels = arguments.labels;
  figure.x_min = to_double(view.lower[0]);
  figure.x_max = to_double(view.upper[0]);
  figure.x_label = std::move(x_label);
  figure.y_label = std::move(y_label);
  return figure;
}

// Polygon i (numbered i until now) is the region drawn[i]: the regions
// coloured, the labels' key, and each polygon given its region's id.
void colour_and_number(Figure& figure, const Network& network, const std::vector<const Region*>& drawn,
                       const std::vector<std::set<std::size_t>>& adjacent, const DrawArguments& arguments) {
  colour_regions(network, drawn, adjacent, arguments.colour_by, figure);
  add_label_note(figure, arguments);
  for (std::size_t i = 0; i < drawn.size(); ++i) figure.polygons[i].region = drawn[i]->id;
}

// The side table of the regions drawn: the number on the map (the region's
// id in the walk), its pattern, and an exact point inside it.
std::string region_table(const Network& network, const std::vector<const Region*>& regions) {
  const std::size_t dim = network.input_dim;
  std::ostringstream out;
  const char* axes[] = {"x", "y", "z"};
  out << "region,pattern";
  for (std::size_t i = 0; i < dim && i < 3; ++i) out << "," << axes[i] << "_exact";
  for (std::size_t i = 0; i < dim && i < 3; ++i) out << "," << axes[i];
  out << "\n";
  std::vector<const Region*> sorted = regions;
  std::sort(sorted.begin(), sorted.end(), [](const Region* a, const Region* b) { return a->id < b->id; });
  for (const Region* region : sorted) {
    out << region->id << "," << format_pattern(network, region->pattern);
    for (const auto& v : region->interior.point) out << "," << format_rational(v);
    for (const auto& v : region->interior.point) out << "," << format_double(to_double(v));
    out << "\n";
  }
  return out.str();
}

}  // namespace

Drawn draw_plane(const Network& network, const Scene& scene, const DrawArguments& arguments, Format format) {
  const std::vector<Region>& regions = scene.regions;
  const View& view = scene.view;
  std::vector<lp::Polygon> polygons;
  std::vector<const Region*> drawn;
  for (const auto& region : regions) {
    poll_stop();
    lp::Polygon polygon = lp::clip_rectangle(view.lower, view.upper, closed_cell(region, scene.with_domain_sides).constraints);
    if (polygon.vertices.size() < 3) continue;
    polygons.push_back(std::move(polygon));
    drawn.push_back(&region);
  }
  const lp::PlanarComplex complex = lp::planar_complex(polygons);
  Drawn result{"", region_table(network, drawn), complex.vertices.size(), complex.edges.size(), polygons.size()};

  if (format == Format::csv) {
    std::ostringstream out;
    out << "region,pattern,vertex,x,y,x_exact,y_exact\n";
    for (std::size_t i = 0; i < polygons.size(); ++i)
      for (std::size_t k = 0; k < polygons[i].vertices.size(); ++k) {
        const auto& p = polygons[i].vertices[k];
        out << drawn[i]->id << "," << format_pattern(network, drawn[i]->pattern) << "," << k << ","
            << format_double(to_double(p[0])) << "," << format_double(to_double(p[1])) << "," << format_rational(p[0])
            << "," << format_rational(p[1]) << "\n";
      }
    result.text = out.str();
    return result;
  }

  Figure figure = start_figure(arguments, view, "x1", "x2");
  figure.y_min = to_double(view.lower[1]);
  figure.y_max = to_double(view.upper[1]);
  figure.layers = network.hidden_neuron_count() ? network.relu_layer_count() : 0;
  figure.show_lines = !arguments.no_lines;

  // Adjacency and bent-hyperplane pieces from the exact shared edges.
  std::vector<std::set<std::size_t>> adjacent(polygons.size());
  struct Piece {
    RationalVector from, to;
    std::size_t layer;
  };
  std::vector<Piece> pieces;
  for (const auto& edge : complex.edges) {
    if (edge.polygons.size() == 2) {
      adjacent[edge.polygons[0]].insert(edge.polygons[1]);
      adjacent[edge.polygons[1]].insert(edge.polygons[0]);
    }
    std::size_t layer = no_index;
    for (std::size_t index : edge.polygons)
      for (const auto& facet : drawn[index]->facets) {
        if (facet.neurons.empty()) continue;
        auto value = [&](const RationalVector& p) -> Rational { return facet.normal[0] * p[0] + facet.normal[1] * p[1] + facet.offset; };
        if (value(edge.from) == 0 && value(edge.to) == 0)
          layer = std::min(layer, network.layer_of_neuron(facet.neurons.front()));
      }
    if (layer == no_index) continue;  // the view's border
    // Edges come line by line in increasing order: extend the previous piece
    // when this one continues it on the same line in the same layer.
    if (!pieces.empty() && pieces.back().layer == layer && pieces.back().to == edge.from) {
      const auto& a = pieces.back().from;
      const auto& b = pieces.back().to;
      if ((b[0] - a[0]) * (edge.to[1] - a[1]) == (b[1] - a[1]) * (edge.to[0] - a[0])) {
        pieces.back().to = edge.to;
        continue;
      }
    }
    pieces.push_back(Piece{edge.from, edge.to, layer});
  }
  for (const auto& piece : pieces) figure.segments.push_back(FigureSegment{point_of(piece.from), point_of(piece.to), piece.layer});

  for (std::size_t i = 0; i < polygons.size(); ++i) {
    FigurePolygon polygon;
    polygon.region = i;  // replaced by the region id below, after colouring
    polygon.pattern = format_pattern(network, drawn[i]->pattern);
    polygon.number = std::to_string(drawn[i]->id);
    FigurePoint centre;
    for (const auto& p : polygons[i].vertices) {
      polygon.vertices.push_back(point_of(p));
      centre.x += polygon.vertices.back().x / static_cast<double>(polygons[i].vertices.size());
      centre.y += polygon.vertices.back().y / static_cast<double>(polygons[i].vertices.size());
    }
    polygon.label = centre;
    figure.polygons.push_back(std::move(polygon));
  }
  colour_and_number(figure, network, drawn, adjacent, arguments);
  std::vector<std::string> stats{count_of(result.regions, "region") + ", " + count_of(result.edges, "edge") + ",",
                                 count_of(result.vertices, "vertex", "vertices") + " in the view"};
  apply_size(figure, arguments, format);
  // Measured in the SVG's pixels: a TikZ picture's size is in cm and its
  // layout differs, so its regions are not counted (the note names the SVG).
  if (format == Format::svg) result.thin = thin_regions_svg(figure, thin_width_px);
  for (auto& note : outside_note(scene, result.regions)) stats.push_back(std::move(note));
  add_stats(figure, arguments, stats);
  result.text = format == Format::svg ? figure_svg(figure) : figure_tikz(figure);
  return result;
}

Drawn draw_line(const Network& network, const Scene& scene, const DrawArguments& arguments, Format format) {
  const std::vector<Region>& regions = scene.regions;
  const View& view = scene.view;
  const std::vector<LinePiece> pieces = line_pieces(regions, view);
  std::vector<const Region*> drawn_regions;
  for (const auto& piece : pieces) drawn_regions.push_back(piece.region);
  Drawn result{"", region_table(network, drawn_regions), pieces.size() + 1, pieces.size(), pieces.size()};
  auto value = [](const Region& region, std::size_t output, const Rational& x) -> Rational {
    return region.affine.linear(output, 0) * x + region.affine.offset[output];
  };
  if (format == Format::csv) {
    std::ostringstream out;
    out << "region,pattern,output,x_left,x_right,value_left,value_right,slope,"
           "x_left_exact,x_right_exact,value_left_exact,value_right_exact,slope_exact\n";
    for (const auto& piece : pieces)
      for (std::size_t o = 0; o < network.output_dim(); ++o) {
        const Rational left = value(*piece.region, o, piece.low), right = value(*piece.region, o, piece.high);
        const Rational& slope = piece.region->affine.linear(o, 0);
        out << piece.region->id << "," << format_pattern(network, piece.region->pattern) << "," << o << ","
            << format_double(to_double(piece.low)) << "," << format_double(to_double(piece.high)) << ","
            << format_double(to_double(left)) << "," << format_double(to_double(right)) << ","
            << format_double(to_double(slope)) << "," << format_rational(piece.low) << ","
            << format_rational(piece.high) << "," << format_rational(left) << "," << format_rational(right) << ","
            << format_rational(slope) << "\n";
      }
    result.text = out.str();
    return result;
  }
  Figure figure = start_figure(arguments, view, "x", network.output_dim() > 1 ? "F1" : "F");
  double low = std::numeric_limits<double>::infinity(), high = -low;
  for (std::size_t i = 0; i < pieces.size(); ++i) {
    const auto& piece = pieces[i];
    const double left = to_double(value(*piece.region, 0, piece.low));
    const double right = to_double(value(*piece.region, 0, piece.high));
    figure.graph.push_back(FigurePoint{to_double(piece.low), left});
    if (i + 1 == pieces.size()) figure.graph.push_back(FigurePoint{to_double(piece.high), right});
    if (i > 0) figure.breakpoints.push_back(FigurePoint{to_double(piece.low), left});
    low = std::min({low, left, right});
    high = std::max({high, left, right});
  }
  if (!(low < high)) {
    low -= 1;
    high += 1;
  }
  figure.y_min = low - 0.08 * (high - low);
  figure.y_max = high + 0.08 * (high - low);
  figure.show_lines = false;
  std::vector<const Region*> drawn;
  std::vector<std::set<std::size_t>> adjacent(pieces.size());
  for (std::size_t i = 0; i < pieces.size(); ++i) {
    drawn.push_back(pieces[i].region);
    if (i > 0) {
      adjacent[i].insert(i - 1);
      adjacent[i - 1].insert(i);
    }
    FigurePolygon band;
    band.region = i;
    band.pattern = format_pattern(network, pieces[i].region->pattern);
    band.number = std::to_string(pieces[i].region->id);
    const double a = to_double(pieces[i].low), b = to_double(pieces[i].high);
    band.vertices = {{a, figure.y_min}, {b, figure.y_min}, {b, figure.y_max}, {a, figure.y_max}};
    band.label = FigurePoint{(a + b) / 2, figure.y_min + 0.04 * (figure.y_max - figure.y_min)};
    figure.polygons.push_back(std::move(band));
  }
  colour_and_number(figure, network, drawn, adjacent, arguments);
  std::vector<std::string> stats{count_of(pieces.size(), "region") + ", " +
                                 count_of(figure.breakpoints.size(), "breakpoint")};
  for (auto& note : outside_note(scene, pieces.size())) stats.push_back(std::move(note));
  add_stats(figure, arguments, stats);
  apply_size(figure, arguments, format);
  result.text = format == Format::svg ? figure_svg(figure) : figure_tikz(figure);
  return result;
}

Drawn draw_mesh(const Network& network, const Scene& scene) {
  RegionMesh mesh = region_mesh(network, scene.regions, scene.view, scene.with_domain_sides);
  return Drawn{std::move(mesh.off), std::move(mesh.table), mesh.vertices, mesh.faces, mesh.regions};
}

// The domain cut to the view: a box stays a box, a polytope gains the
// view's sides. A refusal names --box/--domain, or the --from file's domain.

}  // namespace pleat::cli::draw
