// The literal-keeping JSON tree (core/detail/json_tree.hpp).
#include "core/detail/json_tree.hpp"

#include "core/network_io.hpp"

#include <nlohmann/json.hpp>

#include <cerrno>
#include <cstring>
#include <fstream>
#include <map>
#include <set>
#include <string>
#include <utility>
#include <vector>

namespace pleat::detail {
namespace {

// The float type only decides which bare JSON numbers nlohmann refuses as
// "overflow": long double reaches about 1e4932, beyond the grammar's 1e4000.
using Json = nlohmann::basic_json<std::map, std::vector, std::string, bool, std::int64_t,
                                  std::uint64_t, long double>;

constexpr std::size_t max_nesting_depth = 256;

bool is_identifier(const std::string& key) {
  if (key.empty()) return false;
  for (char c : key)
    if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_'))
      return false;
  return true;
}

std::string shown_path(const std::string& path) { return path.empty() ? "document" : path; }

// Builds a JsonNode tree from SAX events; rejects duplicate keys and names the
// path of a syntax error.
class TreeBuilder {
 public:
  using number_integer_t = Json::number_integer_t;
  using number_unsigned_t = Json::number_unsigned_t;
  using number_float_t = Json::number_float_t;
  using string_t = Json::string_t;
  using binary_t = Json::binary_t;

  JsonNode root;

  bool null() { return add_scalar(JsonNode::Kind::null, "null"); }
  bool boolean(bool value) { return add_scalar(JsonNode::Kind::boolean, value ? "true" : "false"); }
  bool number_integer(number_integer_t value) {
    return add_scalar(JsonNode::Kind::number, std::to_string(value));
  }
  bool number_unsigned(number_unsigned_t value) {
    return add_scalar(JsonNode::Kind::number, std::to_string(value));
  }
  bool number_float(number_float_t /*rounded*/, const string_t& literal) {
    return add_scalar(JsonNode::Kind::number, literal);
  }
  bool string(string_t& value) { return add_scalar(JsonNode::Kind::string, value); }
  bool binary(binary_t& /*value*/) { fail(current_path(), "binary values are not JSON"); }

  bool start_object(std::size_t /*size*/) { return open(JsonNode::Kind::object); }
  bool key(string_t& name) {
    Frame& frame = stack_.back();
    if (!frame.keys.insert(name).second) fail(member_path(frame.path, name), "duplicate key");
    frame.pending_key = name;
    frame.has_pending_key = true;
    return true;
  }
  bool end_object() { return close(); }
  bool start_array(std::size_t /*size*/) { return open(JsonNode::Kind::array); }
  bool end_array() { return close(); }

  bool parse_error(std::size_t byte, const std::string& /*last_token*/,
                   const nlohmann::detail::exception& error) {
    std::string what = error.what();
    const std::size_t tag_end = what.find("] ");
    if (tag_end != std::string::npos) what = what.substr(tag_end + 2);
    if (error.id == 406)  // a bare number beyond long double's range; its text may be huge: not quoted
      fail(current_path(), "a bare JSON number ending at byte " + std::to_string(byte) +
                               " is beyond about 1e4900, the limit for numbers written without quotes; "
                               "write it as a string (\"123...\") to have it read exactly");
    if (what.size() > 300) what = what.substr(0, 300) + "...";  // the last token may be huge
    fail(current_path(), "malformed JSON at byte " + std::to_string(byte) + ": " + what);
  }

 private:
  struct Frame {
    JsonNode* node;
    std::string path;
    std::set<std::string> keys;
    std::string pending_key;
    bool has_pending_key = false;  // a key was read and its value not yet
  };
  std::vector<Frame> stack_;
  bool has_root_ = false;

  // The path of the value being read now (where a syntax error is).
  std::string current_path() const {
    if (stack_.empty()) return "";
    const Frame& frame = stack_.back();
    if (frame.node->kind == JsonNode::Kind::array)
      return item_path(frame.path, frame.node->items.size());
    if (!frame.has_pending_key) return frame.path;
    return member_path(frame.path, frame.pending_key);
  }

