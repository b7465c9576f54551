// Shared helpers of the pleat subcommands (see common.hpp).
#include "cli/common.hpp"

#include "cli/formats/output_file.hpp"
#include "core/network_io.hpp"

#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <iostream>
#include <iterator>
#include <limits>
#include <sstream>
#include <stdexcept>

namespace pleat::cli {

namespace {

std::string quoted(std::string_view text) { return "'" + std::string(text) + "'"; }

std::vector<std::string_view> split_commas(std::string_view text) {
  std::vector<std::string_view> items;
  std::size_t start = 0;
  for (;;) {
    const std::size_t comma = text.find(',', start);
    items.push_back(text.substr(start, comma == std::string_view::npos ? comma : comma - start));
    if (comma == std::string_view::npos) return items;
    start = comma + 1;
  }
}

}  // namespace

RationalVector parse_number_list(std::string_view text, std::string_view what) {
  if (text.empty())
    throw input_error(std::string(what) + ": expected a comma-separated list of numbers, got nothing");
  RationalVector values;
  const std::vector<std::string_view> items = split_commas(text);
  for (std::size_t i = 0; i < items.size(); ++i) {
    try {
      values.push_back(parse_rational(items[i]));
    } catch (const input_error& fault) {
      throw input_error(std::string(what) + ": item " + std::to_string(i + 1) + " (" +
                        quoted(items[i]) + "): " + fault.what());
    }
  }
  return values;
}

RationalVector parse_point(std::string_view text, std::size_t dimension, std::string_view what) {
  RationalVector point = parse_number_list(text, what);
  if (point.size() != dimension)
    throw input_error(std::string(what) + ": the network takes " + std::to_string(dimension) +
                      (dimension == 1 ? " input" : " inputs") + ", but the point has " +
                      std::to_string(point.size()) +
                      (point.size() == 1 ? " coordinate" : " coordinates"));
  return point;
}

std::uint64_t parse_unsigned(std::string_view text, std::string_view what) {
  std::uint64_t value = 0;
  const bool is_digits = !text.empty() && text.find_first_not_of("0123456789") == std::string_view::npos;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value, 10);
  if (!is_digits || error != std::errc() || end != text.data() + text.size())
    throw input_error(std::string(what) + ": expected a non-negative integer below 2^64, got " +
                      quoted(text));
  return value;
}

std::vector<std::size_t> parse_width_list(std::string_view text, std::string_view what) {
  std::vector<std::size_t> widths;
  const std::vector<std::string_view> items = split_commas(text);
  for (std::size_t i = 0; i < items.size(); ++i) {
    const std::string item_name = std::string(what) + ": item " + std::to_string(i + 1);
    const std::uint64_t width = parse_unsigned(items[i], item_name);
    if (width == 0 || width > std::numeric_limits<std::size_t>::max())
      throw input_error(item_name + ": a width must be a positive integer, got " + quoted(items[i]));
    widths.push_back(static_cast<std::size_t>(width));
  }
  return widths;
}

void check_parameter_count(const std::vector<std::size_t>& architecture, std::string_view what) {
  double parameters = 0;  // in double: (n + 1) * m cannot overflow it for any widths below 2^64
  for (std::size_t k = 1; k < architecture.size(); ++k)
    parameters += (static_cast<double>(architecture[k - 1]) + 1) * static_cast<double>(architecture[k]);
  if (parameters > max_parameters) {
    char count[32];
    std::snprintf(count, sizeof count, "%.3g", parameters);
    throw input_error(std::string(what) + ": this architecture has " + count +
                      " parameters; at most 10 million are allowed");
  }
}

CLI::Option* add_number_list_option(CLI::App& command, const std::string& name,
                                    std::string& text, const std::string& description) {
  // A single-string option consumes exactly the next token, even "-1/3,2";
  // "--name=-1/3,2" is split at '=' by CLI11 itself.
  return command.add_option(name, text, description)->type_name("NUMBERS")->allow_extra_args(false);
}

