// ONNX import (see onnx_io.hpp; export is onnx_export.cpp).
//
// Import walks the graph as a chain from the single input to the single
// output, keeping the current tensor's shape ([features] or [batch,
// features]) and the affine layer being assembled. Every node on the chain
// must take the current tensor once and otherwise only constants
// (initializers or Constant nodes); a second computed input is a skip
// connection, a value feeding two nodes is a branch. Messages name the node
// as `node 'NAME' (OP)`, or `node #INDEX (OP)` when it has no name.
#include "core/onnx_io.hpp"

#include "core/detail/onnx_tensors.hpp"

#include <onnx/onnx_pb.h>

#include <nlohmann/json.hpp>

#include <algorithm>
#include <bit>
#include <cctype>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <limits>
#include <map>
#include <optional>
#include <set>
#include <system_error>
namespace pleat {
namespace {

using onnx::TensorProto;
using detail::dims_text;
using detail::element_count;
using detail::find_attribute;
using detail::float_attribute;
using detail::int_attribute;
using detail::node_label;
using detail::read_tensor;
using detail::single_quoted;
using detail::Tensor;
using detail::type_name;

// ---- The shape of the tensor flowing along the chain ------------------------------

// [features] (no batch axis) or [batch, features]; the batch is a fixed
// number or a symbol (a named or unnamed dynamic axis).
struct VectorShape {
  bool has_batch = false;
  std::optional<std::int64_t> batch;  // nullopt: symbolic
  std::string batch_symbol;
  std::size_t features = 0;

  bool is_batch_one() const { return has_batch && batch && *batch == 1; }
  std::string text() const {
    const std::string feature_text = std::to_string(features);
    if (!has_batch) return "[" + feature_text + "]";
    const std::string batch_text = batch ? std::to_string(*batch) : (batch_symbol.empty() ? "?" : batch_symbol);
    return "[" + batch_text + ", " + feature_text + "]";
  }
};

// A Reshape target resolved against the current shape; its dims are fixed
// numbers or the (one) symbolic batch.
struct ResolvedDim {
  std::optional<std::int64_t> value;  // nullopt: the symbolic batch
};

// ---- The walk -----------------------------------------------------------------

enum class Pending { none, weights, affine };

class GraphReader {
 public:
  explicit GraphReader(const onnx::GraphProto& graph) : graph_(graph) {}

  Network read() {
    index_values();
    const std::string input = single_input();
    const std::string output = single_output();
    shape_ = input_shape(input);
    network_.input_dim = shape_.features;
    std::string current = input;
    std::set<int> visited;
    while (true) {
      const std::vector<int> users = consumers(current);
      if (current == output) {
        if (!users.empty())
          throw input_error("the graph output " + single_quoted(output) + " also feeds " +
                            node_label(node(users[0]), users[0]) + ": the graph branches");
        break;
      }
      if (users.empty())
        throw input_error("value " + single_quoted(current) + " is used by no node and is not the graph output");
      if (users.size() > 1)
        throw input_error("value " + single_quoted(current) + " feeds two nodes, " + node_label(node(users[0]), users[0]) +
                          " and " + node_label(node(users[1]), users[1]) +
                          ": a skip connection or branch (pleat reads a plain chain of layers)");
      const int index = users[0];
      if (!visited.insert(index).second) throw input_error(node_label(node(index), index) + ": the graph has a cycle");
      current = apply(node(index), index, current);
    }
    finish();
    for (int i = 0; i < graph_.node_size(); ++i)
      if (!visited.count(i) && node(i).op_type() != "Constant")
        throw input_error(node_label(node(i), i) + ": not on the path from the graph input to its output");
    return network_;
  }

 private:
  const onnx::NodeProto& node(int index) const { return graph_.node(index); }

  void index_values() {
    for (const auto& tensor : graph_.initializer()) constants_[tensor.name()] = &tensor;
    for (int i = 0; i < graph_.node_size(); ++i) {
      const auto& n = node(i);
      if (n.op_type() == "Constant") {
        const auto* value = find_attribute(n, "value");
        if (!value || !value->has_t())
          throw input_error(node_label(n, i) + ": only Constant nodes with a tensor 'value' are supported");
        for (const auto& name : n.output()) constants_[name] = &value->t();
        continue;
      }
      for (const auto& name : n.input())
        if (!name.empty()) users_[name].push_back(i);
    }
  }

