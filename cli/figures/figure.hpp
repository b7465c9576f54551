// Figures of a network's regions: a plain description (in data coordinates,
// already decided exactly by the caller) and its writers, standalone SVG and
// TikZ/PGF. The writers only lay out and print; nothing here decides geometry.
#pragma once

#include <cstddef>
#include <string>
#include <utility>
#include <vector>

namespace pleat::cli {

struct FigurePoint {
  double x = 0, y = 0;
};

struct FigurePolygon {
  std::size_t region = 0;             // region id (its line in the walk)
  std::string pattern;                // spec notation
  std::vector<FigurePoint> vertices;  // counter-clockwise
  std::size_t colour = 0;             // index into Figure::colours
  FigurePoint label;                  // where the label goes (inside)
  std::string number;                 // the region's number in the side table
};

// A piece of a bent hyperplane; layer is 0-based.
struct FigureSegment {
  FigurePoint from, to;
  std::size_t layer = 0;
};

struct FigureSwatch {
  std::size_t colour = 0;
  std::string text;
};

struct Figure {
  double x_min = 0, x_max = 1, y_min = 0, y_max = 1;  // the view, data coordinates
  std::string x_label, y_label;                        // plain text; digits after the letter become subscripts
  std::vector<std::string> colours;                    // "#rrggbb"
  std::vector<FigurePolygon> polygons;
  std::vector<FigureSegment> segments;
  std::size_t layers = 0;  // hidden ReLU layers (line styles in the legend)
  std::string legend_title;
  std::vector<FigureSwatch> swatches;
  std::vector<std::string> notes;  // counts, shown under the legend
  std::string title;               // plain text over the plot; none when empty
  bool show_lines = true;
  bool show_labels = false;
  bool show_legend = true;  // the key and the notes, right of the plot
  // The whole picture's size in the writer's unit (SVG: px, TikZ: cm), the
  // plot area taking what the margins and the key leave; 0: automatic.
  double width = 0, height = 0;
  // One input: the graph of the network (breakpoints marked) over bands.
  std::vector<FigurePoint> graph;
  std::vector<FigurePoint> breakpoints;
};

// A standalone SVG document. The plot area carries id="plot-area" and
// data-view="xmin,xmax,ymin,ymax"; each region is <polygon id="region-ID"
// data-pattern=... fill=...>, so tests can map data points to pixels.
std::string figure_svg(const Figure& figure);

// How many regions' polygons are narrower than min_width_px in the SVG the
// figure makes (width: the least distance between two parallel lines
// enclosing the polygon, after clipping to the plot area): regions a reader
// cannot see.
std::size_t thin_regions_svg(const Figure& figure, double min_width_px);

// --size W,H: each a positive number with a unit, cm or px (96 px to the
// inch); "12,8cm" gives both the last one's unit.
struct FigureSize {
  double width_cm = 0, height_cm = 0;
};
// Throws input_error naming --size for anything else, or a side outside
// 3-200 cm.
[[nodiscard]] FigureSize parse_figure_size(const std::string& text);


// A tikzpicture for \input in a LaTeX document that loads tikz (no other
// package or TikZ library needed).
std::string figure_tikz(const Figure& figure);

// Our palettes, derived in OKLCh by the rules in docs/figure-style.md.
// Categorical: six colours on a lightness ladder (CIE L* at least 6 apart, so
// they stay apart in greyscale and for colour-blind readers), hues a golden
// angle apart. Sequential: lightness falls monotonically with t.
const std::vector<std::string>& categorical_palette();
std::string sequential_colour(double t);  // t in [0, 1]
std::string bar_colour();                 // the survey histogram's bars
inline constexpr const char* ink_colour = "#1f1d2b";    // near-black with a blue cast: lines, text
inline constexpr const char* quiet_colour = "#5c5a66";  // secondary text: notes, tick labels

// A bent hyperplane's line by its layer (0-based): layer 1 solid and
// heaviest, then dashed, dotted, dash-dot (repeating); width in px.
struct LayerLineStyle {
  double width;
  const char* dashes;  // SVG stroke-dasharray; "" for solid
};
LayerLineStyle layer_line_style(std::size_t layer);

// With --labels each region shows its pattern where a box of that size
// (half-width, half-height in the writer's unit) centred on the label point
// fits inside the polygon, else its number where that fits, else nothing.
// vertices: the polygon in the writer's coordinates (convex, either
// orientation). Returns the text to write ("" for none).
std::string fitting_label(const std::vector<FigurePoint>& vertices, FigurePoint centre, const FigurePolygon& polygon,
                          double char_width, double text_height);

// Tick positions at 1, 2 or 5 times a power of ten, 4 to 8 of them in [lo, hi].
std::vector<double> nice_ticks(double lo, double hi);

// The shortest plain decimal that reads back as the value, for ticks ("0.5",
// "-2", "800"; never exponent notation).
std::string tick_text(double value);

// Text for SVG/XML content and attributes (&, <, >, " escaped).
std::string escape_xml(const std::string& text);

// value with `decimals` digits after the point, trailing zeros and a bare
// point dropped, "-0" written "0": coordinates in SVG and TikZ output.
std::string fixed_point_text(double value, int decimals);

}  // namespace pleat::cli
