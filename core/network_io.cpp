// Reading and writing "pleat-network/1" (spec: network-format.md). Numbers
// are read from their literal text, never through a double
// (core/detail/json_tree.hpp).
#include "core/network_io.hpp"

#include "core/detail/json_tree.hpp"

#include <algorithm>
#include <set>
#include <string>
#include <utility>
#include <vector>

namespace pleat {
namespace {

using namespace detail;

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
    fan_in_reason = path + " has " + std::to_string(fan_in) + (fan_in == 1 ? " neuron" : " neurons");
  }
  network.validate();  // the reader's checks should have covered all of it
  return network;
}

}  // namespace

std::string read_limited(std::istream& stream, const std::string& name) {
  std::string contents;
  char buffer[1 << 16];
  while (stream.read(buffer, sizeof buffer) || stream.gcount() > 0) {
    const auto count = static_cast<std::size_t>(stream.gcount());
    // Past 1 MiB, room for the whole limit at once: the pages are touched
    // only as they are written, and no doubling leaves copies behind (an
    // allocator that keeps freed blocks, as the executable's does, would
    // hold every one of them).
    if (const std::size_t needed = contents.size() + count; needed > contents.capacity())
      contents.reserve(needed <= (std::size_t{1} << 20) ? std::max(needed, 2 * contents.capacity())
                                                          : max_network_file_bytes + sizeof buffer);
    contents.append(buffer, count);
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