  // Appends an empty node where the next value goes; returns it and its path.
  std::pair<JsonNode*, std::string> place() {
    if (stack_.empty()) {
      has_root_ = true;
      return {&root, ""};
    }
    Frame& frame = stack_.back();
    if (frame.node->kind == JsonNode::Kind::array) {
      frame.node->items.emplace_back();
      return {&frame.node->items.back(), item_path(frame.path, frame.node->items.size() - 1)};
    }
    frame.has_pending_key = false;
    frame.node->members.emplace_back(frame.pending_key, JsonNode{});
    return {&frame.node->members.back().second, member_path(frame.path, frame.pending_key)};
  }

  bool add_scalar(JsonNode::Kind kind, std::string text) {
    JsonNode* node = place().first;
    node->kind = kind;
    node->text = std::move(text);
    return true;
  }

  bool open(JsonNode::Kind kind) {
    if (stack_.size() >= max_nesting_depth)
      fail(current_path(), "nesting deeper than " + std::to_string(max_nesting_depth) + " levels");
    auto [node, path] = place();
    node->kind = kind;
    stack_.push_back(Frame{node, std::move(path), {}, {}, false});
    return true;
  }

  bool close() {
    stack_.pop_back();
    return true;
  }
};

bool is_scalar(const JsonNode& node) {
  return node.kind != JsonNode::Kind::array && node.kind != JsonNode::Kind::object;
}

void write_scalar(const JsonNode& node, std::string& out) {
  if (node.kind == JsonNode::Kind::string)
    out += escaped(node.text);
  else
    out += node.text;
}

const char* kind_name(JsonNode::Kind kind) {
  switch (kind) {
    case JsonNode::Kind::null: return "null";
    case JsonNode::Kind::boolean: return "a boolean";
    case JsonNode::Kind::number: return "a number";
    case JsonNode::Kind::string: return "a string";
    case JsonNode::Kind::array: return "an array";
    case JsonNode::Kind::object: return "an object";
  }
  return "a value";
}

}  // namespace

const JsonNode* JsonNode::find(const std::string& key) const {
  for (const auto& [name, value] : members)
    if (name == key) return &value;
  return nullptr;
}

std::string escaped(const std::string& text) {
  return Json(text).dump(-1, ' ', false, nlohmann::detail::error_handler_t::replace);
}

std::string member_path(const std::string& parent, const std::string& key) {
  if (!is_identifier(key)) return (parent.empty() ? "document" : parent) + "[" + escaped(key) + "]";
  return parent.empty() ? key : parent + "." + key;
}
std::string item_path(const std::string& parent, std::size_t index) {
  return (parent.empty() ? "document" : parent) + "[" + std::to_string(index) + "]";
}

[[noreturn]] void fail(const std::string& path, const std::string& message) {
  throw input_error(shown_path(path) + ": " + message);
}

JsonNode parse_json_tree(std::string_view text) {
  TreeBuilder builder;
  Json::sax_parse(text, &builder);  // the builder throws on every fault
  return std::move(builder.root);
}

void write_compact(const JsonNode& node, std::string& out) {
  if (node.kind == JsonNode::Kind::array) {
    out += '[';
    for (std::size_t i = 0; i < node.items.size(); ++i) {
      if (i > 0) out += ',';
      write_compact(node.items[i], out);
    }
    out += ']';
  } else if (node.kind == JsonNode::Kind::object) {
    out += '{';
    for (std::size_t i = 0; i < node.members.size(); ++i) {
      if (i > 0) out += ',';
      out += escaped(node.members[i].first);
      out += ':';
      write_compact(node.members[i].second, out);
    }
    out += '}';
  } else {
    write_scalar(node, out);
  }
}

void write_pretty(const JsonNode& node, std::size_t indent, std::string& out) {
  const std::string inner(indent + 2, ' ');
  if (node.kind == JsonNode::Kind::array) {
    bool is_flat = true;
    for (const auto& item : node.items) is_flat = is_flat && is_scalar(item);
    if (is_flat) {
      out += '[';
      for (std::size_t i = 0; i < node.items.size(); ++i) {
        if (i > 0) out += ", ";
        write_scalar(node.items[i], out);
      }
      out += ']';
      return;
    }
    out += "[\n";
    for (std::size_t i = 0; i < node.items.size(); ++i) {
      out += inner;
      write_pretty(node.items[i], indent + 2, out);
      out += i + 1 < node.items.size() ? ",\n" : "\n";
    }
    out += std::string(indent, ' ') + "]";
  } else if (node.kind == JsonNode::Kind::object) {
    if (node.members.empty()) {
      out += "{}";
      return;
    }
    out += "{\n";
    for (std::size_t i = 0; i < node.members.size(); ++i) {
      out += inner + escaped(node.members[i].first) + ": ";
      write_pretty(node.members[i].second, indent + 2, out);
      out += i + 1 < node.members.size() ? ",\n" : "\n";
    }
    out += std::string(indent, ' ') + "}";
  } else {
    write_scalar(node, out);
  }
}

JsonNode make_scalar(JsonNode::Kind kind, std::string text) {
  JsonNode node;
  node.kind = kind;
  node.text = std::move(text);
  return node;
}

JsonNode make_array(std::vector<JsonNode> items) {
  JsonNode node;
  node.kind = JsonNode::Kind::array;
  node.items = std::move(items);
  return node;
}

JsonNode rational_array(const std::vector<Rational>& values) {
  std::vector<JsonNode> items;
  for (const auto& value : values) items.push_back(make_scalar(JsonNode::Kind::string, format_rational(value)));
  return make_array(std::move(items));
}

std::string describe(const JsonNode& node) {
  switch (node.kind) {
    case JsonNode::Kind::null:
    case JsonNode::Kind::boolean: return node.text;
    case JsonNode::Kind::number: return node.text;
    case JsonNode::Kind::string: return escaped(node.text);
    default: return kind_name(node.kind);
  }
}

void expect_kind(const JsonNode& node, JsonNode::Kind kind, const std::string& path) {
  if (node.kind != kind) fail(path, std::string("expected ") + kind_name(kind) + ", found " + describe(node));
}

const JsonNode& require(const JsonNode& object, const std::string& key, const std::string& path) {
  const JsonNode* value = object.find(key);
  if (value == nullptr) fail(member_path(path, key), "missing field");
  return *value;
}

Rational read_number(const JsonNode& node, const std::string& path) {
  if (node.kind != JsonNode::Kind::number && node.kind != JsonNode::Kind::string)
    fail(path, "expected a number (a JSON number or a string), found " + describe(node));
  try {
    return parse_rational(node.text);
  } catch (const input_error& error) {
    fail(path, error.what());
  }
}

std::vector<Rational> read_numbers(const JsonNode& node, std::size_t expected_count,
                                   const std::string& path, const std::string& why) {
  if (node.kind != JsonNode::Kind::array)
    fail(path, "expected an array of " + std::to_string(expected_count) + (expected_count == 1 ? " number" : " numbers") +
                   ", found " + describe(node));
  if (node.items.size() != expected_count)
    fail(path, "expected " + std::to_string(expected_count) + (expected_count == 1 ? " number" : " numbers") + ", found " +
                   std::to_string(node.items.size()) + " (" + why + ")");
  std::vector<Rational> values;
  values.reserve(expected_count);
  for (std::size_t i = 0; i < node.items.size(); ++i) values.push_back(read_number(node.items[i], item_path(path, i)));
  return values;
}

std::size_t read_input_dim(const JsonNode& node, const std::string& path) {
  if (node.kind == JsonNode::Kind::number || node.kind == JsonNode::Kind::string) {
    Rational value;
    bool is_number = true;
    try {
      value = parse_rational(node.text);
    } catch (const input_error&) {
      is_number = false;
    }
    // A width beyond 2^31 could never be stored; reject it here rather than overflow.
    if (is_number && value.get_den() == 1 && value > 0 && value.get_num() < Integer(1) << 31)
      return value.get_num().get_ui();
  }
  fail(path, "expected a positive integer, found " + describe(node));
}

std::string size_limit_message(const std::string& name, const std::string& size) {
  return name + ": larger than the " + std::to_string(max_network_file_bytes >> 20) +
         " MiB limit for network and domain files (" + size + ")";
}

// A regular file's size is checked before reading; anything else (a pipe) is
// cut off at the limit by read_limited.
std::string read_text_file(const std::filesystem::path& path) {
  const std::string name = path.string();
  std::error_code error;
  if (std::filesystem::is_directory(path, error)) throw input_error(name + ": cannot open: is a directory");
  const std::uintmax_t size = std::filesystem::file_size(path, error);
  if (!error && size > max_network_file_bytes) throw input_error(size_limit_message(name, std::to_string(size) + " bytes"));
  std::ifstream file(path, std::ios::binary);
  if (!file) throw input_error(name + ": cannot open (" + std::strerror(errno) + ")");
  return read_limited(file, name);
}

}  // namespace pleat::detail
