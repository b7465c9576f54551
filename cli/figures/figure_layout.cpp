// Palettes, ticks and the --size option shared by the figure writers.
#include "cli/figures/figure.hpp"

#include "core/errors.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>

namespace pleat::cli {

namespace {

// OKLab (L, a, b) to an sRGB hex string. Matrices: B. Ottosson, "A perceptual
// colour space for image processing" (2020), the published OKLab definition.
// Out-of-gamut colours lose chroma (hue and lightness kept) until they fit.
bool oklab_to_srgb(double L, double a, double b, int channel[3]) {
  const double l_ = L + 0.3963377774 * a + 0.2158037573 * b;
  const double m_ = L - 0.1055613458 * a - 0.0638541728 * b;
  const double s_ = L - 0.0894841775 * a - 1.2914855480 * b;
  const double l = l_ * l_ * l_, m = m_ * m_ * m_, s = s_ * s_ * s_;
  const double linear[3] = {4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
                            -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
                            -0.0041960863 * l - 0.7034186147 * m + 1.7076147010 * s};
  for (int c = 0; c < 3; ++c) {
    if (linear[c] < -1e-4 || linear[c] > 1 + 1e-4) return false;
    const double v = std::clamp(linear[c], 0.0, 1.0);
    const double encoded = v <= 0.0031308 ? 12.92 * v : 1.055 * std::pow(v, 1 / 2.4) - 0.055;
    channel[c] = static_cast<int>(std::lround(255 * encoded));
  }
  return true;
}

// A colour given by OKLCh: lightness L in [0, 1], chroma, hue in degrees.
std::string oklch_colour(double L, double chroma, double hue_degrees) {
  const double hue = hue_degrees * 3.14159265358979323846 / 180;
  int channel[3] = {0, 0, 0};
  for (double c = chroma; c >= 0; c -= 0.005)
    if (oklab_to_srgb(L, c * std::cos(hue), c * std::sin(hue), channel)) break;
  char text[8];
  std::snprintf(text, sizeof text, "#%02x%02x%02x", channel[0], channel[1], channel[2]);
  return text;
}

}  // namespace

const std::vector<std::string>& categorical_palette() {
  // The rule (docs/figure-style.md): colour k of six has OKLab lightness
  // 0.96 - 0.065 k and hue 290 + 137.5 k degrees (the golden angle, so
  // consecutive colours sit far apart on the hue circle), chroma 0.06. The
  // lightness ladder alone separates every pair (CIE L* at least 6 apart,
  // checked by tests/reference/draw_plane_test.py), so greyscale prints and
  // readers with a colour-vision deficiency, who keep lightness, still tell
  // neighbours apart; hue is a second, redundant cue.
  static const std::vector<std::string> palette = [] {
    std::vector<std::string> colours;
    for (int k = 0; k < 6; ++k) colours.push_back(oklch_colour(0.96 - 0.065 * k, 0.06, 290 + 137.5 * k));
    return colours;
  }();
  return palette;
}

std::string sequential_colour(double t) {
  // One ramp in OKLCh: lightness falls linearly (0.97 to 0.55, so black lines
  // stay visible on the darkest step), chroma grows, hue turns from straw
  // (100 degrees) to plum (340): order reads from lightness alone.
  t = std::clamp(std::isfinite(t) ? t : 0.0, 0.0, 1.0);
  return oklch_colour(0.97 - 0.42 * t, 0.03 + 0.09 * t, 100 + 240 * t);
}

// The darkest categorical step: bars of the survey histogram.
std::string bar_colour() { return oklch_colour(0.52, 0.08, 250); }

std::vector<double> nice_ticks(double lo, double hi) {
  std::vector<double> ticks;
  if (!(hi > lo)) return ticks;
  const double span = hi - lo;
  double step = std::pow(10.0, std::floor(std::log10(span)));
  for (double factor : {1.0, 0.5, 0.2, 0.1, 0.05}) {
    const double candidate = step * factor;
    if (span / candidate >= 3.5) {
      step = candidate;
      break;
    }
  }
  for (double t = std::ceil(lo / step - 1e-9) * step; t <= hi + step * 1e-9; t += step)
    ticks.push_back(std::abs(t) < step * 1e-9 ? 0.0 : t);
  return ticks;
}

std::string tick_text(double value) {
  // Plain decimals, never exponent notation ("800", "0.05", "-2.5"): the
  // fewest digits after the point that read back as the value.
  for (int decimals = 0; decimals <= 12; ++decimals) {
    const std::string text = fixed_point_text(value, decimals);
    if (std::abs(std::strtod(text.c_str(), nullptr) - value) <= 1e-9 * std::max(1.0, std::abs(value))) return text;
  }
  return fixed_point_text(value, 12);
}

namespace {

// p inside the convex polygon (or on its boundary), whatever its orientation.
bool is_inside_convex(const std::vector<FigurePoint>& vertices, FigurePoint p) {
  int sign = 0;
  for (std::size_t i = 0; i < vertices.size(); ++i) {
    const FigurePoint& a = vertices[i];
    const FigurePoint& b = vertices[(i + 1) % vertices.size()];
    const double cross = (b.x - a.x) * (p.y - a.y) - (b.y - a.y) * (p.x - a.x);
    const int s = cross > 0 ? 1 : cross < 0 ? -1 : 0;
    if (s == 0) continue;
    if (sign != 0 && s != sign) return false;
    sign = s;
  }
  return true;
}

bool box_fits(const std::vector<FigurePoint>& vertices, FigurePoint centre, double half_width, double half_height) {
  for (double dx : {-half_width, half_width})
    for (double dy : {-half_height, half_height})
      if (!is_inside_convex(vertices, FigurePoint{centre.x + dx, centre.y + dy})) return false;
  return true;
}

}  // namespace

std::string fitting_label(const std::vector<FigurePoint>& vertices, FigurePoint centre, const FigurePolygon& polygon,
                          double char_width, double text_height) {
  for (const std::string* text : {&polygon.pattern, &polygon.number})
    if (!text->empty() &&
        box_fits(vertices, centre, (static_cast<double>(text->size()) + 0.6) * char_width / 2, 0.6 * text_height))
      return *text;
  return "";
}

std::string escape_xml(const std::string& text) {
  std::string out;
  for (char c : text) {
    if (c == '<') out += "&lt;";
    else if (c == '>') out += "&gt;";
    else if (c == '&') out += "&amp;";
    else if (c == '"') out += "&quot;";
    else out += c;
  }
  return out;
}

std::string fixed_point_text(double value, int decimals) {
  char text[48];
  std::snprintf(text, sizeof text, "%.*f", decimals, value);
  std::string out = text;
  // Trailing zeros only after a decimal point ("10" stays "10").
  if (out.find('.') != std::string::npos) {
    while (out.back() == '0') out.pop_back();
    if (out.back() == '.') out.pop_back();
  }
  return out == "-0" ? "0" : out;
}

FigureSize parse_figure_size(const std::string& text) {
  const std::string usage = "--size: expected W,H with a unit, cm or px (12cm,8cm or 600,400px), found '" + text + "'";
  const std::size_t comma = text.find(',');
  if (comma == std::string::npos || text.find(',', comma + 1) != std::string::npos) throw input_error(usage);
  std::string parts[2] = {text.substr(0, comma), text.substr(comma + 1)};
  auto unit_of = [](const std::string& part) {
    for (const char* unit : {"cm", "px"})
      if (part.size() > 2 && part.compare(part.size() - 2, 2, unit) == 0) return std::string(unit);
    return std::string();
  };
  const std::string last_unit = unit_of(parts[1]);
  if (last_unit.empty()) throw input_error(usage);
  double cm[2];
  for (int k = 0; k < 2; ++k) {
    std::string unit = unit_of(parts[k]);
    std::string digits = unit.empty() ? parts[k] : parts[k].substr(0, parts[k].size() - 2);
    if (unit.empty()) unit = last_unit;
    char* end = nullptr;
    const double value = std::strtod(digits.c_str(), &end);
    if (digits.empty() || end != digits.c_str() + digits.size() || !std::isfinite(value)) throw input_error(usage);
    cm[k] = unit == "cm" ? value : value * 2.54 / 96;
    if (!(cm[k] >= 3 && cm[k] <= 200))
      throw input_error("--size: each side must be between 3 cm and 200 cm (114 px and 7559 px), found '" + parts[k] + "'");
  }
  return FigureSize{cm[0], cm[1]};
}

}  // namespace pleat::cli
