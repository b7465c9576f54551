// Reading and writing "pleat-network/1" (spec: network-format.md).
//
// Numbers must be read from their literal text, never through a double, so
// the document is read with nlohmann's SAX interface into a small tree of our
// own in which every number keeps its text. nlohmann hands integers that fit
// 64 bits over as values (exact) and every other number, including integers
// that overflow 64 bits, as a float together with its literal text; we keep
// the text and ignore the float.
#include "core/network_io.hpp"

#include <nlohmann/json.hpp>

#include <cerrno>
#include <cstring>
#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

namespace pleat {
namespace {

// The float type only decides which bare JSON numbers nlohmann refuses as
// "overflow": long double reaches about 1e4932, beyond the grammar's 1e4000.
using Json = nlohmann::basic_json<std::map, std::vector, std::string, bool, std::int64_t,
                                  std::uint64_t, long double>;

constexpr std::size_t max_nesting_depth = 256;

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

const JsonNode* JsonNode::find(const std::string& key) const {
  for (const auto& [name, value] : members)
    if (name == key) return &value;
  return nullptr;
}

std::string escaped(const std::string& text) {
  return Json(text).dump(-1, ' ', false, nlohmann::detail::error_handler_t::replace);
}

bool is_identifier(const std::string& key) {
  if (key.empty()) return false;
  for (char c : key)
    if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_'))
      return false;
  return true;
}

// JSON paths as messages print them: layers[1].weights[2]; the root is "document".
std::string member_path(const std::string& parent, const std::string& key) {
  if (!is_identifier(key)) return (parent.empty() ? "document" : parent) + "[" + escaped(key) + "]";
  return parent.empty() ? key : parent + "." + key;
}
std::string item_path(const std::string& parent, std::size_t index) {
  return (parent.empty() ? "document" : parent) + "[" + std::to_string(index) + "]";
}
std::string shown_path(const std::string& path) { return path.empty() ? "document" : path; }

[[noreturn]] void fail(const std::string& path, const std::string& message) {
  throw input_error(shown_path(path) + ": " + message);
}

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

JsonNode parse_json_tree(std::string_view text) {
  TreeBuilder builder;
  Json::sax_parse(text, &builder);  // the builder throws on every fault
  return std::move(builder.root);
}

// ---- writing a tree --------------------------------------------------------

bool is_scalar(const JsonNode& node) {
  return node.kind != JsonNode::Kind::array && node.kind != JsonNode::Kind::object;
}

void write_scalar(const JsonNode& node, std::string& out) {
  if (node.kind == JsonNode::Kind::string)
    out += escaped(node.text);
  else
    out += node.text;
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

// Pretty form: objects one member per line; arrays of scalars on one line
// (a weight row reads as a row).
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

// ---- reading a network -----------------------------------------------------

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
    fail(path, "expected an array of " + std::to_string(expected_count) + " numbers, found " + describe(node));
  if (node.items.size() != expected_count)
    fail(path, "expected " + std::to_string(expected_count) + " numbers, found " +
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

const std::set<std::string> top_level_keys = {"format", "input_dim", "layers", "name", "meta"};
const std::set<std::string> layer_keys = {"weights", "bias", "activation"};

Layer read_layer(const JsonNode& node, const std::string& path, std::size_t fan_in,
                 const std::string& fan_in_reason, bool is_last) {
  expect_kind(node, JsonNode::Kind::object, path);
  for (const auto& [key, value] : node.members)
    if (!layer_keys.contains(key)) fail(member_path(path, key), "unknown key (a layer has weights, bias, activation)");

  Layer layer;
  const std::string weights_path = member_path(path, "weights");
  const JsonNode& weights = require(node, "weights", path);
  expect_kind(weights, JsonNode::Kind::array, weights_path);
  if (weights.items.empty()) fail(weights_path, "layer has no neurons (empty weights)");
  layer.weights = RationalMatrix(weights.items.size(), fan_in);
  for (std::size_t r = 0; r < weights.items.size(); ++r)
    layer.weights.set_row(r, read_numbers(weights.items[r], fan_in, item_path(weights_path, r), fan_in_reason));

  layer.bias = read_numbers(require(node, "bias", path), weights.items.size(), member_path(path, "bias"),
                            "one per row of weights");

  layer.activation = is_last ? Activation::linear : Activation::relu;
  if (const JsonNode* activation = node.find("activation")) {
    const std::string activation_path = member_path(path, "activation");
    expect_kind(*activation, JsonNode::Kind::string, activation_path);
    if (activation->text == "relu") {
      layer.activation = Activation::relu;
    } else if (activation->text == "linear") {
      if (!is_last)
        fail(activation_path,
             "a hidden layer must be \"relu\" (\"linear\" is allowed only on the last layer in pleat-network/1)");
      layer.activation = Activation::linear;
    } else {
      fail(activation_path, "unknown activation " + escaped(activation->text) + " (expected \"relu\" or \"linear\")");
    }
  }
  return layer;
}

Network read_network(const JsonNode& root) {
  expect_kind(root, JsonNode::Kind::object, "");
  const JsonNode& format = require(root, "format", "");
  expect_kind(format, JsonNode::Kind::string, "format");
  if (format.text != "pleat-network/1")
    fail("format", "expected \"pleat-network/1\", found " + escaped(format.text));
  for (const auto& [key, value] : root.members)
    if (!top_level_keys.contains(key))
      fail(member_path("", key), "unknown top-level key (allowed: format, input_dim, layers, name, meta)");

  Network network;
  network.input_dim = read_input_dim(require(root, "input_dim", ""), "input_dim");
  if (const JsonNode* name = root.find("name")) {
    expect_kind(*name, JsonNode::Kind::string, "name");
    network.name = name->text;
  }
  if (const JsonNode* meta = root.find("meta")) write_compact(*meta, network.meta_json);

  const JsonNode& layers = require(root, "layers", "");
  expect_kind(layers, JsonNode::Kind::array, "layers");
  if (layers.items.empty()) fail("layers", "empty network (no layers)");
  std::size_t fan_in = network.input_dim;
  std::string fan_in_reason = "input_dim is " + std::to_string(network.input_dim);
  for (std::size_t k = 0; k < layers.items.size(); ++k) {
    const std::string path = item_path("layers", k);
    network.layers.push_back(read_layer(layers.items[k], path, fan_in, fan_in_reason, k + 1 == layers.items.size()));
    fan_in = network.layers.back().width();
    fan_in_reason = path + " has " + std::to_string(fan_in) + " neurons";
  }
  network.validate();  // the reader's checks should have covered all of it
  return network;
}

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

std::string size_limit_message(const std::string& name, const std::string& size) {
  return name + ": larger than the " + std::to_string(max_network_file_bytes >> 20) +
         " MiB limit for network and domain files (" + size + ")";
}

// Reads at most max_network_file_bytes: a regular file's size is checked
// before reading, anything else (a pipe) is cut off at the limit.
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

}  // namespace

std::string read_limited(std::istream& stream, const std::string& name) {
  std::string contents;
  char buffer[1 << 16];
  while (stream.read(buffer, sizeof buffer) || stream.gcount() > 0) {
    contents.append(buffer, static_cast<std::size_t>(stream.gcount()));
    if (contents.size() > max_network_file_bytes) throw input_error(size_limit_message(name, "stopped reading there"));
  }
  if (stream.bad()) throw input_error(name + ": cannot read");
  return contents;
}

Network parse_network(std::string_view json_text) { return read_network(parse_json_tree(json_text)); }

Network read_network_file(const std::filesystem::path& path) {
  const std::string text = read_text_file(path);
  try {
    return parse_network(text);
  } catch (const input_error& fault) {
    throw input_error(path.string() + ": " + fault.what());
  }
}

PolytopeDocument parse_domain(std::string_view json_text) { return read_domain(parse_json_tree(json_text)); }

PolytopeDocument read_domain_file(const std::filesystem::path& path) {
  const std::string text = read_text_file(path);
  try {
    return parse_domain(text);
  } catch (const input_error& fault) {
    throw input_error(path.string() + ": " + fault.what());
  }
}

std::string write_network(const Network& network) {
  JsonNode root;
  root.kind = JsonNode::Kind::object;
  root.members.emplace_back("format", make_scalar(JsonNode::Kind::string, "pleat-network/1"));
  if (!network.name.empty()) root.members.emplace_back("name", make_scalar(JsonNode::Kind::string, network.name));
  root.members.emplace_back("input_dim", make_scalar(JsonNode::Kind::number, std::to_string(network.input_dim)));
  std::vector<JsonNode> layers;
  for (const Layer& layer : network.layers) {
    JsonNode node;
    node.kind = JsonNode::Kind::object;
    std::vector<JsonNode> rows;
    for (std::size_t r = 0; r < layer.weights.rows(); ++r) rows.push_back(rational_array(layer.weights.row(r)));
    node.members.emplace_back("weights", make_array(std::move(rows)));
    node.members.emplace_back("bias", rational_array(layer.bias));
    node.members.emplace_back(
        "activation", make_scalar(JsonNode::Kind::string, layer.activation == Activation::relu ? "relu" : "linear"));
    layers.push_back(std::move(node));
  }
  root.members.emplace_back("layers", make_array(std::move(layers)));
  if (!network.meta_json.empty()) {
    try {
      root.members.emplace_back("meta", parse_json_tree(network.meta_json));
    } catch (const input_error& fault) {
      throw usage_error(std::string("write_network: meta_json is not JSON: ") + fault.what());
    }
  }
  std::string out;
  write_pretty(root, 0, out);
  out += '\n';
  return out;
}

}  // namespace pleat
