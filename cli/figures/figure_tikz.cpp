// The TikZ writer: the same figure as figure_svg.cpp, in centimetres, using
// plain TikZ only (no libraries, no pgfplots), for \input in a paper.
#include "cli/figures/figure.hpp"

#include <algorithm>
#include <cctype>
#include <cstdio>
#include <sstream>

namespace pleat::cli {
namespace {

// The whole picture is 12 cm wide unless --size says otherwise: a one-column
// article's \linewidth is 345 pt = 12.13 cm. Text widths are estimated from
// Computer Modern's widths at these sizes (rounded up: a digit at \footnotesize
// is 4 pt = 0.14 cm), so the declared bounding box holds everything drawn.
constexpr double default_width_cm = 12.0;
constexpr double footnote_char_cm = 0.16, script_char_cm = 0.12, smallest_plot_cm = 2.0;

std::string number(double value) { return fixed_point_text(value, 3); }

std::string escape(const std::string& text) {
  std::string out;
  for (char c : text) {
    switch (c) {
      case '#': case '$': case '%': case '&': case '_': case '{': case '}': out += '\\'; out += c; break;
      case '|': out += "\\textbar{}"; break;
      case '~': out += "\\textasciitilde{}"; break;
      case '^': out += "\\textasciicircum{}"; break;
      case '\\': out += "\\textbackslash{}"; break;
      case '<': out += "\\textless{}"; break;
      case '>': out += "\\textgreater{}"; break;
      case '-': out += out.empty() || out.back() != '-' ? "-" : "{}-"; break;  // "--" is not an en dash
      default: out += c;
    }
  }
  return out;
}

std::string axis_label(const std::string& label) {
  std::size_t digits = label.size();
  while (digits > 0 && std::isdigit(static_cast<unsigned char>(label[digits - 1]))) --digits;
  // Appends only: GCC 12 warns falsely (-Wrestrict) on "literal" + std::string.
  std::string out = "$";
  out.append(label, 0, digits);
  if (digits < label.size()) out.append("_{").append(label, digits, std::string::npos).append("}");
  return out.append("$");
}

const char* dash_pattern(std::size_t layer) {
  static const char* patterns[] = {"line width=0.75pt", "line width=0.6pt, dash pattern=on 2.5pt off 1.25pt",
                                   "line width=0.65pt, line cap=round, dash pattern=on 0.25pt off 1.3pt",
                                   "line width=0.55pt, dash pattern=on 3.5pt off 1pt on 0.5pt off 1pt"};
  return patterns[layer % 4];
}

}  // namespace

// The key and the notes, top-down right of the plot.
template <class ColourName>
void write_legend_tikz(const Figure& figure, double plot_width_cm, double height_cm, double key_width,
                       const ColourName& colour_name, std::ostream& out) {
  const double lx = plot_width_cm + 0.6;
  double ly = height_cm - 0.1;
  // Headings in italics over a hairline (docs/figure-style.md).
  auto hairline = [&](double at) {
    out << "\\draw[pleatquiet, line width=0.2pt] (" << number(lx) << "," << number(at) << ") -- ++("
        << number(key_width) << ",0);\n";
  };
  out << "\\node[anchor=north west, inner sep=0pt, font=\\footnotesize\\itshape, text=pleatquiet] at (" << number(lx) << ","
      << number(ly) << ") {" << escape(figure.legend_title) << "};\n";
  hairline(ly - 0.36);
  ly -= 0.5 + 0.12;
  for (const auto& swatch : figure.swatches) {
    out << "\\filldraw[fill=" << colour_name(swatch.colour) << ", draw=pleatink!35, line width=0.3pt] (" << number(lx)
        << "," << number(ly) << ") rectangle ++(0.3,0.3);\n";
    out << "\\node[anchor=west, inner sep=0pt] at (" << number(lx + 0.6) << "," << number(ly + 0.15) << ") {"
        << escape(swatch.text) << "};\n";
    ly -= 0.45;
  }
  if (figure.show_lines && figure.layers > 0 && figure.graph.empty()) {
    ly -= 0.2;
    out << "\\node[anchor=west, inner sep=0pt, font=\\footnotesize\\itshape, text=pleatquiet] at (" << number(lx) << ","
        << number(ly + 0.15) << ") {bent hyperplanes};\n";
    hairline(ly - 0.06);
    ly -= 0.45 + 0.12;
    for (std::size_t layer = 0; layer < figure.layers; ++layer) {
      out << "\\draw[" << dash_pattern(layer) << "] (" << number(lx) << "," << number(ly + 0.15) << ") -- ++(0.8,0);\n";
      out << "\\node[anchor=west, inner sep=0pt] at (" << number(lx + 0.95) << "," << number(ly + 0.15)
          << ") {layer " << layer + 1 << " neurons};\n";
      ly -= 0.45;
    }
  }
  ly -= 0.2;
  for (const auto& note : figure.notes) {
    out << "\\node[anchor=west, inner sep=0pt, font=\\scriptsize, text=pleatquiet] at (" << number(lx) << ","
        << number(ly + 0.15) << ") {" << escape(note) << "};\n";
    ly -= 0.42;
  }
}

// Where everything goes, in cm, the plot area being (0,0)..(plot_width,
// plot_height); the bounding box extends left/right/below/above it.
struct TikzLayout {
  double plot_width = 0, plot_height = 0, left = 0, right = 0, below = 0, above = 0;
};

double longest(const std::vector<std::string>& texts) {
  std::size_t most = 0;
  for (const auto& text : texts) most = std::max(most, text.size());
  return static_cast<double>(most);
}

TikzLayout tikz_layout(const Figure& figure) {
  TikzLayout layout;
  // The axis 0.2 cm out, the tick label's inner seps (0.1 cm each side) and
  // the label (a math minus is 0.22 cm); the y label above the axis.
  double widest_tick = 0;
  for (double t : nice_ticks(figure.y_min, figure.y_max)) {
    double width = 0;
    for (char c : tick_text(t)) width += c == '-' ? 0.22 : 0.15;
    widest_tick = std::max(widest_tick, width);
  }
  layout.left = 0.5 + widest_tick;
  layout.below = 1.25;  // tick labels, then the x label on its own row
  layout.above = figure.title.empty() ? 0.65 : 0.9;
  if (figure.show_legend) {
    std::vector<std::string> swatch_texts{figure.legend_title, "bent hyperplanes", "layer 1 neurons   "};
    for (const auto& swatch : figure.swatches) swatch_texts.push_back("    " + swatch.text);
    layout.right = 0.6 + std::max(footnote_char_cm * longest(swatch_texts), script_char_cm * longest(figure.notes)) + 0.2;
  } else {
    layout.right = 0.4;  // half the last x tick label
  }
  const double width = figure.width > 0 ? figure.width : default_width_cm;
  layout.plot_width = std::max(smallest_plot_cm, width - layout.left - layout.right);
  if (figure.width > 0) layout.right = width - layout.left - layout.plot_width;
  const double ratio = (figure.y_max - figure.y_min) / (figure.x_max - figure.x_min);
  layout.plot_height = figure.height > 0 ? std::max(smallest_plot_cm, figure.height - layout.above - layout.below)
                                         : std::clamp(layout.plot_width * ratio, 4.2, 10.6);
  if (figure.height > 0) {
    layout.below = figure.height - layout.above - layout.plot_height;
  } else if (figure.show_legend) {  // a long key reaches below the plot
    const double rows = 1.0 + static_cast<double>(figure.swatches.size()) + 1.5 +
                        (figure.show_lines && figure.graph.empty() ? static_cast<double>(figure.layers) + 1.5 : 0.0);
    const double key_bottom = layout.plot_height - 0.1 - 0.45 * rows - 0.24 - 0.42 * static_cast<double>(figure.notes.size());
    layout.below = std::max(layout.below, 0.2 - key_bottom);
  }
  return layout;
}

std::string figure_tikz(const Figure& figure) {
  const TikzLayout layout = tikz_layout(figure);
  const double plot_width_cm = layout.plot_width, height_cm = layout.plot_height;
  auto x = [&](double v) { return number((v - figure.x_min) / (figure.x_max - figure.x_min) * plot_width_cm); };
  auto y = [&](double v) { return number((v - figure.y_min) / (figure.y_max - figure.y_min) * height_cm); };
  std::ostringstream out;
  out << "% Activation regions drawn by pleat. Needs \\usepackage{tikz}; use with \\input.\n";
  out << "\\begin{tikzpicture}[font=\\footnotesize]\n";
  out << "% " << number(layout.left + plot_width_cm + layout.right) << " cm x "
      << number(layout.below + height_cm + layout.above) << " cm: the bounding box below holds everything drawn\n";
  out << "\\useasboundingbox (" << number(-layout.left) << "," << number(-layout.below) << ") rectangle ("
      << number(plot_width_cm + layout.right) << "," << number(height_cm + layout.above) << ");\n";
  if (!figure.title.empty())
    out << "\\node[anchor=south west, inner sep=0pt, font=\\small] at (0," << number(height_cm + 0.3) << ") {"
        << escape(figure.title) << "};\n";
  out << "\\definecolor{pleatink}{HTML}{1F1D2B}\\definecolor{pleatquiet}{HTML}{5C5A66}\n";
  for (std::size_t i = 0; i < figure.colours.size(); ++i)
    out << "\\definecolor{pleatcolour" << static_cast<char>('a' + i % 26) << i / 26 << "}{HTML}{"
        << figure.colours[i].substr(1) << "}\n";
  auto colour_name = [](std::size_t i) {
    std::string name = "pleatcolour";
    name.push_back(static_cast<char>('a' + i % 26));
    return name.append(std::to_string(i / 26));
  };
  out << "\\begin{scope}\n\\clip (0,0) rectangle (" << number(plot_width_cm) << "," << number(height_cm) << ");\n";
  for (const auto& polygon : figure.polygons) {
    out << "\\fill[" << colour_name(polygon.colour) << (figure.graph.empty() ? "" : ", opacity=0.45") << "] ";
    for (const auto& p : polygon.vertices) out << "(" << x(p.x) << "," << y(p.y) << ") -- ";
    out << "cycle; % region " << polygon.region << "\n";
  }
  if (figure.show_lines)
    for (std::size_t layer = 0; layer < figure.layers; ++layer) {
      bool any = false;
      for (const auto& s : figure.segments) {
        if (s.layer != layer) continue;
        if (!any) out << "\\draw[pleatink, " << dash_pattern(layer) << "]";
        any = true;
        out << "\n  (" << x(s.from.x) << "," << y(s.from.y) << ") -- (" << x(s.to.x) << "," << y(s.to.y) << ")";
      }
      if (any) out << ";\n";
    }
  if (!figure.graph.empty()) {
    out << "\\draw[line width=0.9pt, line join=round] ";
    for (std::size_t i = 0; i < figure.graph.size(); ++i)
      out << (i ? " -- " : "") << "(" << x(figure.graph[i].x) << "," << y(figure.graph[i].y) << ")";
    out << ";\n";
    for (const auto& p : figure.breakpoints)
      out << "\\filldraw[fill=white, draw=black, line width=0.6pt] (" << x(p.x) << "," << y(p.y)
          << ") circle (1.6pt);\n";
  }
  if (figure.show_labels)
    for (const auto& polygon : figure.polygons) {
      std::vector<FigurePoint> corners;  // in cm, inside the plot area
      auto cm_x = [&](double v) { return std::clamp((v - figure.x_min) / (figure.x_max - figure.x_min), 0.0, 1.0) * plot_width_cm; };
      auto cm_y = [&](double v) { return std::clamp((v - figure.y_min) / (figure.y_max - figure.y_min), 0.0, 1.0) * height_cm; };
      for (const auto& p : polygon.vertices) corners.push_back(FigurePoint{cm_x(p.x), cm_y(p.y)});
      // \tiny typewriter: 5 pt, 0.525 em a character.
      const std::string text = fitting_label(corners, FigurePoint{cm_x(polygon.label.x), cm_y(polygon.label.y)}, polygon,
                                             0.1, 0.2);
      if (text.empty()) continue;
      out << "\\node[font=\\ttfamily\\tiny, inner sep=0.5pt, fill=white, fill opacity=0.7, text opacity=1] at ("
          << x(polygon.label.x) << "," << y(polygon.label.y) << ") {" << escape(text) << "};\n";
    }
  out << "\\end{scope}\n";
  // Axes: range frames detached 0.2 cm from the plot, ticks toward the data,
  // the y label above its axis and the x label under the tick labels at the
  // right end (docs/figure-style.md), so no label meets a tick label.
  const auto x_ticks = nice_ticks(figure.x_min, figure.x_max), y_ticks = nice_ticks(figure.y_min, figure.y_max);
  const char* axis = "\\draw[pleatink, line width=0.4pt]";
  if (!x_ticks.empty()) out << axis << " (" << x(x_ticks.front()) << ",-0.2) -- (" << x(x_ticks.back()) << ",-0.2);\n";
  for (double t : x_ticks)
    out << axis << " (" << x(t) << ",-0.2) -- (" << x(t) << ",-0.08) node[pos=0, below, text=pleatquiet] {$"
        << tick_text(t) << "$};\n";
  if (!y_ticks.empty()) out << axis << " (-0.2," << y(y_ticks.front()) << ") -- (-0.2," << y(y_ticks.back()) << ");\n";
  for (double t : y_ticks)
    out << axis << " (-0.2," << y(t) << ") -- (-0.08," << y(t) << ") node[pos=0, left, text=pleatquiet] {$"
        << tick_text(t) << "$};\n";
  out << "\\node[anchor=north east, text=pleatink] at (" << number(plot_width_cm) << ",-0.75) {"
      << axis_label(figure.x_label) << " $\\rightarrow$};\n";
  out << "\\node[anchor=south, text=pleatink] at (-0.2," << number(height_cm + 0.15) << ") {"
      << axis_label(figure.y_label) << " $\\uparrow$};\n";
  if (figure.show_legend)
    write_legend_tikz(figure, plot_width_cm, height_cm, std::max(2.0, layout.right - 0.8), colour_name, out);
  out << "\\end{tikzpicture}\n";
  return out.str();
}

}  // namespace pleat::cli
