// Reading "pleat-domain/1" (docs/formats.md, Domains), exactly.
#include "core/domain_io.hpp"

#include "core/detail/json_tree.hpp"

#include <set>
#include <string>
#include <utility>

namespace pleat {
namespace {

using namespace detail;

const std::set<std::string> domain_keys = {"format", "input_dim", "constraints", "name", "meta"};
const std::set<std::string> constraint_keys = {"normal", "offset"};

PolytopeDocument read_domain(const JsonNode& root) {
  expect_kind(root, JsonNode::Kind::object, "");
  const JsonNode& format = require(root, "format", "");
  expect_kind(format, JsonNode::Kind::string, "format");
  if (format.text != "pleat-domain/1") fail("format", "expected \"pleat-domain/1\", found " + escaped(format.text));
  for (const auto& [key, value] : root.members)
    if (!domain_keys.contains(key))
      fail(member_path("", key), "unknown top-level key (allowed: format, input_dim, constraints, name, meta)");
  PolytopeDocument document;
  document.input_dim = read_input_dim(require(root, "input_dim", ""), "input_dim");
  const JsonNode& constraints = require(root, "constraints", "");
  expect_kind(constraints, JsonNode::Kind::array, "constraints");
  if (constraints.items.empty()) fail("constraints", "no constraints (use no --domain for all of R^n)");
  for (std::size_t i = 0; i < constraints.items.size(); ++i) {
    const std::string path = item_path("constraints", i);
    const JsonNode& node = constraints.items[i];
    expect_kind(node, JsonNode::Kind::object, path);
    for (const auto& [key, value] : node.members)
      if (!constraint_keys.contains(key)) fail(member_path(path, key), "unknown key (a constraint has normal, offset)");
    RationalVector normal = read_numbers(require(node, "normal", path), document.input_dim,
                                         member_path(path, "normal"), "input_dim is " + std::to_string(document.input_dim));
    Rational offset = read_number(require(node, "offset", path), member_path(path, "offset"));
    document.constraints.emplace_back(std::move(normal), std::move(offset));
  }
  return document;
}

}  // namespace

PolytopeDocument parse_domain(std::string_view json_text) { return read_domain(parse_json_tree(json_text)); }

PolytopeDocument read_domain_file(const std::filesystem::path& path) {
  const std::string text = read_text_file(path);
  try {
    return parse_domain(text);
  } catch (const input_error& fault) {
    throw input_error(path.string() + ": " + fault.what());
  }
}

}  // namespace pleat