  std::vector<int> consumers(const std::string& value) const {
    const auto found = users_.find(value);
    if (found == users_.end()) return {};
    std::vector<int> unique = found->second;
    unique.erase(std::unique(unique.begin(), unique.end()), unique.end());
    return unique;
  }

  bool is_constant(const std::string& name) const { return constants_.count(name) > 0; }

  std::string single_input() const {
    std::vector<std::string> inputs;
    // Before IR version 4 initializers were listed as graph inputs too.
    for (const auto& value : graph_.input())
      if (!is_constant(value.name())) inputs.push_back(value.name());
    if (inputs.size() != 1) {
      std::string names;
      for (const auto& name : inputs) names += (names.empty() ? "" : ", ") + single_quoted(name);
      throw input_error("the graph has " + std::to_string(inputs.size()) + " inputs" +
                        (names.empty() ? "" : " (" + names + ")") + "; pleat reads networks with exactly one input");
    }
    return inputs[0];
  }

  std::string single_output() const {
    if (graph_.output_size() != 1)
      throw input_error("the graph has " + std::to_string(graph_.output_size()) +
                        " outputs; pleat reads networks with exactly one output");
    return graph_.output(0).name();
  }

  VectorShape input_shape(const std::string& name) const {
    const onnx::ValueInfoProto* info = nullptr;
    for (const auto& value : graph_.input())
      if (value.name() == name) info = &value;
    const std::string what = "graph input " + single_quoted(name);
    if (!info->type().has_tensor_type()) throw input_error(what + ": not a tensor");
    const auto& tensor_type = info->type().tensor_type();
    const int element = tensor_type.elem_type();
    if (element != TensorProto::FLOAT && element != TensorProto::DOUBLE && element != TensorProto::FLOAT16 &&
        element != TensorProto::BFLOAT16)
      throw input_error(what + ": element type " + type_name(element) + " is not a floating-point type");
    if (!tensor_type.has_shape()) throw input_error(what + ": no shape stored (the feature count must be fixed)");
    const auto& shape = tensor_type.shape();
    if (shape.dim_size() < 1 || shape.dim_size() > 2)
      throw input_error(what + ": has " + std::to_string(shape.dim_size()) +
                        " axes; pleat reads a vector [features] or a batch of vectors [batch, features]");
    const auto& feature_dim = shape.dim(shape.dim_size() - 1);
    if (!feature_dim.has_dim_value() || feature_dim.dim_value() <= 0)
      throw input_error(what + ": the feature dimension " +
                        (feature_dim.has_dim_param() ? single_quoted(feature_dim.dim_param()) : std::string("(unknown)")) +
                        " is not a fixed positive number");
    VectorShape result;
    result.features = static_cast<std::size_t>(feature_dim.dim_value());
    if (shape.dim_size() == 2) {
      result.has_batch = true;
      const auto& batch_dim = shape.dim(0);
      if (batch_dim.has_dim_value() && batch_dim.dim_value() > 0) result.batch = batch_dim.dim_value();
      else if (batch_dim.has_dim_value()) throw input_error(what + ": batch dimension " + std::to_string(batch_dim.dim_value()));
      else result.batch_symbol = batch_dim.dim_param();
    }
    return result;
  }

  // The one constant input of a node (the other being the chain value).
  // Float weights must be float tensors, a Reshape shape an integer one.
  Tensor constant_input(const onnx::NodeProto& n, const std::string& label, int position,
                        bool is_integer = false) const {
    const std::string& name = n.input(position);
    const std::string what = label + ": input " + single_quoted(name);
    // Looked up, not assumed: an empty or unknown name (a file that skips the
    // input the operator needs there) is the file's error, said as such.
    const auto found = constants_.find(name);
    if (found == constants_.end())
      throw input_error(what + ": expected a constant (an initializer or a Constant node's output), found none");
    const TensorProto& constant = *found->second;
    Tensor tensor = read_tensor(constant, what);
    const std::size_t count = is_integer ? tensor.integers.size() : tensor.values.size();
    if (count != element_count(constant, what))
      throw input_error(what + ": expected " + (is_integer ? "integers" : "floating-point weights") + ", found " +
                        type_name(constant.data_type()));
    return tensor;
  }

