// ONNX import and export through the library: exact round trip, nearest
// rounding with ties to even and the names of rounded parameters, exact
// float16 decoding, Gemm's alpha/beta folded in exactly, and clear refusals of
// bytes that are not an ONNX model. (Models from PyTorch and onnx.helper, and
// every refusal message, are checked in tests/reference/onnx_*_test.py.)
#include "core/onnx_io.hpp"

#include "core/network_io.hpp"

// The ONNX headers need the definitions its CMake target would give (the
// test reaches libonnx_proto through pleat_core, which links it privately).
#define ONNX_NAMESPACE onnx
#define ONNX_ML 1
#include <onnx/onnx_pb.h>

#include <gtest/gtest.h>

#include <cmath>
#include <string>

namespace pleat {
namespace {

Rational power_of_two(long exponent) {
  Rational value(1);
  if (exponent >= 0) mpq_mul_2exp(value.get_mpq_t(), value.get_mpq_t(), static_cast<mp_bitcnt_t>(exponent));
  else mpq_div_2exp(value.get_mpq_t(), value.get_mpq_t(), static_cast<mp_bitcnt_t>(-exponent));
  return value;
}

// 2 -> 2 -> 1 with an output ReLU; parameters chosen by the caller.
Network small_network(const Rational& w00, const Rational& b10) {
  Network network;
  network.input_dim = 2;
  network.name = "small";
  Layer hidden{RationalMatrix(2, 2), RationalVector{Rational(1, 4), Rational(-3)}, Activation::relu};
  hidden.weights(0, 0) = w00;
  hidden.weights(0, 1) = Rational(-5, 8);
  hidden.weights(1, 0) = power_of_two(-1074);  // the smallest subnormal double
  hidden.weights(1, 1) = power_of_two(1000);
  Layer output{RationalMatrix(1, 2), RationalVector{b10}, Activation::relu};
  output.weights(0, 0) = Rational(7);
  output.weights(0, 1) = Rational(-1, 1024);
  network.layers = {hidden, output};
  return network;
}

TEST(OnnxIo, RoundTripIsExactWhenEveryParameterIsAFloat64) {
  const Network network = small_network(Rational(3, 2), Rational(0));
  const OnnxExport model = write_onnx_model(network, "test");
  EXPECT_TRUE(model.rounded_parameters.empty());
  const Network back = parse_onnx_model(model.bytes, "small.onnx");
  EXPECT_EQ(back.input_dim, network.input_dim);
  EXPECT_EQ(back.layers, network.layers);
  EXPECT_EQ(back.name, "small");
  EXPECT_NE(back.meta_json.find(R"("file":"small.onnx")"), std::string::npos) << back.meta_json;
  EXPECT_NE(back.meta_json.find(R"("producer_name":"pleat")"), std::string::npos) << back.meta_json;
  EXPECT_NE(back.meta_json.find(R"("opset":13)"), std::string::npos) << back.meta_json;
  // The imported network with its meta is a valid network file.
  EXPECT_EQ(parse_network(write_network(back)), back);
}

TEST(OnnxIo, ExportRoundsToNearestTiesToEvenAndNamesEachRoundedParameter) {
  // 1/3: IEEE division 1.0 / 3.0 is correctly rounded, so it is the nearest double.
  // 1 + 2^-53 lies exactly between 1 and 1 + 2^-52: ties to even give 1.
  const Network network = small_network(Rational(1, 3), 1 + power_of_two(-53));
  const OnnxExport model = write_onnx_model(network);
  ASSERT_EQ(model.rounded_parameters.size(), 2u);
  // The stored double exactly (1/3 rounded to nearest is 6004799503160661 / 2^54), then its decimals.
  EXPECT_EQ(model.rounded_parameters[0],
            "W1[0,0] = 1/3 stored as 6004799503160661/18014398509481984 (\u2248 0.33333333333333331)");
  EXPECT_EQ(model.rounded_parameters[1].rfind("b2[0] = ", 0), 0u) << model.rounded_parameters[1];
  const Network back = parse_onnx_model(model.bytes, "m.onnx");
  EXPECT_EQ(back.layers[0].weights(0, 0), rational_from_double(1.0 / 3.0));
  EXPECT_EQ(back.layers[1].bias[0], Rational(1));
  EXPECT_EQ(back.layers[0].weights(1, 1), power_of_two(1000));  // untouched neighbours stay exact
}

TEST(OnnxIo, SubnormalTieRoundsToEven) {
  // 3 * 2^-1075 lies exactly between 2^-1074 (odd significand 1) and 2^-1073 (even 2).
  const OnnxExport model = write_onnx_model(small_network(3 * power_of_two(-1075), Rational(0)));
  ASSERT_EQ(model.rounded_parameters.size(), 1u);
  EXPECT_EQ(parse_onnx_model(model.bytes, "m.onnx").layers[0].weights(0, 0), power_of_two(-1073));
}

TEST(OnnxIo, JustAboveHalfTheSmallestSubnormalRoundsUp) {
  // 2^-1075 + 2^-1140 is nearer 2^-1074 than 0; rounding first to 53 bits
  // (giving the tie 2^-1075) and then to a subnormal would give 0.
  const OnnxExport model = write_onnx_model(small_network(power_of_two(-1075) + power_of_two(-1140), Rational(0)));
  ASSERT_EQ(model.rounded_parameters.size(), 1u);
  EXPECT_EQ(parse_onnx_model(model.bytes, "m.onnx").layers[0].weights(0, 0), power_of_two(-1074));
}

TEST(OnnxIo, ExportRefusesParametersBeyondFloat64) {
  try {
    write_onnx_model(small_network(power_of_two(1024), Rational(0)));
    FAIL() << "2^1024 was exported";
  } catch (const input_error& fault) {
    EXPECT_NE(std::string(fault.what()).find("W1[0,0]"), std::string::npos) << fault.what();
    EXPECT_NE(std::string(fault.what()).find("float64 range"), std::string::npos) << fault.what();
    // 2^1024 as an approximation and its size, not its 309 digits.
    EXPECT_NE(std::string(fault.what()).find("= about 1.79769e+308 (an integer of 309 digits) is beyond"),
              std::string::npos)
        << fault.what();
  }
}

// A one-Gemm model with float16 weights stored in int32_data.
std::string half_gemm_model(const std::vector<int>& weight_bits, float alpha, float beta) {
  onnx::ModelProto model;
  model.set_ir_version(8);
  model.add_opset_import()->set_version(13);
  onnx::GraphProto& graph = *model.mutable_graph();
  auto add_value = [](onnx::ValueInfoProto* value, const char* name, bool has_shape) {
    value->set_name(name);
    auto* type = value->mutable_type()->mutable_tensor_type();
    type->set_elem_type(onnx::TensorProto::FLOAT16);
    if (!has_shape) return;
    type->mutable_shape()->add_dim()->set_dim_param("N");
    type->mutable_shape()->add_dim()->set_dim_value(2);
  };
  add_value(graph.add_input(), "x", true);
  add_value(graph.add_output(), "y", false);
  onnx::TensorProto& weights = *graph.add_initializer();
  weights.set_name("B");
  weights.set_data_type(onnx::TensorProto::FLOAT16);
  weights.add_dims(2);  // transB = 0: B is [fan_in, width]
  weights.add_dims(static_cast<std::int64_t>(weight_bits.size() / 2));
  for (int bits : weight_bits) weights.add_int32_data(bits);
  onnx::TensorProto& bias = *graph.add_initializer();
  bias.set_name("C");
  bias.set_data_type(onnx::TensorProto::FLOAT16);
  bias.add_dims(1);
  bias.add_int32_data(0x3c00);  // 1.0
  onnx::NodeProto& gemm = *graph.add_node();
  gemm.set_op_type("Gemm");
  gemm.add_input("x");
  gemm.add_input("B");
  gemm.add_input("C");
  gemm.add_output("y");
  for (auto [name, value] : {std::pair{"alpha", alpha}, std::pair{"beta", beta}}) {
    auto* attribute = gemm.add_attribute();
    attribute->set_name(name);
    attribute->set_type(onnx::AttributeProto::FLOAT);
    attribute->set_f(value);
  }
  return model.SerializeAsString();
}

TEST(OnnxIo, Float16IsDecodedExactlyAndAlphaBetaFoldedIn) {
  // Bit patterns from the IEEE 754 binary16 layout: 0x0001 = 2^-24 (smallest
  // subnormal), 0x03ff = 1023 * 2^-24 (largest subnormal), 0x7bff = 65504
  // (largest finite), 0xc000 = -2, 0x8000 = -0, 0x3555 = 1365 * 2^-12.
  const std::string bytes = half_gemm_model({0x0001, 0x03ff, 0x7bff, 0xc000, 0x8000, 0x3555}, 0.1f, -2.0f);
  const Network network = parse_onnx_model(bytes, "half.onnx");
  ASSERT_EQ(network.layers.size(), 1u);
  const Layer& layer = network.layers[0];
  ASSERT_EQ(layer.weights.rows(), 3u);  // width 3, fan-in 2; W = alpha * B^T
  const Rational alpha = rational_from_double(static_cast<double>(0.1f));  // the float32 nearest 1/10
  EXPECT_NE(alpha, Rational(1, 10));
  EXPECT_EQ(layer.weights(0, 0), alpha * power_of_two(-24));
  EXPECT_EQ(layer.weights(1, 0), alpha * 1023 * power_of_two(-24));
  EXPECT_EQ(layer.weights(2, 0), alpha * 65504);
  EXPECT_EQ(layer.weights(0, 1), alpha * -2);
  EXPECT_EQ(layer.weights(1, 1), Rational(0));
  EXPECT_EQ(layer.weights(2, 1), alpha * 1365 * power_of_two(-12));
  EXPECT_EQ(layer.bias, (RationalVector{-2, -2, -2}));  // beta * C, C = [1] broadcast
  EXPECT_EQ(layer.activation, Activation::linear);
}

TEST(OnnxIo, Float16InfinityIsRefusedWithItsNode) {
  try {
    parse_onnx_model(half_gemm_model({0x3c00, 0x7c00, 0, 0}, 1.0f, 1.0f), "inf.onnx");
    FAIL() << "an infinite weight was accepted";
  } catch (const input_error& fault) {
    const std::string message = fault.what();
    EXPECT_EQ(message.rfind("inf.onnx: node #0 (Gemm): input 'B': element 1 is NaN or infinite", 0), 0u) << message;
  }
}

TEST(OnnxIo, BytesThatAreNotAModelAreRefused) {
  const std::string valid = write_onnx_model(small_network(Rational(1), Rational(0))).bytes;
  for (const std::string& bytes : {std::string(), std::string("{\"format\": \"pleat-network/1\"}"),
                                   valid.substr(0, valid.size() / 2), valid.substr(0, valid.size() - 1)}) {
    try {
      parse_onnx_model(bytes, "bad.onnx");
      FAIL() << "accepted " << bytes.size() << " bytes";
    } catch (const input_error& fault) {
      EXPECT_EQ(std::string(fault.what()).rfind("bad.onnx: ", 0), 0u) << fault.what();
    }
  }
}

TEST(OnnxIo, OnnxPathsByExtension) {
  EXPECT_TRUE(is_onnx_path("model.onnx"));
  EXPECT_TRUE(is_onnx_path("dir/Model.ONNX"));
  EXPECT_FALSE(is_onnx_path("net.json"));
  EXPECT_FALSE(is_onnx_path("onnx"));
  EXPECT_THROW(read_onnx_file("/nonexistent/model.onnx"), input_error);
}

}  // namespace
}  // namespace pleat
