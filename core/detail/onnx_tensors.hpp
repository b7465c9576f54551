// Reading ONNX protobuf pieces into exact values and naming them in messages:
// stored tensors (every float format read bit-exactly), node attributes, node
// labels and shapes. Shared by the ONNX reader (core/onnx_import.cpp); only
// files compiled with the ONNX definitions include this (it names protobuf
// types; see core/CMakeLists.txt).
#pragma once

#include "core/rational.hpp"

#include <onnx/onnx_pb.h>

#include <cstdint>
#include <string>
#include <vector>

namespace pleat::detail {

// 'text', quoted for messages.
std::string single_quoted(const std::string& text);

// `node 'NAME' (OP)`, or `node #INDEX (OP)` when the node has no name.
std::string node_label(const onnx::NodeProto& node, int index);

// The ONNX element type's name (FLOAT, DOUBLE, ...) for messages.
std::string type_name(int data_type);

// [d0, d1, ...] for messages.
std::string dims_text(const std::vector<std::int64_t>& dims);

struct Tensor {
  std::vector<std::int64_t> dims;
  RationalVector values;             // float types, exact
  std::vector<std::int64_t> integers;  // int64/int32 tensors (Reshape shapes)
};

// The number of elements the tensor's shape declares; throws input_error on a
// negative dimension or a size no file pleat reads could hold.
std::size_t element_count(const onnx::TensorProto& tensor, const std::string& what);

// The exact values of a float tensor (or the integers of an int32/int64
// one); `what` names it in messages. Throws input_error on external data, an
// unsupported type, a count that disagrees with the shape, or a non-finite
// value. Exact.
Tensor read_tensor(const onnx::TensorProto& tensor, const std::string& what);

// The node's attribute of that name, or null.
const onnx::AttributeProto* find_attribute(const onnx::NodeProto& node, const std::string& name);

// An integer attribute, or fallback when absent.
std::int64_t int_attribute(const onnx::NodeProto& node, const std::string& name, std::int64_t fallback);

// A float attribute read exactly (the stored float's value); label names the
// node in messages.
Rational float_attribute(const onnx::NodeProto& node, const std::string& name, const std::string& label);

}  // namespace pleat::detail
