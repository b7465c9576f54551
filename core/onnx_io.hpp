// Reading and writing ONNX models (onnx.ai, the open exchange format that
// deep-learning frameworks export to), for fully connected ReLU networks.
//
// Import is exact: every float32, float64 and float16 weight is a dyadic
// rational and is taken as exactly that rational; Gemm's alpha and beta are
// folded in exactly. Export rounds to float64 only where a parameter is not a
// float64 already, and says which parameters it rounded.
//
// This header names no protobuf type: the ONNX library and protobuf stay
// private to core/onnx_import.cpp, onnx_export.cpp and detail/onnx_tensors.cpp
// (see core/CMakeLists.txt for why they may live
// in core at all).
#pragma once

#include "core/network.hpp"

#include <cstddef>
#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

namespace pleat {

// Files above this size are refused before any byte is read: a fully
// connected network pleat can walk is far smaller, and parsing is bounded.
inline constexpr std::size_t max_onnx_file_bytes = std::size_t{512} << 20;  // 512 MiB

// True when the path ends in ".onnx" (any letter case): how the CLI decides
// which reader a network file needs.
bool is_onnx_path(const std::filesystem::path& path);

// Parses a serialized ONNX ModelProto and recognises a fully connected ReLU
// network in its graph, walking from the single graph input to the single
// output:
//   Gemm (transA = 0, any transB, alpha, beta; the data in input A, weights
//   and bias stored in the file), MatMul followed by Add, Relu, and nodes that
//   leave a vector unchanged (Identity, Flatten, Reshape to the same vector).
// The input is [features] or [batch, features]; the batch may be 1, a fixed
// N or symbolic, the feature count must be fixed. Weights may be float32,
// float64, float16 or bfloat16, as raw little-endian bytes or typed fields;
// each becomes the exact rational it represents.
// `source_name` (a file name) starts every message and is recorded in meta,
// which also holds the IR version, opset and producer stored in the file.
// Throws input_error naming the node, its operator type and the reason for
// anything else: a convolution, another activation, a skip connection or
// branch, two graph inputs, a NaN or infinite weight, bytes that are not an
// ONNX model. Nothing is returned half-read.
Network parse_onnx_model(std::string_view bytes, std::string_view source_name);

// Reads a file (refusing one above max_onnx_file_bytes before reading) and
// parses it; messages start with the path.
Network read_onnx_file(const std::filesystem::path& path);

// A network as an ONNX model: one Gemm (transB = 1, weights stored as
// W_k, n_k x n_{k-1}) per layer, then a Relu where the layer has one; input
// "input" and output "output" of shape [N, width] (N symbolic), float64
// throughout, IR version 8, opset 13.
struct OnnxExport {
  std::string bytes;  // the serialized ModelProto
  // One line per parameter float64 cannot hold exactly, rounded to nearest
  // (ties to even), the stored double exactly, then in decimals: "W1[0,2] =
  // 1/3 stored as 6004799503160661/18014398509481984 (≈ 0.33333333333333331)". Empty when
  // the export is exact, and then read back it gives the same network.
  std::vector<std::string> rounded_parameters;
};

// Precondition: network.validate() passes. Throws input_error when a
// parameter lies beyond the float64 range (it would become infinite).
// `producer_version` is recorded as the model's producer_version.
OnnxExport write_onnx_model(const Network& network, std::string_view producer_version = "");

}  // namespace pleat
