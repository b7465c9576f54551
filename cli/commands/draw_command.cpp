// pleat draw: figures of the regions of a network with 2 inputs (regions
// clipped to a view rectangle, bent hyperplanes over them) or the graph of a
// network with 1 input; SVG, TikZ or CSV. The geometry is exact (clipped
// polygons, shared edges, counts); only the final drawing coordinates are
// doubles.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/figures/figure.hpp"
#include "cli/figures/figure_colour.hpp"
#include "cli/figures/figure_mesh.hpp"
#include "cli/figures/figure_region_file.hpp"
#include "cli/figures/figure_scene.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/progress.hpp"
#include "cli/signals.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "core/stop.hpp"
#include "enumerate/region_geometry.hpp"
#include "enumerate/walker.hpp"

#include <algorithm>
#include <atomic>
#include <iostream>
#include <limits>
#include <set>
#include <sstream>

namespace pleat::cli {
namespace {

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

Format format_of(const std::string& path) {
  auto ends_with = [&](const std::string& suffix) {
    return path.size() >= suffix.size() && path.compare(path.size() - suffix.size(), suffix.size(), suffix) == 0;
  };
  if (ends_with(".svg")) return Format::svg;
  if (ends_with(".tex")) return Format::tikz;
  if (ends_with(".csv")) return Format::csv;
  if (ends_with(".off")) return Format::off;
  throw input_error("--out: " + path + ": the name must end in .svg, .tex, .csv or .off (3 inputs)");
}

// What is drawn: the regions, the view, whether the cells are clipped by the
// domain's sides too (a saved walk, --domain), and how many regions the
// domain has in all when known (so the figure can say how many lie outside).
struct Scene {
  View view;
  std::vector<Region> regions;
  bool with_domain_sides = false;
  std::optional<std::size_t> total_regions;
};

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

// "XMIN,XMAX,YMIN,YMAX" for --view.
std::string view_option_text(const View& view) {
  std::string text;
  for (std::size_t i = 0; i < view.lower.size(); ++i)
    text += (i ? "," : "") + format_rational(view.lower[i]) + "," + format_rational(view.upper[i]);
  return text;
}

std::vector<Region> walk_all(const Network& network, const Domain& domain, const DrawArguments& arguments,
                             const std::atomic<bool>& interrupt) {
  std::vector<Region> regions;
  ProgressLine progress(arguments.quiet);
  WalkOptions options;
  apply_walk_limits(arguments.limits, interrupt, options);
  options.on_region = [&](const Region& region) {
    regions.push_back(region);
    return true;
  };
  options.on_progress = [&](const WalkProgress& state) {
    progress.update([&] {
      return "walking: " + std::to_string(state.regions) + " regions, frontier " + std::to_string(state.frontier);
    });
  };
  const WalkSummary summary = walk_regions(network, domain, options);
  progress.finish();
  if (summary.stop_reason == StopReason::interrupted) throw Stopped(StopReason::interrupted);
  if (!summary.complete) throw std::runtime_error("the walk stopped early (" + to_string(summary.stop_reason) + ")");
  return regions;
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

// Regions narrower than this in the SVG are reported: a reader cannot see them.
constexpr double thin_width_px = 3;

struct Drawn {
  std::string text;
  std::string table;  // --table: one row per region drawn (per face of a mesh)
  std::size_t vertices = 0, edges = 0, regions = 0;
  std::size_t thin = 0;  // regions under thin_width_px wide in the SVG (2 inputs)
};

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

  Figure figure;
  figure.title = arguments.title;
  figure.show_legend = !arguments.no_legend;
  figure.x_min = to_double(view.lower[0]);
  figure.x_max = to_double(view.upper[0]);
  figure.y_min = to_double(view.lower[1]);
  figure.y_max = to_double(view.upper[1]);
  figure.x_label = "x1";
  figure.y_label = "x2";
  figure.layers = network.hidden_neuron_count() ? network.relu_layer_count() : 0;
  figure.show_lines = !arguments.no_lines;
  figure.show_labels = arguments.labels;

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
  colour_regions(network, drawn, adjacent, arguments.colour_by, figure);
  add_label_note(figure, arguments);
  for (std::size_t i = 0; i < polygons.size(); ++i) figure.polygons[i].region = drawn[i]->id;
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
  Figure figure;
  figure.title = arguments.title;
  figure.show_legend = !arguments.no_legend;
  figure.x_min = to_double(view.lower[0]);
  figure.x_max = to_double(view.upper[0]);
  figure.x_label = "x";
  figure.y_label = network.output_dim() > 1 ? "F1" : "F";
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
  figure.show_labels = arguments.labels;
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
  colour_regions(network, drawn, adjacent, arguments.colour_by, figure);
  add_label_note(figure, arguments);
  for (std::size_t i = 0; i < pieces.size(); ++i) figure.polygons[i].region = pieces[i].region->id;
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
Domain domain_in_view(const Domain& domain, const View& view, const std::string& from_path = "") {
  const std::string what = !from_path.empty() ? "the domain of the walk in " + from_path + " (" + domain.describe() + ")"
                           : domain.kind == Domain::Kind::box ? "--box" : "--domain";
  if (domain.kind != Domain::Kind::polytope) {
    View cut = view;
    if (domain.kind == Domain::Kind::box)
      for (std::size_t i = 0; i < view.lower.size(); ++i) {
        cut.lower[i] = std::max(cut.lower[i], domain.lower[i]);
        cut.upper[i] = std::min(cut.upper[i], domain.upper[i]);
        if (!(cut.lower[i] < cut.upper[i])) throw input_error("draw: the view and " + what + " do not overlap");
      }
    return make_box(cut.lower, cut.upper);
  }
  std::vector<lp::Constraint> sides = domain.constraints;
  for (const auto& side : make_box(view.lower, view.upper).constraints) sides.push_back(side);
  try {
    return make_polytope(domain.dim, std::move(sides));
  } catch (const input_error&) {
    throw input_error("draw: the view and " + what + " do not overlap");
  }
}

void print_fitted(const FittedView& fitted) {
  if (!fitted.is_bulk) return;
  std::cerr << "pleat: the view holds the bulk of the arrangement's vertices (" << fitted.vertices_outside << " of "
            << fitted.vertices << " lie outside it; every vertex: --view "
            << view_option_text(fitted.every_vertex) << ")\n";
}

// The regions and the view. Without --view: the --box, the bounding box of
// a bounded --domain, the saved walk's box, or else a view fitted to the
// vertices of a walk of the whole domain (fitted_view), whose region count
// then tells how many regions lie outside. The view is checked once, naming
// where it came from, before the walk in it.
Scene make_scene(const Network& network, const Domain& domain, std::optional<View> view,
                 const DrawArguments& arguments, const std::atomic<bool>& interrupt) {
  const std::size_t dim = network.input_dim;
  std::optional<std::size_t> walked_first;  // the regions of the whole domain, when walked to fit the view
  std::optional<SavedWalk> saved;
  if (!arguments.from_path.empty()) {
    saved = read_saved_walk(network, arguments.from_path);
    if (view) (void)domain_in_view(saved->domain, *view, arguments.from_path);  // else a figure of "0 regions"
  }
  const Domain& bounds = saved ? saved->domain : domain;
  std::string source = "--view";
  if (!view && bounds.kind == Domain::Kind::box) {
    view = View{bounds.lower, bounds.upper};
    source = saved ? "the box of the walk in " + arguments.from_path : "--box";
  }
  if (!view && !saved && domain.kind == Domain::Kind::polytope) {
    view = bounding_view(domain);
    source = "the --domain's bounding box";
  }
  if (!view) {
    std::vector<Region> whole = saved ? std::vector<Region>() : walk_all(network, domain, arguments, interrupt);
    const FittedView fitted = fitted_view(saved ? saved->regions : whole, dim);
    print_fitted(fitted);
    view = fitted.view;
    source = "the view fitted to the walk's vertices";
    if (!saved) walked_first = whole.size();
  }
  refuse_undrawable_view(*view, source);
  if (saved) {  // (the count first: braced initialisers are evaluated in order)
    const std::size_t count = saved->regions.size();
    return Scene{*view, std::move(saved->regions), true, count};
  }
  const Domain walked = domain_in_view(domain, *view);
  return Scene{*view, walk_all(network, walked, arguments, interrupt), walked.kind == Domain::Kind::polytope,
               walked_first};
}

// A CSV or an OFF mesh has no title, key, lines or text on it: the options
// that only a figure (SVG, TikZ) honours are refused there rather than
// silently ignored. A mesh is coloured so that neighbours differ, which is
// --color-by region; a CSV has no colours.
void refuse_figure_only_options(const DrawArguments& arguments, Format format) {
  if (format == Format::svg || format == Format::tikz) return;
  const std::string written = format == Format::csv ? "a .csv table" : "an .off mesh";
  auto refuse = [&](bool given, const std::string& option) {
    if (given) throw input_error(option + " is for figures (--out FIG.svg or FIG.tex); " + written + " has none");
  };
  refuse(!arguments.title.empty(), "--title");
  refuse(arguments.labels, "--labels");
  refuse(arguments.no_lines, "--no-lines");
  refuse(arguments.no_stats, "--no-stats");
  refuse(arguments.no_legend, "--no-legend");
  refuse(!arguments.size_text.empty(), "--size");
  if (arguments.colour_given && format == Format::csv)
    throw input_error("--color-by is for figures and meshes; a .csv table has no colours");
  if (arguments.colour_given && arguments.colour_by != ColourMode::region)
    throw input_error("--color-by: an .off mesh is coloured by region only (neighbours differ)");
}

int draw_figure(const DrawArguments& arguments, const std::atomic<bool>& interrupt) {
  const Network network = read_network_input(arguments.network_path);
  const std::size_t dim = network.input_dim;
  const Format format = format_of(arguments.output_path);
  if (dim == 3 && format != Format::off)
    throw input_error("draw: with 3 inputs only a mesh is written: --out FILE.off");
  if (dim != 3 && format == Format::off) throw input_error("draw: .off meshes are for networks with 3 inputs");
  if (dim < 1 || dim > 3)
    throw input_error("draw: the network has " + std::to_string(dim) + " inputs; draw handles 1 (a graph), "
                      "2 (regions) or 3 (a mesh)");
  refuse_figure_only_options(arguments, format);
  refuse_shared_outputs({{"--out", arguments.output_path}, {"--table", arguments.table_path}});
  if (!arguments.size_text.empty()) (void)parse_figure_size(arguments.size_text);  // a bad --size fails before the walk
  std::optional<View> view;
  if (!arguments.view_text.empty()) {
    const RationalVector numbers = parse_number_list(arguments.view_text, "--view");
    if (numbers.size() != 2 * dim)
      throw input_error("--view: expected " + std::to_string(2 * dim) + " numbers (" +
                        (dim == 1 ? "XMIN,XMAX" : dim == 2 ? "XMIN,XMAX,YMIN,YMAX" : "XMIN,XMAX,YMIN,YMAX,ZMIN,ZMAX") + "), found " + std::to_string(numbers.size()));
    view = View{};
    for (std::size_t i = 0; i < dim; ++i) {
      if (!(numbers[2 * i] < numbers[2 * i + 1])) throw input_error("--view: each minimum must be below its maximum");
      view->lower.push_back(numbers[2 * i]);
      view->upper.push_back(numbers[2 * i + 1]);
    }
  }

  const Domain domain = make_domain(arguments.domain, dim);
  const bool from_file = !arguments.from_path.empty();
  if (from_file && domain.kind != Domain::Kind::whole_space)
    throw input_error("draw: --from draws the saved walk on its own domain; --box and --domain are for a fresh walk");
  const Scene scene = make_scene(network, domain, view, arguments, interrupt);

  const Drawn drawn = dim == 3   ? draw_mesh(network, scene)
                      : dim == 2 ? draw_plane(network, scene, arguments, format)
                                 : draw_line(network, scene, arguments, format);
  write_output(arguments.output_path, drawn.text);
  if (!arguments.table_path.empty()) write_output(arguments.table_path, drawn.table);
  std::cout << "view        " << describe_view(scene.view) << "\n";
  if (dim == 3)
    std::cout << "mesh        " << count_of(drawn.regions, "region") << ", " << count_of(drawn.edges, "face") << ", "
              << count_of(drawn.vertices, "distinct vertex", "distinct vertices")
              << " (exact, clipped to the view; one closed surface per region)\n";
  else if (dim == 2)
    std::cout << "complex     " << count_of(drawn.regions, "region") << ", " << count_of(drawn.edges, "edge") << ", "
              << count_of(drawn.vertices, "vertex", "vertices") << " (exact, clipped to the view)\n";
  else
    std::cout << "graph       " << count_of(drawn.regions, "piece") << ", "
              << count_of(drawn.regions ? drawn.regions - 1 : 0, "breakpoint") << " (exact, in the view)\n";
  std::cout << "written     " << arguments.output_path << "\n";
  if (drawn.thin > 0)
    std::cerr << "pleat: " << count_of(drawn.thin, "region") << " of " << drawn.regions
              << (drawn.thin == 1 ? " is" : " are") << " under " << thin_width_px
              << " px wide in the SVG (--labels with --table numbers them; a smaller --view widens them)\n";
  if (scene.total_regions && *scene.total_regions > drawn.regions)
    std::cerr << "pleat: " << *scene.total_regions - drawn.regions << " of " << *scene.total_regions
              << " regions " << (*scene.total_regions - drawn.regions == 1 ? "lies" : "lie") << " outside the view\n";
  return 0;
}

// Ctrl-C stops the walk and the exact clipping alike (both poll it); a
// figure cut short would be wrong, so nothing is written.
int run_draw(const DrawArguments& arguments) {
  const InterruptGuard interrupt;
  const StopRequest stop(&interrupt.flag(), 0);
  const StopScope scope(stop);
  try {
    return draw_figure(arguments, interrupt.flag());
  } catch (const Stopped&) {
    std::cerr << "pleat: draw interrupted; no figure written\n";
    return 130;
  }
}

}  // namespace

void register_draw(CommandTable& commands) {
  auto arguments = std::make_shared<DrawArguments>();
  CLI::App& command = commands.add(
      "draw", "Draw a network's regions (2 inputs), graph (1 input) or region mesh (3 inputs)",
      "With 2 inputs: every region clipped to the view rectangle as an exact polygon, the\n"
      "bent hyperplanes (each neuron's zero set; one line style per layer) over them, a legend,\n"
      "axes, and the counts of regions, edges and vertices. With 1 input: the graph of the\n"
      "network with its breakpoints; the CSV lists each piece's ends, values and slope exactly.\n"
      "The format follows the name given to --out: .svg (standalone), .tex (a tikzpicture to\n"
      "\\input; needs \\usepackage{tikz}), .csv (2 inputs: one row per polygon vertex), .off (3\n"
      "inputs: an OFF mesh, every region clipped to the view box as its own closed surface,\n"
      "faces counter-clockwise from outside, an RGB colour per face; --table names each face's\n"
      "region). Formats: docs/formats.md.\n"
      "The view: --view, else the --box, else the bounding box of a --domain polytope (the\n"
      "regions are cut to it), else the bulk of the arrangement's vertices (per axis the\n"
      "shortest interval holding half of them, widened by its length on each side; the whole\n"
      "range when that is not much wider). Standard error then says how many vertices and\n"
      "regions lie outside, and the --view that holds every vertex. For an SVG it also says how\n"
      "many regions are under 3 px wide in it (too thin to see).\n\n"
      "Examples:\n"
      "  pleat draw data/fold2d.json --out fold2d.svg --view -3,3,-3,3\n"
      "  pleat draw data/fold2d.json --out fold2d.tex --color-by layer1 --labels\n"
      "  pleat walk data/fold2d.json --box -3,3 -o regions.jsonl && pleat draw data/fold2d.json --from regions.jsonl --out f.csv\n"
      "  pleat draw data/sensor3d.json --view -1,1,-1,1,-1,1 --out sensor.off --table sensor-faces.csv",
      [arguments] { return run_draw(*arguments); });
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")->required();
  command.add_option("--out", arguments->output_path, "Output file: FIG.svg, FIG.tex, FIG.csv or (3 inputs) FIG.off")->required();
  add_number_list_option(command, "--view", arguments->view_text,
                         "XMIN,XMAX,YMIN,YMAX (XMIN,XMAX for 1 input): the rectangle drawn and walked");
  command
      .add_option_function<std::string>(
          "--color-by,--colour-by",
          [arguments](const std::string& name) {
            arguments->colour_by = colour_mode_from_name(name);
            arguments->colour_given = true;
          },
          "region (neighbours differ), gradient (|grad F|), layer1 (first-layer cell), rank "
          "(rows the region adds to the rank of the regions before it in walk order); an .off mesh: "
          "region only; not for .csv")
      ->check(CLI::IsMember(colour_mode_names()));
  command.add_flag("--labels", arguments->labels,
                   "Write each region's activation pattern inside it where it fits, else its number (the "
                   "region column of --table) where that fits, else nothing (SVG and TikZ)");
  command.add_option("--table", arguments->table_path,
                     "Write a side table (CSV): per region drawn its number, pattern and an exact interior point "
                     "(region,pattern,x_exact,y_exact,x,y); for a mesh, the region of each face (face,region,pattern)")
      ->type_name("FILE.csv");
  command.add_flag("--no-lines", arguments->no_lines, "Leave out the bent hyperplanes (fills only; SVG and TikZ)");
  command.add_flag("--no-stats", arguments->no_stats,
                   "Leave the counts (regions, edges, vertices) out of the figure (SVG and TikZ); the summary printed "
                   "has them");
  command.add_flag("--no-legend", arguments->no_legend, "Leave out the key right of the plot (and the counts in it; SVG and TikZ)");
  command.add_option("--size", arguments->size_text,
                     "The whole figure's width and height, in cm or px (96 px to the inch): 12cm,8cm or 600,400px; "
                     "the plot takes what the margins and the key leave. Default: SVG 420 px of plot, TikZ 12 cm wide")
      ->type_name("W,H");
  command.add_option("--title", arguments->title, "A title over the plot (SVG and TikZ; refused for .csv and .off, which have none)")->type_name("TEXT");
  command.add_option("--from", arguments->from_path,
                     "Draw a saved walk (pleat walk -o FILE) instead of walking; --view clips it. A walk cut "
                     "short (a neighbour it names is missing) is refused");
  add_domain_options(command, arguments->domain);
  add_walk_limit_options(command, arguments->limits, "Worker threads for the walk (default: all cores)");
  // A saved walk is drawn without walking: --threads would be ignored.
  command.get_option("--threads")->excludes("--from");
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
