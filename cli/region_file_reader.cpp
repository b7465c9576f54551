#include "cli/region_file_reader.hpp"

namespace pleat::cli {

void LineReader::fail(const std::string& what) const {
  throw input_error("line " + std::to_string(line_) + ": " + what);
}
const Json& LineReader::field(const Json& object, const char* key) const {
  if (!object.is_object() || !object.contains(key)) fail(std::string("missing key \"") + key + "\"");
  return object.at(key);
}

Rational LineReader::rational(const Json& value) const {
  if (!value.is_string()) fail("expected an exact number as a string, found " + value.dump());
  Rational result;
  try {
    result = parse_rational(value.get<std::string>());
  } catch (const input_error& fault) {
    fail(fault.what());
  }
  if (canonical_ && format_rational(result) != value.get<std::string>())
    fail("the number " + value.dump() + " is not written as pleat writes it (\"" + format_rational(result) + "\")");
  return result;
}

RationalVector LineReader::rationals(const Json& value) const {
  if (!value.is_array()) fail("expected a list of numbers, found " + value.dump());
  RationalVector out;
  for (const auto& item : value) out.push_back(rational(item));
  return out;
}

std::vector<std::size_t> LineReader::indices(const Json& value) const {
  if (!value.is_array()) fail("expected a list of indices, found " + value.dump());
  std::vector<std::size_t> out;
  for (const auto& item : value) {
    if (!item.is_number_unsigned()) fail("expected a non-negative integer, found " + item.dump());
    out.push_back(item.get<std::size_t>());
  }
  return out;
}

ActivationPattern LineReader::pattern(const Json& value) const {
  if (!value.is_string()) fail("expected a pattern string, found " + value.dump());
  ActivationPattern result;
  try {
    result = parse_pattern(network_, value.get<std::string>());
  } catch (const input_error& fault) {
    fail(fault.what());
  }
  if (canonical_ && format_pattern(network_, result) != value.get<std::string>())
    fail("the pattern " + value.dump() + " is not written in the spec's notation (\"" +
         format_pattern(network_, result) + "\")");
  return result;
}

RationalVector LineReader::sparse(const Json& value, std::size_t size) const {
  if (!value.is_object()) fail("expected multipliers as an object {index: value}");
  RationalVector out(size, Rational(0));
  for (const auto& [key, entry] : value.items()) {
    std::size_t index = 0;
    try {
      index = parse_unsigned(key, "multiplier index");
    } catch (const input_error& fault) {
      fail(fault.what());
    }
    if (index >= size) fail("multiplier index " + key + " beyond the " + std::to_string(size) + " constraints");
    if (canonical_ && key != std::to_string(index)) fail("multiplier index \"" + key + "\" is not written as pleat writes it");
    out[index] = rational(entry);
    if (canonical_ && out[index] == 0) fail("multiplier " + key + " is zero (pleat writes only nonzero multipliers)");
  }
  return out;
}

Domain domain_from_json(const Json& value, std::size_t input_dim, const LineReader& reader) {
  if (value.is_string()) {
    if (value.get<std::string>() != "R^" + std::to_string(input_dim))
      reader.fail("domain " + value.dump() + " does not match the network's " + count_of(input_dim, "input"));
    return make_whole_space(input_dim);
  }
  if (value.is_object() && value.contains("box")) {
    RationalVector lower, upper;
    for (const auto& interval : value.at("box")) {
      const RationalVector bounds = reader.rationals(interval);
      if (bounds.size() != 2) reader.fail("a box interval needs two numbers");
      lower.push_back(bounds[0]);
      upper.push_back(bounds[1]);
    }
    if (lower.size() != input_dim) reader.fail("the box's dimension differs from the network's");
    return make_box(lower, upper);
  }
  if (value.is_object() && value.contains("constraints")) {
    std::vector<lp::Constraint> constraints;
    for (const auto& c : value.at("constraints"))
      constraints.push_back(lp::Constraint{reader.rationals(reader.field(c, "normal")),
                                           reader.rational(reader.field(c, "offset"))});
    return make_polytope(input_dim, std::move(constraints));
  }
  reader.fail("unknown domain " + value.dump());
}

}  // namespace pleat::cli
