// The SVG writer: a plot area in data coordinates, axes, a legend on the right.
#include "cli/figure.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

namespace pleat::cli {
namespace {

constexpr double left_margin = 52, top_margin = 14, bottom_margin = 44, legend_gap = 22, legend_width = 190;
constexpr double plot_width = 420;

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

struct LineStyle {
  double width;
  const char* dashes;  // "" for solid
};

LineStyle line_style(std::size_t layer) {
  static const LineStyle styles[] = {{1.5, ""}, {1.2, "5,2.5"}, {1.3, "0.5,2.6"}, {1.1, "7,2,1,2"}};
  return styles[layer % 4];
}

class Layout {
 public:
  explicit Layout(const Figure& f) : f_(f) {
    const double ratio = (f.y_max - f.y_min) / (f.x_max - f.x_min);
    height_ = std::clamp(plot_width * ratio, 220.0, 560.0);
  }
  double x(double value) const { return left_margin + (value - f_.x_min) / (f_.x_max - f_.x_min) * plot_width; }
  double y(double value) const { return top_margin + (f_.y_max - value) / (f_.y_max - f_.y_min) * height_; }
  double height() const { return height_; }

 private:
  const Figure& f_;
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
  out << "<g id=\"bent-hyperplanes\" clip-path=\"url(#plot-clip)\" fill=\"none\" stroke=\"#1a1a1a\" "
         "stroke-linecap=\"round\" stroke-linejoin=\"round\">\n";
  for (std::size_t layer = 0; layer < figure.layers; ++layer) {
    std::string path;
    for (const auto& s : figure.segments)
      if (s.layer == layer)
        path.append("M").append(number(layout.x(s.from.x))).append(",").append(number(layout.y(s.from.y)))
            .append("L").append(number(layout.x(s.to.x))).append(",").append(number(layout.y(s.to.y)));
    if (path.empty()) continue;
    const LineStyle style = line_style(layer);
    out << "<path class=\"layer-" << layer + 1 << "\" stroke-width=\"" << style.width << "\"";
    if (*style.dashes) out << " stroke-dasharray=\"" << style.dashes << "\"";
    out << " d=\"" << path << "\"/>\n";
  }
  out << "</g>\n";
}

void write_graph(const Figure& figure, const Layout& layout, std::ostream& out) {
  if (figure.graph.empty()) return;
  out << "<g id=\"graph\" clip-path=\"url(#plot-clip)\">\n<polyline fill=\"none\" stroke=\"#1a1a1a\" "
         "stroke-width=\"1.8\" stroke-linejoin=\"round\" points=\"";
  for (std::size_t i = 0; i < figure.graph.size(); ++i)
    out << (i ? " " : "") << number(layout.x(figure.graph[i].x)) << "," << number(layout.y(figure.graph[i].y));
  out << "\"/>\n";
  for (const auto& p : figure.breakpoints)
    out << "<circle class=\"breakpoint\" cx=\"" << number(layout.x(p.x)) << "\" cy=\"" << number(layout.y(p.y))
        << "\" r=\"3\" fill=\"#ffffff\" stroke=\"#1a1a1a\" stroke-width=\"1.3\"/>\n";
  out << "</g>\n";
}

void write_labels(const Figure& figure, const Layout& layout, std::ostream& out) {
  out << "<g id=\"labels\" font-family=\"DejaVu Sans Mono, monospace\" font-size=\"7\" text-anchor=\"middle\" "
         "fill=\"#111111\" stroke=\"#ffffff\" stroke-width=\"2.2\" stroke-opacity=\"0.85\" paint-order=\"stroke\">\n";
  for (const auto& polygon : figure.polygons)
    out << "<text x=\"" << number(layout.x(polygon.label.x)) << "\" y=\"" << number(layout.y(polygon.label.y) + 2.5)
        << "\">" << escape_xml(polygon.pattern) << "</text>\n";
  out << "</g>\n";
}

void write_axes(const Figure& figure, const Layout& layout, std::ostream& out) {
  const double bottom = top_margin + layout.height();
  out << "<g id=\"axes\" stroke=\"#1a1a1a\" fill=\"#1a1a1a\">\n";
  out << "<rect x=\"" << left_margin << "\" y=\"" << top_margin << "\" width=\"" << plot_width << "\" height=\""
      << number(layout.height()) << "\" fill=\"none\" stroke-width=\"0.9\"/>\n";
  for (double t : nice_ticks(figure.x_min, figure.x_max)) {
    const double px = layout.x(t);
    out << "<line x1=\"" << number(px) << "\" y1=\"" << number(bottom) << "\" x2=\"" << number(px) << "\" y2=\""
        << number(bottom + 4) << "\" stroke-width=\"0.9\"/>"
        << "<text x=\"" << number(px) << "\" y=\"" << number(bottom + 15) << "\" stroke=\"none\" "
        << "text-anchor=\"middle\">" << escape_xml(tick_text(t)) << "</text>\n";
  }
  for (double t : nice_ticks(figure.y_min, figure.y_max)) {
    const double py = layout.y(t);
    out << "<line x1=\"" << left_margin - 4 << "\" y1=\"" << number(py) << "\" x2=\"" << left_margin << "\" y2=\""
        << number(py) << "\" stroke-width=\"0.9\"/>"
        << "<text x=\"" << left_margin - 7 << "\" y=\"" << number(py + 3.5) << "\" stroke=\"none\" "
        << "text-anchor=\"end\">" << escape_xml(tick_text(t)) << "</text>\n";
  }
  out << "<text x=\"" << number(left_margin + plot_width / 2) << "\" y=\"" << number(bottom + 34)
      << "\" stroke=\"none\" text-anchor=\"middle\" font-size=\"12\">" << axis_label(figure.x_label) << "</text>\n";
  out << "<text transform=\"translate(14," << number(top_margin + layout.height() / 2)
      << ") rotate(-90)\" stroke=\"none\" text-anchor=\"middle\" font-size=\"12\">" << axis_label(figure.y_label)
      << "</text>\n";
  out << "</g>\n";
}

void write_legend(const Figure& figure, std::ostream& out) {
  const double x0 = left_margin + plot_width + legend_gap;
  double y = top_margin + 10;
  out << "<g id=\"legend\" fill=\"#1a1a1a\">\n";
  out << "<text x=\"" << x0 << "\" y=\"" << y << "\" font-weight=\"bold\">" << escape_xml(figure.legend_title)
      << "</text>\n";
  y += 8;
  for (const auto& swatch : figure.swatches) {
    out << "<rect x=\"" << x0 << "\" y=\"" << y << "\" width=\"14\" height=\"11\" fill=\""
        << figure.colours[swatch.colour] << "\" stroke=\"#1a1a1a\" stroke-width=\"0.5\"/>"
        << "<text x=\"" << x0 + 20 << "\" y=\"" << y + 9.5 << "\">" << escape_xml(swatch.text) << "</text>\n";
    y += 15;
  }
  if (figure.show_lines && figure.layers > 0 && figure.graph.empty()) {
    y += 10;
    out << "<text x=\"" << x0 << "\" y=\"" << y << "\" font-weight=\"bold\">Bent hyperplanes</text>\n";
    y += 6;
    for (std::size_t layer = 0; layer < figure.layers; ++layer) {
      const LineStyle style = line_style(layer);
      out << "<line x1=\"" << x0 << "\" y1=\"" << y + 5 << "\" x2=\"" << x0 + 26 << "\" y2=\"" << y + 5
          << "\" stroke=\"#1a1a1a\" stroke-linecap=\"round\" stroke-width=\"" << style.width << "\"";
      if (*style.dashes) out << " stroke-dasharray=\"" << style.dashes << "\"";
      out << "/><text x=\"" << x0 + 32 << "\" y=\"" << y + 9 << "\">layer " << layer + 1 << " neurons</text>\n";
      y += 15;
    }
  }
  if (!figure.breakpoints.empty()) {
    y += 10;
    out << "<circle cx=\"" << x0 + 7 << "\" cy=\"" << y + 4 << "\" r=\"3\" fill=\"#ffffff\" stroke=\"#1a1a1a\" "
        << "stroke-width=\"1.3\"/><text x=\"" << x0 + 20 << "\" y=\"" << y + 8 << "\">breakpoint</text>\n";
    y += 15;
  }
  y += 8;
  for (const auto& note : figure.notes) {
    y += 14;
    out << "<text x=\"" << x0 << "\" y=\"" << y << "\">" << escape_xml(note) << "</text>\n";
  }
  out << "</g>\n";
}

}  // namespace

std::string figure_svg(const Figure& figure) {
  const Layout layout(figure);
  const double legend_height = 40.0 + 15.0 * static_cast<double>(figure.swatches.size() + figure.layers) +
                               14.0 * static_cast<double>(figure.notes.size()) + 40;
  const double width = left_margin + plot_width + legend_gap + legend_width;
  const double height = std::max(top_margin + layout.height() + bottom_margin, legend_height);
  std::ostringstream out;
  out << "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
      << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << number(width) << "\" height=\"" << number(height)
      << "\" viewBox=\"0 0 " << number(width) << " " << number(height)
      << "\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\" font-size=\"10.5\">\n";
  out << "<title>linear regions drawn by pleat</title>\n";
  out << "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n";
  out << "<defs><clipPath id=\"plot-clip\"><rect x=\"" << left_margin << "\" y=\"" << top_margin << "\" width=\""
      << plot_width << "\" height=\"" << number(layout.height()) << "\"/></clipPath></defs>\n";
  out << "<rect id=\"plot-area\" x=\"" << left_margin << "\" y=\"" << top_margin << "\" width=\"" << plot_width
      << "\" height=\"" << number(layout.height()) << "\" fill=\"none\" data-view=\"" << figure.x_min << ","
      << figure.x_max << "," << figure.y_min << "," << figure.y_max << "\"/>\n";
  write_regions(figure, layout, out);
  if (figure.show_lines) write_lines(figure, layout, out);
  write_graph(figure, layout, out);
  if (figure.show_labels) write_labels(figure, layout, out);
  write_axes(figure, layout, out);
  write_legend(figure, out);
  out << "</svg>\n";
  return out.str();
}

}  // namespace pleat::cli