CLI::Option* add_unsigned_option(CLI::App& command, const std::string& name,
                                 std::uint64_t& value, const std::string& description,
                                 std::uint64_t minimum, std::uint64_t maximum) {
  // CLI11's own integer conversion accepts "-1" (wrapping) and "010" (octal).
  return command
      .add_option_function<std::string>(
          name,
          [&value, name, minimum, maximum](const std::string& text) {
            const std::uint64_t parsed = parse_unsigned(text, name);
            if (parsed < minimum || parsed > maximum)
              throw input_error(name + ": expected " + std::to_string(minimum) + " to " + std::to_string(maximum) +
                                ", got " + text);
            value = parsed;
          },
          description)
      ->type_name("N");
}

CLI::Option* add_threads_option(CLI::App& command, std::uint64_t& value, const std::string& description) {
  return add_unsigned_option(command, "--threads", value, description + " (0 to 1024)", 0, max_threads);
}

double parse_seconds(std::string_view text, std::string_view what) {
  // from_chars, not strtod: no locale, no leading spaces, no hex floats.
  double value = 0;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value, std::chars_format::general);
  const bool is_number = !text.empty() && error == std::errc() && end == text.data() + text.size();
  if (!is_number || !std::isfinite(value))
    throw input_error(std::string(what) + ": expected a number of seconds, got " + quoted(text));
  if (!(value > 0) || value > max_seconds)
    throw input_error(std::string(what) + ": expected more than 0 and at most 1e9 seconds, got " + quoted(text) +
                      " (leave the option out for no limit)");
  return value;
}

CLI::Option* add_seconds_option(CLI::App& command, const std::string& name, double& value,
                                const std::string& description) {
  return command
      .add_option_function<std::string>(
          name, [&value, name](const std::string& text) { value = parse_seconds(text, name); }, description)
      ->type_name("SECONDS");
}

std::string format_rational_list(const RationalVector& values) {
  std::string text = "[";
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (i > 0) text += ", ";
    text += "\"" + format_rational(values[i]) + "\"";
  }
  return text + "]";
}

std::string format_rational_readable(const Rational& value) {
  if (value.get_den() == 1) return format_rational(value);
  char decimal[32];
  std::snprintf(decimal, sizeof decimal, "%.6g", to_double(value));
  return format_rational(value) + " (\u2248 " + decimal + ")";
}

std::string count_of(std::size_t count, std::string_view singular, std::string_view plural) {
  std::string text = std::to_string(count) + " ";
  if (count == 1) return text.append(singular);
  return plural.empty() ? text.append(singular).append("s") : text.append(plural);
}

std::string format_double(double value) {
  char buffer[64];
  const auto [end, error] = std::to_chars(buffer, buffer + sizeof buffer, value);
  if (error != std::errc()) return "?";
  return std::string(buffer, end);
}

std::string format_double_list(const DoubleVector& values) {
  std::string text = "[";
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (i > 0) text += ", ";
    text += format_double(values[i]);
  }
  return text + "]";
}

Json rational_json(const Rational& value) { return format_rational(value); }

Json rational_list_json(const RationalVector& values) {
  Json list = Json::array();
  for (const Rational& value : values) list.push_back(rational_json(value));
  return list;
}

Json double_list_json(const DoubleVector& values) {
  Json list = Json::array();
  for (double value : values) list.push_back(value);
  return list;
}

Json stop_reason_json(StopReason reason) {
  return reason == StopReason::none ? Json(nullptr) : Json(to_string(reason));
}

std::string json_text(const Json& document, bool is_pretty) {
  return document.dump(is_pretty ? 2 : -1) + "\n";
}

Network read_network_input(const std::string& path) {
  if (path != "-") note_input_file(path);
  return read_network_any(path);
}

void write_output(const std::string& path, std::string_view text) {
  if (path.empty() || path == "-") {
    std::cout << text;
    check_standard_output();
    return;
  }
  write_whole_file(path, text);
}

}  // namespace pleat::cli
