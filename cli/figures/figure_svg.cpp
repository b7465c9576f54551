// The SVG writer: a plot area in data coordinates, detached range-frame axes,
// a key on the right. The look is specified in docs/figure-style.md.
#include "cli/figures/figure.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>

namespace pleat::cli {
namespace {

// The axes sit axis_offset px away from the plot area (no closed frame): the
// regions' own edges bound the picture. Tick labels are sized by estimate.
constexpr double top_margin = 30, bottom_margin = 48, legend_gap = 26, legend_width = 190;
constexpr double default_plot_width = 420, smallest_plot = 60, axis_offset = 7, tick_length = 4, digit_width = 6.4;
constexpr double label_size = 7, label_char_width = 0.6 * label_size;  // DejaVu Sans Mono: 0.6 em a character
constexpr const char* ink = ink_colour;
constexpr const char* quiet = quiet_colour;

// Left margin: room for the widest y tick label, its gap and the axis.
double left_margin_for(const Figure& f) {
  std::size_t widest = 1;
  for (double t : nice_ticks(f.y_min, f.y_max)) widest = std::max(widest, tick_text(t).size());
  return std::max(34.0, axis_offset + tick_length + 6 + digit_width * static_cast<double>(widest) + 8);
}

std::string number(double value) { return fixed_point_text(value, 2); }

// "x2" -> x with a subscript 2, in italics.
std::string axis_label(const std::string& label) {
  std::size_t digits = label.size();
  while (digits > 0 && std::isdigit(static_cast<unsigned char>(label[digits - 1]))) --digits;
  // Appends only: GCC 12 warns falsely (-Wrestrict) on "literal" + std::string.
  std::string out = "<tspan font-style=\"italic\">";
  out.append(escape_xml(label.substr(0, digits))).append("</tspan>");
  if (digits < label.size())
    out.append("<tspan font-size=\"8\" dy=\"3\">").append(escape_xml(label.substr(digits))).append("</tspan>");
  return out;
}

LayerLineStyle line_style(std::size_t layer) { return layer_line_style(layer); }

// Right of the plot: the key, or a small pad without it.
double right_part(const Figure& f) { return f.show_legend ? legend_gap + legend_width : 24.0; }

// The plot area: 420 px wide and as tall as the view's aspect asks (within
// 220..560 px), or what --size leaves after the margins and the key.
class Layout {
 public:
  explicit Layout(const Figure& f) : f_(f), left_(left_margin_for(f)) {
    plot_width_ = f.width > 0 ? std::max(smallest_plot, f.width - left_ - right_part(f)) : default_plot_width;
    const double ratio = (f.y_max - f.y_min) / (f.x_max - f.x_min);
    height_ = f.height > 0 ? std::max(smallest_plot, f.height - top_margin - bottom_margin)
                           : std::clamp(plot_width_ * ratio, 220.0, 560.0);
  }
  double x(double value) const { return left_ + (value - f_.x_min) / (f_.x_max - f_.x_min) * plot_width_; }
  double y(double value) const { return top_margin + (f_.y_max - value) / (f_.y_max - f_.y_min) * height_; }
  double height() const { return height_; }
  double left() const { return left_; }
  double plot_width() const { return plot_width_; }