  // Checks that the node takes the chain value exactly once, at one of
  // `data_positions`, and only constants otherwise; returns its position.
  int check_inputs(const onnx::NodeProto& n, const std::string& label, const std::string& current,
                   std::initializer_list<int> data_positions) const {
    int data_position = -1;
    for (int i = 0; i < n.input_size(); ++i) {
      const std::string& name = n.input(i);
      if (name.empty()) continue;
      if (name == current) {
        if (data_position >= 0)
          throw input_error(label + ": takes the same computed value twice (a skip connection)");
        data_position = i;
      } else if (!is_constant(name)) {
        throw input_error(label + ": input " + single_quoted(name) +
                          " is computed by the graph, not stored: a skip connection (pleat reads a plain chain of layers)");
      }
    }
    if (std::find(data_positions.begin(), data_positions.end(), data_position) == data_positions.end())
      throw input_error(label + ": the data must be input " + std::to_string(*data_positions.begin()) +
                        " and the weights stored in the file");
    if (n.output_size() != 1) throw input_error(label + ": expected one output");
    return data_position;
  }

  std::string apply(const onnx::NodeProto& n, int index, const std::string& current) {
    const std::string label = node_label(n, index);
    if (!n.domain().empty() && n.domain() != "ai.onnx")
      throw input_error(label + ": operator domain " + single_quoted(n.domain()) + " is not the standard ONNX domain");
    const std::string& op = n.op_type();
    if (op == "Gemm") apply_gemm(n, label, current);
    else if (op == "MatMul") apply_matmul(n, label, current);
    else if (op == "Add") apply_add(n, label, current);
    else if (op == "Relu") apply_relu(n, label, current);
    else if (op == "Identity") check_inputs(n, label, current, {0});
    else if (op == "Flatten") apply_flatten(n, label, current);
    else if (op == "Reshape") apply_reshape(n, label, current);
    else reject_operator(op, label);
    return n.output(0);
  }

  [[noreturn]] static void reject_operator(const std::string& op, const std::string& label) {
    static const std::set<std::string> convolutions = {"Conv", "ConvTranspose", "ConvInteger", "QLinearConv"};
    static const std::set<std::string> activations = {
        "Sigmoid", "Tanh", "LeakyRelu", "PRelu", "Elu", "Selu", "Celu", "Softplus", "Softsign", "Softmax",
        "LogSoftmax", "HardSigmoid", "HardSwish", "Gelu", "Mish", "ThresholdedRelu", "Clip", "Exp", "Abs", "Sin", "Cos"};
    if (convolutions.count(op))
      throw input_error(label + ": a convolution; pleat reads fully connected layers only");
    if (activations.count(op))
      throw input_error(label + ": not a ReLU activation; pleat reads ReLU networks only");
    throw input_error(label + ": operator not supported (pleat reads Gemm, MatMul, Add, Relu, Identity, "
                              "and Flatten or Reshape of a vector)");
  }

  void start_layer(const std::string& label) {
    if (pending_ != Pending::none)
      throw input_error(label + ": a second affine layer with no Relu between them (pleat networks have a ReLU "
                                "on every hidden layer)");
  }

  // Gemm: Y = alpha * A' * B' + beta * C with A' = A (transA = 0) the data
  // [batch, n] and B' = B or B^T the stored [n, m]; so W = alpha * B'^T.
  void apply_gemm(const onnx::NodeProto& n, const std::string& label, const std::string& current) {
    start_layer(label);
    check_inputs(n, label, current, {0});
    if (n.input_size() < 2) throw input_error(label + ": missing input B");
    if (int_attribute(n, "transA", 0) != 0)
      throw input_error(label + ": transA = 1 would transpose the batch axis into the features");
    if (!shape_.has_batch)
      throw input_error(label + ": Gemm needs a 2-D input [batch, features], got the vector " + shape_.text());
    const bool is_transposed = int_attribute(n, "transB", 0) != 0;
    const Rational alpha = float_attribute(n, "alpha", label);
    const Rational beta = float_attribute(n, "beta", label);
    const Tensor b = constant_input(n, label, 1);
    if (b.dims.size() != 2) throw input_error(label + ": weights B have shape " + dims_text(b.dims) + ", expected 2-D");
    const auto rows = static_cast<std::size_t>(b.dims[0]);
    const auto cols = static_cast<std::size_t>(b.dims[1]);
    const std::size_t fan_in = is_transposed ? cols : rows;
    const std::size_t width = is_transposed ? rows : cols;
    if (fan_in != shape_.features)
      throw input_error(label + ": weights B " + dims_text(b.dims) + (is_transposed ? " (transB = 1)" : "") +
                        " take " + std::to_string(fan_in) + " features, the input has " +
                        std::to_string(shape_.features));
    if (width == 0) throw input_error(label + ": a layer with no neurons");
    weights_ = RationalMatrix(width, fan_in);
    for (std::size_t i = 0; i < width; ++i)
      for (std::size_t j = 0; j < fan_in; ++j)
        weights_(i, j) = alpha * (is_transposed ? b.values[i * cols + j] : b.values[j * cols + i]);
    bias_.assign(width, Rational(0));
    if (n.input_size() >= 3 && !n.input(2).empty()) add_bias(constant_input(n, label, 2), beta, label);
    pending_ = Pending::affine;
    shape_.features = width;
  }

