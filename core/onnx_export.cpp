// ONNX export (see onnx_io.hpp): one Gemm per layer and a Relu where the
// layer has one, float64 weights, each the double nearest the exact value.
#include "core/onnx_io.hpp"

#include <onnx/onnx_pb.h>

#include <cmath>
#include <cstring>
#include <string>

namespace pleat {
namespace {

using onnx::TensorProto;

// The double nearest to `value`, ties to even (to_double is within one ulp;
// the exact comparison with its neighbours settles the last bit).
double nearest_double(const Rational& value) {
  const double guess = to_double(value);
  double best = guess;
  Rational best_error = abs(rational_from_double(guess) - value);
  for (double candidate : {std::nextafter(guess, -INFINITY), std::nextafter(guess, INFINITY)}) {
    if (!std::isfinite(candidate)) continue;
    const Rational error = abs(rational_from_double(candidate) - value);
    const bool is_even = (std::bit_cast<std::uint64_t>(candidate) & 1u) == 0;
    if (error < best_error || (error == best_error && is_even)) {
      best = candidate;
      best_error = error;
    }
  }
  return best;
}

void append_double(std::string& bytes, double value) {
  const auto bits = std::bit_cast<std::uint64_t>(value);
  for (int i = 0; i < 8; ++i) bytes.push_back(static_cast<char>((bits >> (8 * i)) & 0xffu));
}

void set_vector_type(onnx::ValueInfoProto& value, const std::string& name, std::size_t width) {
  value.set_name(name);
  auto* tensor_type = value.mutable_type()->mutable_tensor_type();
  tensor_type->set_elem_type(TensorProto::DOUBLE);
  auto* shape = tensor_type->mutable_shape();
  shape->add_dim()->set_dim_param("N");
  shape->add_dim()->set_dim_value(static_cast<std::int64_t>(width));
}

class Exporter {
 public:
  explicit Exporter(const Network& network) : network_(network) {}

  // Stores values (in parameter order from `first_parameter`) as a float64 initializer.
  void add_initializer(onnx::GraphProto& graph, const std::string& name, std::vector<std::int64_t> dims,
                       const std::vector<const Rational*>& values, std::size_t first_parameter) {
    TensorProto* tensor = graph.add_initializer();
    tensor->set_name(name);
    tensor->set_data_type(TensorProto::DOUBLE);
    for (std::int64_t dim : dims) tensor->add_dims(dim);
    std::string bytes;
    bytes.reserve(8 * values.size());
    for (std::size_t i = 0; i < values.size(); ++i) append_double(bytes, stored_value(*values[i], first_parameter + i));
    tensor->set_raw_data(bytes);
  }

  std::vector<std::string> rounded;

 private:
  double stored_value(const Rational& value, std::size_t parameter) {
    static const Rational largest = rational_from_double(std::numeric_limits<double>::max());
    if (abs(value) > largest)
      throw input_error("parameter " + network_.parameter_name(parameter) + " = " + format_rational_brief(value) +
                        " is beyond the float64 range");
    const double stored = nearest_double(value);
    if (rational_from_double(stored) != value) {
      // The stored double exactly (a dyadic rational), then a decimal view:
      // "%.17g" alone printed 6/5 as "stored as 1.2", which it is not.
      char text[64];
      std::snprintf(text, sizeof text, "%.17g", stored);
      rounded.push_back(network_.parameter_name(parameter) + " = " + format_rational(value) + " stored as " +
                        format_rational(rational_from_double(stored)) + " (\u2248 " + text + ")");
    }
    return stored;
  }

  const Network& network_;
};

}  // namespace

OnnxExport write_onnx_model(const Network& network, std::string_view producer_version) {
  network.validate();
  onnx::ModelProto model;
  model.set_ir_version(8);
  model.set_producer_name("pleat");
  model.set_producer_version(std::string(producer_version));
  auto* opset = model.add_opset_import();
  opset->set_domain("");
  opset->set_version(13);
  onnx::GraphProto& graph = *model.mutable_graph();
  graph.set_name(network.name.empty() ? "pleat_network" : network.name);
  set_vector_type(*graph.add_input(), "input", network.input_dim);

  Exporter exporter(network);
  std::string current = "input";
  for (std::size_t k = 0; k < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const std::string suffix = std::to_string(k + 1);
    std::vector<const Rational*> weights;
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j) weights.push_back(&layer.weights(i, j));
    std::vector<const Rational*> bias;
    for (const Rational& value : layer.bias) bias.push_back(&value);
    const std::size_t offset = network.parameter_offset(k);
    exporter.add_initializer(graph, "W" + suffix,
                             {static_cast<std::int64_t>(layer.width()), static_cast<std::int64_t>(layer.fan_in())},
                             weights, offset);
    exporter.add_initializer(graph, "b" + suffix, {static_cast<std::int64_t>(layer.width())}, bias,
                             offset + weights.size());
    const bool is_last = k + 1 == network.depth();
    const bool has_relu = layer.activation == Activation::relu;
    const std::string gemm_output = is_last && !has_relu ? "output" : "z" + suffix;
    onnx::NodeProto& gemm = *graph.add_node();
    gemm.set_name("gemm" + suffix);
    gemm.set_op_type("Gemm");
    gemm.add_input(current);
    gemm.add_input("W" + suffix);
    gemm.add_input("b" + suffix);
    gemm.add_output(gemm_output);
    auto* trans_b = gemm.add_attribute();
    trans_b->set_name("transB");
    trans_b->set_type(onnx::AttributeProto::INT);
    trans_b->set_i(1);
    current = gemm_output;
    if (has_relu) {
      onnx::NodeProto& relu = *graph.add_node();
      relu.set_name("relu" + suffix);
      relu.set_op_type("Relu");
      relu.add_input(current);
      current = is_last ? "output" : "h" + suffix;
      relu.add_output(current);
    }
  }
  set_vector_type(*graph.add_output(), "output", network.output_dim());

  OnnxExport result;
  if (!model.SerializeToString(&result.bytes)) throw std::runtime_error("write_onnx_model: serialization failed");
  result.rounded_parameters = std::move(exporter.rounded);
  return result;
}

}  // namespace pleat
