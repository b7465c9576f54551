// Shared helpers of the pleat subcommands (see common.hpp).
#include "cli/common.hpp"

#include "core/network_io.hpp"
#include "core/onnx_io.hpp"

#include <cerrno>
#include <charconv>
#include <cstdio>
#include <cstring>
#include <fstream>
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

Network load_network(const std::string& path) {
  if (path != "-" && is_onnx_path(path)) return read_onnx_file(path);  // ONNX models by extension
  if (path != "-") return read_network_file(path);
  const std::string text = read_limited(std::cin, "<stdin>");
  try {
    return parse_network(text);
  } catch (const input_error& fault) {
    throw input_error(std::string("<stdin>: ") + fault.what());
  }
}

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

CLI::Option* add_number_list_option(CLI::App& command, const std::string& name,
                                    std::string& text, const std::string& description) {
  // A single-string option consumes exactly the next token, even "-1/3,2";
  // "--name=-1/3,2" is split at '=' by CLI11 itself.
  return command.add_option(name, text, description)->type_name("NUMBERS")->allow_extra_args(false);
}

CLI::Option* add_unsigned_option(CLI::App& command, const std::string& name,
                                 std::uint64_t& value, const std::string& description) {
  // CLI11's own integer conversion accepts "-1" (wrapping) and "010" (octal).
  return command
      .add_option_function<std::string>(
          name, [&value, name](const std::string& text) { value = parse_unsigned(text, name); },
          description)
      ->type_name("N");
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

std::string json_text(const Json& document, bool is_pretty) {
  return document.dump(is_pretty ? 2 : -1) + "\n";
}

void write_output(const std::string& path, std::string_view text) {
  if (path.empty() || path == "-") {
    std::cout << text;
    std::cout.flush();
    if (!std::cout) throw std::runtime_error("cannot write to standard output");
    return;
  }
  std::ofstream file(path, std::ios::binary | std::ios::trunc);
  if (!file) throw input_error(path + ": cannot open for writing (" + std::strerror(errno) + ")");
  file << text;
  file.flush();
  if (!file) throw input_error(path + ": cannot write (" + std::strerror(errno) + ")");
}

}  // namespace pleat::cli