  // MatMul: Y = A * B, A the data [..., n], B stored [n, m]; W = B^T.
  void apply_matmul(const onnx::NodeProto& n, const std::string& label, const std::string& current) {
    start_layer(label);
    check_inputs(n, label, current, {0});
    if (n.input_size() != 2) throw input_error(label + ": expected two inputs");
    const Tensor b = constant_input(n, label, 1);
    if (b.dims.size() != 2) throw input_error(label + ": weights have shape " + dims_text(b.dims) + ", expected 2-D");
    const auto rows = static_cast<std::size_t>(b.dims[0]);
    const auto cols = static_cast<std::size_t>(b.dims[1]);
    if (rows != shape_.features)
      throw input_error(label + ": weights " + dims_text(b.dims) + " take " + std::to_string(rows) +
                        " features, the input has " + std::to_string(shape_.features));
    if (cols == 0) throw input_error(label + ": a layer with no neurons");
    weights_ = RationalMatrix(cols, rows);
    for (std::size_t i = 0; i < cols; ++i)
      for (std::size_t j = 0; j < rows; ++j) weights_(i, j) = b.values[j * cols + i];
    bias_.assign(cols, Rational(0));
    pending_ = Pending::weights;
    shape_.features = cols;
  }

  // Add of a stored bias to the layer being assembled (after MatMul, or a
  // second bias term after Gemm: both are still one affine layer).
  void apply_add(const onnx::NodeProto& n, const std::string& label, const std::string& current) {
    const int data_position = check_inputs(n, label, current, {0, 1});
    if (pending_ == Pending::none)
      throw input_error(label + ": a bias with no MatMul or Gemm before it (a bias alone is not a layer pleat reads)");
    if (n.input_size() != 2) throw input_error(label + ": expected two inputs");
    add_bias(constant_input(n, label, 1 - data_position), Rational(1), label);
    pending_ = Pending::affine;
  }

  // bias += scale * C, C broadcast along the batch: its shape, without
  // leading 1s, must be [], [1] or [width]; it must not add axes.
  void add_bias(const Tensor& c, const Rational& scale, const std::string& label) {
    std::vector<std::int64_t> core_dims = c.dims;
    while (!core_dims.empty() && core_dims.front() == 1) core_dims.erase(core_dims.begin());  // [1, m] is [m]
    const std::size_t rank = shape_.has_batch ? 2 : 1;
    const bool is_scalar = core_dims.empty();
    const bool is_vector = core_dims.size() == 1 && static_cast<std::size_t>(core_dims[0]) == bias_.size();
    if ((!is_scalar && !is_vector) || c.dims.size() > rank)
      throw input_error(label + ": bias of shape " + dims_text(c.dims) + " does not broadcast to one value per neuron of " +
                        std::to_string(bias_.size()));
    for (std::size_t i = 0; i < bias_.size(); ++i) bias_[i] += scale * c.values[is_scalar ? 0 : i];
  }

  void apply_relu(const onnx::NodeProto& n, const std::string& label, const std::string& current) {
    check_inputs(n, label, current, {0});
    if (pending_ != Pending::none) {
      finish_layer(Activation::relu);
    } else if (network_.layers.empty() || network_.layers.back().activation != Activation::relu) {
      throw input_error(label + ": a ReLU with no layer before it");
    }
    // else: ReLU of a ReLU output changes nothing.
  }

  void finish_layer(Activation activation) {
    network_.layers.push_back(Layer{std::move(weights_), std::move(bias_), activation});
    weights_ = RationalMatrix();
    bias_.clear();
    pending_ = Pending::none;
  }

