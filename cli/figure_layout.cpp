// Palettes and ticks shared by the figure writers.
#include "cli/figure.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>

namespace pleat::cli {

const std::vector<std::string>& categorical_palette() {
  // Our own: cream, sky, apricot, teal, lilac, slate. Light enough that black
  // lines and labels read on all of them; CIE L* about 95, 87, 77, 69, 61, 54
  // (at least 7 apart, checked by tests/reference/draw_plane_test.py), warm
  // and cool hues alternating, so greyscale prints and colour-blind readers
  // still tell neighbours apart by lightness.
  static const std::vector<std::string> palette{"#fdf0c2", "#b9e0f0", "#f0b07c", "#74b5aa", "#b085bd", "#5f82b8"};
  return palette;
}

std::string sequential_colour(double t) {
  // Cream to plum, CIE L* about 96, 85, 70, 54, 39: dark enough to read, light
  // enough that black lines stay visible on every step.
  static constexpr std::array<std::array<double, 3>, 5> stops{
      {{0xff, 0xf3, 0xd1}, {0xf6, 0xcf, 0x7e}, {0xe5, 0x9c, 0x55}, {0xc0, 0x68, 0x4f}, {0x8a, 0x46, 0x60}}};
  t = std::clamp(std::isfinite(t) ? t : 0.0, 0.0, 1.0);
  const double position = t * (stops.size() - 1);
  const std::size_t low = std::min<std::size_t>(static_cast<std::size_t>(position), stops.size() - 2);
  const double fraction = position - static_cast<double>(low);
  char text[8];
  int channel[3];
  for (int c = 0; c < 3; ++c)
    channel[c] = static_cast<int>(std::lround(stops[low][c] + fraction * (stops[low + 1][c] - stops[low][c])));
  std::snprintf(text, sizeof text, "#%02x%02x%02x", channel[0], channel[1], channel[2]);
  return text;
}

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
  char text[32];
  for (int digits = 1; digits <= 17; ++digits) {
    std::snprintf(text, sizeof text, "%.*g", digits, value);
    if (std::abs(std::strtod(text, nullptr) - value) <= 1e-9 * std::max(1.0, std::abs(value))) break;
  }
  return text;
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
  while (!out.empty() && out.back() == '0') out.pop_back();
  if (!out.empty() && out.back() == '.') out.pop_back();
  return out == "-0" ? "0" : out;
}

}  // namespace pleat::cli
