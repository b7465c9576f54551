// A JSON tree that keeps every number's literal text, for reading pleat's
// exact formats (networks, domains) without passing a number through a double.
// Private to core/: the readers in network_io.cpp and domain_io.cpp use it;
// nothing outside core/ includes this header.
//
// nlohmann's SAX interface builds the tree: it hands integers that fit 64 bits
// over as values (exact) and every other number, including integers that
// overflow 64 bits, as a float together with its literal text; the tree keeps
// the text and ignores the float.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

namespace pleat::detail {

struct JsonMember;

struct JsonNode {
  enum class Kind { null, boolean, number, string, array, object };
  Kind kind = Kind::null;
  std::string text;  // a number's literal text, a string's value, "true"/"false"
  std::vector<JsonNode> items;
  std::vector<JsonMember> members;  // in document order

  const JsonNode* find(const std::string& key) const;
};

// A key and its value, with std::pair's member names. Not a std::pair: clang
// refuses a pair holding the still-incomplete JsonNode inside JsonNode.
struct JsonMember {
  JsonMember(std::string key, JsonNode value) : first(std::move(key)), second(std::move(value)) {}
  std::string first;
  JsonNode second;
};

// Parses a whole document; duplicate keys, nesting beyond 256 levels and
// syntax errors are input_errors naming the JSON path.
JsonNode parse_json_tree(std::string_view text);

// Writing: compact (no spaces), or pretty (objects one member per line, arrays
// of scalars on one line, so a weight row reads as a row).
void write_compact(const JsonNode& node, std::string& out);
void write_pretty(const JsonNode& node, std::size_t indent, std::string& out);

JsonNode make_scalar(JsonNode::Kind kind, std::string text);
JsonNode make_array(std::vector<JsonNode> items);
JsonNode rational_array(const std::vector<Rational>& values);  // exact, as strings

// A string as a JSON string literal (quoted, escaped).
std::string escaped(const std::string& text);

// JSON paths as messages print them: layers[1].weights[2]; the root is "document".
std::string member_path(const std::string& parent, const std::string& key);
std::string item_path(const std::string& parent, std::size_t index);

// Throws input_error "PATH: message".
[[noreturn]] void fail(const std::string& path, const std::string& message);

// The value as a message shows it: a scalar's text, else "an array" / "an object".
std::string describe(const JsonNode& node);
void expect_kind(const JsonNode& node, JsonNode::Kind kind, const std::string& path);
const JsonNode& require(const JsonNode& object, const std::string& key, const std::string& path);

// A number: a JSON number or a string in the exact number grammar. Exact.
Rational read_number(const JsonNode& node, const std::string& path);
// An array of exactly expected_count numbers (`why` explains the count).
std::vector<Rational> read_numbers(const JsonNode& node, std::size_t expected_count, const std::string& path,
                                   const std::string& why);
// A positive integer below 2^31.
std::size_t read_input_dim(const JsonNode& node, const std::string& path);

// The message for a file or stream above max_network_file_bytes.
std::string size_limit_message(const std::string& name, const std::string& size);
// A whole file's text, refusing directories, unreadable files and files above
// max_network_file_bytes (input_error naming the file).
std::string read_text_file(const std::filesystem::path& path);

}  // namespace pleat::detail
