// pleat draw: figures of the regions of a network with 2 inputs (regions
// clipped to a view rectangle, bent hyperplanes over them), the graph of a
// network with 1 input, or the region mesh of one with 3; SVG, TikZ, CSV or
// OFF. Here: the options, the regions (walked, or read with --from) and the
// view; draw_figures.cpp turns them into the figure.
#include "cli/command.hpp"
#include "cli/commands/draw_figures.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/figures/figure.hpp"
#include "cli/figures/figure_region_file.hpp"
#include "cli/figures/figure_scene.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/progress.hpp"
#include "cli/signals.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "core/stop.hpp"
#include "enumerate/walker.hpp"

#include <algorithm>
#include <atomic>
#include <iostream>

namespace pleat::cli {
namespace {

using draw::DrawArguments;
using draw::Drawn;
using draw::Format;
using draw::Scene;
using draw::thin_width_px;

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
  // Written after the walk and the clipping: tried before them, the saved walk
  // read by --from among the files not to replace (it is read later).
  if (!arguments.from_path.empty()) note_input_file(arguments.from_path, "region file");
  for (const std::string* output : {&arguments.output_path, &arguments.table_path}) refuse_unwritable_output(*output);
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