  // Flatten(axis) of [d0, ..., dr-1] is [d0 * ... * d(axis-1), d(axis) * ...].
  void apply_flatten(const onnx::NodeProto& n, const std::string& label, const std::string& current) {
    check_inputs(n, label, current, {0});
    const std::int64_t rank = shape_.has_batch ? 2 : 1;
    std::int64_t axis = int_attribute(n, "axis", 1);
    if (axis < 0) axis += rank;
    if (shape_.has_batch && axis == 1) return;                                  // [B, n] -> [B, n]
    if (shape_.has_batch && axis == 0 && shape_.is_batch_one()) return;        // [1, n] -> [1, n]
    if (!shape_.has_batch && axis == 0) {                                      // [n] -> [1, n]
      shape_.has_batch = true;
      shape_.batch = 1;
      return;
    }
    throw input_error(label + ": Flatten with axis " + std::to_string(int_attribute(n, "axis", 1)) + " of " +
                      shape_.text() + " does not keep the feature vector");
  }

  void apply_reshape(const onnx::NodeProto& n, const std::string& label, const std::string& current) {
    check_inputs(n, label, current, {0});
    if (n.input_size() != 2) throw input_error(label + ": expected two inputs (data and a stored shape)");
    const Tensor target = constant_input(n, label, 1, true);
    const bool allows_zero = int_attribute(n, "allowzero", 0) != 0;
    // The input's dims, the batch being nullopt when symbolic.
    std::vector<std::optional<std::int64_t>> in_dims;
    if (shape_.has_batch) in_dims.push_back(shape_.batch);
    in_dims.push_back(static_cast<std::int64_t>(shape_.features));
    const bool has_symbol = shape_.has_batch && !shape_.batch;
    std::int64_t in_fixed = 1;
    for (const auto& dim : in_dims)
      if (dim) in_fixed *= *dim;

    std::vector<std::optional<std::int64_t>> out_dims;
    std::int64_t out_fixed = 1;
    int inferred = -1;
    bool copies_symbol = false;
    const auto refuse = [&](const std::string& why) {
      throw input_error(label + ": Reshape of " + shape_.text() + " to " + dims_text(target.integers) + " " + why);
    };
    for (std::size_t i = 0; i < target.integers.size(); ++i) {
      const std::int64_t value = target.integers[i];
      if (value == -1) {
        if (inferred >= 0) refuse("has two -1 entries");
        inferred = static_cast<int>(i);
        out_dims.emplace_back();
      } else if (value == 0 && !allows_zero) {
        if (i >= in_dims.size()) refuse("copies an axis the input lacks");
        out_dims.push_back(in_dims[i]);
        if (in_dims[i]) out_fixed *= *in_dims[i];
        else copies_symbol = true;
      } else if (value < 0) {
        refuse("has a negative entry");
      } else {
        out_dims.push_back(value);
        if (value > 0 && out_fixed > std::numeric_limits<std::int64_t>::max() / value) refuse("is too large");
        out_fixed *= value;
      }
    }
    if (inferred >= 0) {
      if (has_symbol && !copies_symbol) {
        if (out_fixed != in_fixed) refuse("would mix the batch axis with the features");
        // out_dims[inferred] stays nullopt: it is the symbolic batch.
      } else {
        if (out_fixed == 0 || in_fixed % out_fixed != 0) refuse("does not divide the element count");
        out_dims[static_cast<std::size_t>(inferred)] = in_fixed / out_fixed;
      }
    } else if (has_symbol != copies_symbol) {
      refuse("would mix the batch axis with the features");
    }
    // Accept the same vector: [n], [1, n] (batch 1 or none), or [batch, n].
    const auto features = static_cast<std::int64_t>(shape_.features);
    if (out_dims.empty() || out_dims.back() != std::optional<std::int64_t>(features))
      refuse("does not keep the feature vector");
    const bool has_no_real_batch = !shape_.has_batch || shape_.is_batch_one();
    if (out_dims.size() == 1) {
      if (!has_no_real_batch) refuse("would merge the batch into the features");
      shape_.has_batch = false;
      shape_.batch.reset();
    } else if (out_dims.size() == 2) {
      const bool keeps_batch = shape_.has_batch && out_dims[0] == shape_.batch;
      const bool adds_batch_one = has_no_real_batch && out_dims[0] == std::optional<std::int64_t>(1);
      if (!keeps_batch && !adds_batch_one) refuse("does not keep the feature vector");
      if (!shape_.has_batch) {
        shape_.has_batch = true;
        shape_.batch = 1;
      }
    } else {
      refuse("does not keep the feature vector");
    }
  }