 private:
  const Figure& f_;
  double left_;
  double plot_width_;
  double height_;
};

void write_regions(const Figure& figure, const Layout& layout, std::ostream& out) {
  // Behind a graph the bands are tinted only, so the curve stays the figure's subject.
  out << "<g id=\"regions\" clip-path=\"url(#plot-clip)\" stroke-width=\"0.6\" stroke-linejoin=\"round\""
      << (figure.graph.empty() ? "" : " fill-opacity=\"0.45\" stroke-opacity=\"0.45\"") << ">\n";
  for (const auto& polygon : figure.polygons) {
    const std::string& colour = figure.colours[polygon.colour];
    out << "<polygon id=\"region-" << polygon.region << "\" data-pattern=\"" << escape_xml(polygon.pattern)
        << "\" fill=\"" << colour << "\" stroke=\"" << colour << "\" points=\"";
    for (std::size_t i = 0; i < polygon.vertices.size(); ++i)
      out << (i ? " " : "") << number(layout.x(polygon.vertices[i].x)) << ","
          << number(layout.y(polygon.vertices[i].y));
    out << "\"/>\n";
  }
  out << "</g>\n";
}

void write_lines(const Figure& figure, const Layout& layout, std::ostream& out) {
  out << "<g id=\"bent-hyperplanes\" clip-path=\"url(#plot-clip)\" fill=\"none\" stroke=\"" << ink << "\" "
         "stroke-linecap=\"round\" stroke-linejoin=\"round\">\n";
  for (std::size_t layer = 0; layer < figure.layers; ++layer) {
    std::string path;
    for (const auto& s : figure.segments)
      if (s.layer == layer)
        path.append("M").append(number(layout.x(s.from.x))).append(",").append(number(layout.y(s.from.y)))
            .append("L").append(number(layout.x(s.to.x))).append(",").append(number(layout.y(s.to.y)));
    if (path.empty()) continue;
    const LayerLineStyle style = line_style(layer);
    out << "<path class=\"layer-" << layer + 1 << "\" stroke-width=\"" << style.width << "\"";
    if (*style.dashes) out << " stroke-dasharray=\"" << style.dashes << "\"";
    out << " d=\"" << path << "\"/>\n";
  }
  out << "</g>\n";
}

void write_graph(const Figure& figure, const Layout& layout, std::ostream& out) {
  if (figure.graph.empty()) return;
  out << "<g id=\"graph\" clip-path=\"url(#plot-clip)\">\n<polyline fill=\"none\" stroke=\"" << ink << "\" "
         "stroke-width=\"1.8\" stroke-linejoin=\"round\" points=\"";
  for (std::size_t i = 0; i < figure.graph.size(); ++i)
    out << (i ? " " : "") << number(layout.x(figure.graph[i].x)) << "," << number(layout.y(figure.graph[i].y));
  out << "\"/>\n";
  for (const auto& p : figure.breakpoints)
    out << "<circle class=\"breakpoint\" cx=\"" << number(layout.x(p.x)) << "\" cy=\"" << number(layout.y(p.y))
        << "\" r=\"3\" fill=\"#ffffff\" stroke=\"" << ink << "\" stroke-width=\"1.3\"/>\n";
  out << "</g>\n";
}

void write_labels(const Figure& figure, const Layout& layout, std::ostream& out) {
  out << "<g id=\"labels\" font-family=\"DejaVu Sans Mono, monospace\" font-size=\"7\" text-anchor=\"middle\" "
         "fill=\"#111111\" stroke=\"#ffffff\" stroke-width=\"2.2\" stroke-opacity=\"0.85\" paint-order=\"stroke\">\n";
  for (const auto& polygon : figure.polygons) {
    // In pixels, clipped to the plot area (a label must sit inside the view).
    std::vector<FigurePoint> pixels;
    for (const auto& p : polygon.vertices)
      pixels.push_back(FigurePoint{std::clamp(layout.x(p.x), layout.left(), layout.left() + layout.plot_width()),
                                   std::clamp(layout.y(p.y), top_margin, top_margin + layout.height())});
    const FigurePoint centre{layout.x(polygon.label.x), layout.y(polygon.label.y)};
    const std::string text = fitting_label(pixels, centre, polygon, label_char_width, label_size);
    if (text.empty()) continue;
    out << "<text class=\"" << (text == polygon.pattern ? "pattern" : "number") << "\" x=\"" << number(centre.x)
        << "\" y=\"" << number(centre.y + 2.5) << "\">" << escape_xml(text) << "</text>\n";
  }
  out << "</g>\n";
}

// Range frame: each axis is a line detached from the plot area, running from
// the first to the last round tick, ticks pointing toward the data. The
// y label sits horizontally above its axis and the x label under the tick
// labels at the right end, so neither can meet a tick label.
void write_axes(const Figure& figure, const Layout& layout, std::ostream& out) {
  const double bottom = top_margin + layout.height();
  const double axis_y = bottom + axis_offset, axis_x = layout.left() - axis_offset;
  const auto x_ticks = nice_ticks(figure.x_min, figure.x_max), y_ticks = nice_ticks(figure.y_min, figure.y_max);
  out << "<g id=\"axes\" stroke=\"" << ink << "\" fill=\"" << quiet << "\" stroke-width=\"0.8\">\n";
  if (!x_ticks.empty())
    out << "<line x1=\"" << number(layout.x(x_ticks.front())) << "\" y1=\"" << number(axis_y) << "\" x2=\""
        << number(layout.x(x_ticks.back())) << "\" y2=\"" << number(axis_y) << "\"/>\n";
  for (double t : x_ticks) {
    const double px = layout.x(t);
    out << "<line x1=\"" << number(px) << "\" y1=\"" << number(axis_y) << "\" x2=\"" << number(px) << "\" y2=\""
        << number(axis_y - tick_length) << "\"/>"
        << "<text x=\"" << number(px) << "\" y=\"" << number(axis_y + 13) << "\" stroke=\"none\" "
        << "text-anchor=\"middle\">" << escape_xml(tick_text(t)) << "</text>\n";
  }
  if (!y_ticks.empty())
    out << "<line x1=\"" << number(axis_x) << "\" y1=\"" << number(layout.y(y_ticks.front())) << "\" x2=\""
        << number(axis_x) << "\" y2=\"" << number(layout.y(y_ticks.back())) << "\"/>\n";
  for (double t : y_ticks) {
    const double py = layout.y(t);
    out << "<line x1=\"" << number(axis_x) << "\" y1=\"" << number(py) << "\" x2=\"" << number(axis_x + tick_length)
        << "\" y2=\"" << number(py) << "\"/>"
        << "<text x=\"" << number(axis_x - 5) << "\" y=\"" << number(py + 3.5) << "\" stroke=\"none\" "
        << "text-anchor=\"end\">" << escape_xml(tick_text(t)) << "</text>\n";
  }
  out << "<text x=\"" << number(layout.left() + layout.plot_width()) << "\" y=\"" << number(axis_y + 32)
      << "\" stroke=\"none\" fill=\"" << ink << "\" text-anchor=\"end\" font-size=\"12.5\">"
      << axis_label(figure.x_label) << " \u2192</text>\n";
  out << "<text x=\"" << number(axis_x) << "\" y=\"" << number(top_margin - 12) << "\" stroke=\"none\" fill=\"" << ink
      << "\" text-anchor=\"middle\" font-size=\"12.5\">" << axis_label(figure.y_label) << " \u2191</text>\n";
  out << "</g>\n";
}

// The key: headings in italic small text over a hairline, swatches as
// squares (a region is an area), line samples as long as a tick row.
void write_legend(const Figure& figure, const Layout& layout, std::ostream& out) {
  const double x0 = layout.left() + layout.plot_width() + legend_gap;
  double y = top_margin + 10;
  auto heading = [&](const std::string& text) {
    out << "<text x=\"" << x0 << "\" y=\"" << y << "\" font-style=\"italic\" fill=\"" << quiet << "\">"
        << escape_xml(text) << "</text><line x1=\"" << x0 << "\" y1=\"" << y + 4 << "\" x2=\"" << x0 + 150
        << "\" y2=\"" << y + 4 << "\" stroke=\"" << quiet << "\" stroke-width=\"0.5\"/>\n";
  };
  out << "<g id=\"legend\" fill=\"" << ink << "\">\n";
  heading(figure.legend_title);
  y += 10;
  for (const auto& swatch : figure.swatches) {
    out << "<rect x=\"" << x0 << "\" y=\"" << y << "\" width=\"11\" height=\"11\" fill=\""
        << figure.colours[swatch.colour] << "\" stroke=\"" << ink << "\" stroke-opacity=\"0.35\" stroke-width=\"0.5\"/>"
        << "<text x=\"" << x0 + 18 << "\" y=\"" << y + 9.5 << "\">" << escape_xml(swatch.text) << "</text>\n";
    y += 15;
  }
  if (figure.show_lines && figure.layers > 0 && figure.graph.empty()) {
    y += 14;
    heading("bent hyperplanes");
    y += 8;
    for (std::size_t layer = 0; layer < figure.layers; ++layer) {
      const LayerLineStyle style = line_style(layer);
      out << "<line x1=\"" << x0 << "\" y1=\"" << y + 5 << "\" x2=\"" << x0 + 26 << "\" y2=\"" << y + 5
          << "\" stroke=\"" << ink << "\" stroke-linecap=\"round\" stroke-width=\"" << style.width << "\"";
      if (*style.dashes) out << " stroke-dasharray=\"" << style.dashes << "\"";
      out << "/><text x=\"" << x0 + 32 << "\" y=\"" << y + 9 << "\">layer " << layer + 1 << " neurons</text>\n";
      y += 15;
    }
  }
  if (!figure.breakpoints.empty()) {
    y += 10;
    out << "<circle cx=\"" << x0 + 7 << "\" cy=\"" << y + 4 << "\" r=\"3\" fill=\"#ffffff\" stroke=\"" << ink << "\" "
        << "stroke-width=\"1.3\"/><text x=\"" << x0 + 20 << "\" y=\"" << y + 8 << "\">breakpoint</text>\n";
    y += 15;
  }
  y += 8;
  for (const auto& note : figure.notes) {
    y += 13;
    out << "<text x=\"" << x0 << "\" y=\"" << y << "\" font-size=\"9.5\" fill=\"" << quiet << "\">" << escape_xml(note)
        << "</text>\n";
  }
  out << "</g>\n";
}

// The least width of a convex polygon: over its edges, the farthest vertex
// from the edge's line; the least of those.
double least_width(const std::vector<FigurePoint>& vertices) {
  double least = std::numeric_limits<double>::infinity();
  for (std::size_t i = 0; i < vertices.size(); ++i) {
    const FigurePoint& a = vertices[i];
    const FigurePoint& b = vertices[(i + 1) % vertices.size()];
    const double length = std::hypot(b.x - a.x, b.y - a.y);
    if (length == 0) continue;
    double farthest = 0;
    for (const auto& p : vertices)
      farthest = std::max(farthest, std::abs((b.x - a.x) * (p.y - a.y) - (b.y - a.y) * (p.x - a.x)) / length);
    least = std::min(least, farthest);
  }
  return vertices.size() < 3 ? 0 : least;
}

}  // namespace

// Layer 1's hyperplanes are straight and cut the whole view: heaviest, solid.
// Deeper layers bend on them and are drawn lighter: dashed, dotted, dash-dot.
LayerLineStyle layer_line_style(std::size_t layer) {
  static const LayerLineStyle styles[] = {{1.6, ""}, {1.15, "5,2.5"}, {1.3, "0.4,2.6"}, {1.0, "7,2,1,2"}};
  return styles[layer % 4];
}

std::size_t thin_regions_svg(const Figure& figure, double min_width_px) {
  const Layout layout(figure);
  std::size_t thin = 0;
  for (const auto& polygon : figure.polygons) {
    std::vector<FigurePoint> pixels;
    for (const auto& p : polygon.vertices) pixels.push_back(FigurePoint{layout.x(p.x), layout.y(p.y)});
    if (least_width(pixels) < min_width_px) ++thin;
  }
  return thin;
}

std::string figure_svg(const Figure& figure) {
  const Layout layout(figure);
  const double legend_height = 40.0 + 15.0 * static_cast<double>(figure.swatches.size() + figure.layers) +
                               14.0 * static_cast<double>(figure.notes.size()) + 40;
  const double width = figure.width > 0 ? figure.width : layout.left() + layout.plot_width() + right_part(figure);
  const double height = figure.height > 0 ? figure.height
                                          : std::max(top_margin + layout.height() + bottom_margin,
                                                     figure.show_legend ? legend_height : 0.0);
  std::ostringstream out;
  out << "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
      << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << number(width) << "\" height=\"" << number(height)
      << "\" viewBox=\"0 0 " << number(width) << " " << number(height)
      << "\" font-family=\"Charter, 'Bitstream Charter', 'DejaVu Serif', Georgia, serif\" font-size=\"10.5\">\n";
  out << "<title>activation regions drawn by pleat</title>\n";
  out << "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n";
  out << "<defs><clipPath id=\"plot-clip\"><rect x=\"" << layout.left() << "\" y=\"" << top_margin << "\" width=\""
      << number(layout.plot_width()) << "\" height=\"" << number(layout.height()) << "\"/></clipPath></defs>\n";
  out << "<rect id=\"plot-area\" x=\"" << layout.left() << "\" y=\"" << top_margin << "\" width=\"" << number(layout.plot_width())
      << "\" height=\"" << number(layout.height()) << "\" fill=\"none\" data-view=\"" << figure.x_min << ","
      << figure.x_max << "," << figure.y_min << "," << figure.y_max << "\"/>\n";
  write_regions(figure, layout, out);
  if (figure.show_lines) write_lines(figure, layout, out);
  write_graph(figure, layout, out);
  if (figure.show_labels) write_labels(figure, layout, out);
  write_axes(figure, layout, out);
  if (figure.show_legend) write_legend(figure, layout, out);
  if (!figure.title.empty())
    out << "<text id=\"title\" x=\"" << number(layout.left() + layout.plot_width() / 2) << "\" y=\"" << top_margin - 12
        << "\" text-anchor=\"middle\" font-size=\"12\" fill=\""
        << ink << "\">" << escape_xml(figure.title) << "</text>\n";
  out << "</svg>\n";
  return out.str();
}

}  // namespace pleat::cli