  void finish() {
    if (pending_ != Pending::none) finish_layer(Activation::linear);
    if (network_.layers.empty()) throw input_error("the graph computes no layer");
  }

  const onnx::GraphProto& graph_;
  std::map<std::string, const TensorProto*> constants_;
  std::map<std::string, std::vector<int>> users_;
  VectorShape shape_;
  Network network_;
  Pending pending_ = Pending::none;
  RationalMatrix weights_;
  RationalVector bias_;
};

std::int64_t default_domain_opset(const onnx::ModelProto& model) {
  for (const auto& entry : model.opset_import())
    if (entry.domain().empty() || entry.domain() == "ai.onnx") return entry.version();
  return 0;
}

std::string source_meta(const onnx::ModelProto& model, std::string_view source_name, std::int64_t opset) {
  nlohmann::ordered_json source;
  source["format"] = "onnx";
  source["file"] = std::string(source_name);
  source["ir_version"] = model.ir_version();
  source["opset"] = opset;
  source["producer_name"] = model.producer_name();
  source["producer_version"] = model.producer_version();
  source["graph"] = model.graph().name();
  nlohmann::ordered_json meta;
  meta["source"] = source;
  return meta.dump(-1, ' ', false, nlohmann::detail::error_handler_t::replace);
}

}  // namespace

bool is_onnx_path(const std::filesystem::path& path) {
  std::string extension = path.extension().string();
  std::transform(extension.begin(), extension.end(), extension.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return extension == ".onnx";
}

Network parse_onnx_model(std::string_view bytes, std::string_view source_name) {
  const std::string prefix = std::string(source_name) + ": ";
  if (bytes.size() > max_onnx_file_bytes)
    throw input_error(prefix + "larger than " + std::to_string(max_onnx_file_bytes >> 20) + " MiB");
  onnx::ModelProto model;
  // ParseFromArray reads within the given buffer only: a truncated message or
  // a length field pointing past the end fails instead of reading on.
  if (!model.ParseFromArray(bytes.data(), static_cast<int>(bytes.size())))
    throw input_error(prefix + "not an ONNX model (the protobuf data is corrupt or truncated)");
  if (!model.has_graph() || model.ir_version() <= 0)
    throw input_error(prefix + "not an ONNX model (no IR version or no graph)");
  const std::int64_t opset = default_domain_opset(model);
  if (opset < 7)
    throw input_error(prefix + "opset " + std::to_string(opset) + " is older than pleat reads (7 or later)");
  try {
    Network network = GraphReader(model.graph()).read();
    network.name = model.graph().name();
    network.meta_json = source_meta(model, source_name, opset);
    network.validate();
    return network;
  } catch (const input_error& fault) {
    throw input_error(prefix + fault.what());
  }
}

Network read_onnx_file(const std::filesystem::path& path) {
  const std::string name = path.string();
  std::error_code error;
  const std::uintmax_t size = std::filesystem::file_size(path, error);
  if (error) throw input_error(name + ": cannot read (" + error.message() + ")");
  if (size > max_onnx_file_bytes)
    throw input_error(name + ": " + std::to_string(size) + " bytes, larger than the " +
                      std::to_string(max_onnx_file_bytes >> 20) + " MiB pleat reads");
  std::ifstream file(path, std::ios::binary);
  if (!file) throw input_error(name + ": cannot open (" + std::strerror(errno) + ")");
  std::string bytes(static_cast<std::size_t>(size), '\0');
  file.read(bytes.data(), static_cast<std::streamsize>(size));
  if (static_cast<std::uintmax_t>(file.gcount()) != size) throw input_error(name + ": cannot read the whole file");
  // Messages start with the path; meta records the file name alone.
  try {
    Network network = parse_onnx_model(bytes, path.filename().string());
    return network;
  } catch (const input_error& fault) {
    const std::string message = fault.what();
    const std::string file_prefix = path.filename().string() + ": ";
    throw input_error(name + ": " + message.substr(message.rfind(file_prefix, 0) == 0 ? file_prefix.size() : 0));
  }
}

}  // namespace pleat
