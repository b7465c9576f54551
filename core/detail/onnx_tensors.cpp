#include "core/detail/onnx_tensors.hpp"

#include "core/errors.hpp"
#include "core/onnx_io.hpp"

#include <algorithm>
#include <bit>
#include <cmath>
#include <cstring>
#include <limits>
#include <optional>

namespace pleat::detail {
namespace {

using onnx::TensorProto;

// ---- Exact numbers from stored bits --------------------------------------------

std::uint64_t little_endian(const std::string& bytes, std::size_t offset, std::size_t width) {
  std::uint64_t value = 0;
  for (std::size_t i = 0; i < width; ++i)
    value |= std::uint64_t{static_cast<unsigned char>(bytes[offset + i])} << (8 * i);
  return value;
}

// IEEE binary16: 1 sign bit, 5 exponent bits (bias 15), 10 fraction bits.
// Decoded as integer significand times a power of two, so nothing rounds.
// Returns nullopt for infinity and NaN (exponent field all ones).
std::optional<Rational> rational_from_half_bits(std::uint16_t bits) {
  const unsigned exponent_field = (bits >> 10) & 0x1fu;
  const unsigned fraction = bits & 0x3ffu;
  if (exponent_field == 0x1f) return std::nullopt;
  // Subnormals: fraction * 2^-24; normals: (1024 + fraction) * 2^(e - 25).
  const unsigned significand = exponent_field == 0 ? fraction : 1024 + fraction;
  const int exponent = exponent_field == 0 ? -24 : static_cast<int>(exponent_field) - 25;
  Rational value(significand);
  if (exponent >= 0)
    mpq_mul_2exp(value.get_mpq_t(), value.get_mpq_t(), static_cast<mp_bitcnt_t>(exponent));
  else
    mpq_div_2exp(value.get_mpq_t(), value.get_mpq_t(), static_cast<mp_bitcnt_t>(-exponent));
  if (bits & 0x8000u) value = -value;
  return value;
}

std::optional<Rational> rational_if_finite(double value) {
  if (!std::isfinite(value)) return std::nullopt;
  return rational_from_double(value);  // exact: every finite double is dyadic
}

std::optional<Rational> rational_from_float_bits(std::uint32_t bits) {
  return rational_if_finite(static_cast<double>(std::bit_cast<float>(bits)));  // float -> double is exact
}

// bfloat16 is the top half of a float32.
std::optional<Rational> rational_from_bfloat_bits(std::uint16_t bits) {
  return rational_from_float_bits(std::uint32_t{bits} << 16);
}

void check_stored_count(std::size_t stored, std::size_t declared, const std::string& what) {
  if (stored != declared)
    throw input_error(what + ": stores " + std::to_string(stored) + " values but its shape declares " +
                      std::to_string(declared));
}

}  // namespace

// ---- Names and messages -------------------------------------------------------

std::string single_quoted(const std::string& text) { return "'" + text + "'"; }

std::string node_label(const onnx::NodeProto& node, int index) {
  // Appended piece by piece: GCC 12 warns falsely (-Wrestrict) on "#" + to_string(i).
  std::string label = "node ";
  if (node.name().empty()) label.append("#").append(std::to_string(index));
  else label.append(single_quoted(node.name()));
  return label.append(" (").append(node.op_type()).append(")");
}

std::string type_name(int data_type) {
  switch (data_type) {
    case TensorProto::FLOAT: return "float32";
    case TensorProto::DOUBLE: return "float64";
    case TensorProto::FLOAT16: return "float16";
    case TensorProto::BFLOAT16: return "bfloat16";
    case TensorProto::INT64: return "int64";
    case TensorProto::INT32: return "int32";
    default: return "ONNX data type " + std::to_string(data_type);
  }
}

std::string dims_text(const std::vector<std::int64_t>& dims) {
  std::string text = "[";
  for (std::size_t i = 0; i < dims.size(); ++i) text += (i ? ", " : "") + std::to_string(dims[i]);
  return text + "]";
}

// ---- Stored tensors -----------------------------------------------------------


std::size_t element_count(const TensorProto& tensor, const std::string& what) {
  std::size_t count = 1;
  for (std::int64_t dim : tensor.dims()) {
    if (dim < 0) throw input_error(what + ": negative dimension " + std::to_string(dim));
    // A declared size beyond what any file can hold is refused before allocating.
    if (dim != 0 && count > max_onnx_file_bytes / static_cast<std::size_t>(dim))
      throw input_error(what + ": declared size is larger than any ONNX file pleat reads");
    count *= static_cast<std::size_t>(dim);
  }
  return count;
}


// The exact values of a float tensor; `what` names it in messages.
Tensor read_tensor(const TensorProto& tensor, const std::string& what) {
  if (tensor.data_location() == TensorProto::EXTERNAL || tensor.external_data_size() > 0)
    throw input_error(what + ": weights stored in an external file are not supported (save the model with its weights inside)");
  Tensor result;
  result.dims.assign(tensor.dims().begin(), tensor.dims().end());
  const std::size_t count = element_count(tensor, what);
  const bool is_raw = tensor.has_raw_data();
  const std::string& raw = tensor.raw_data();
  const int type = tensor.data_type();

  auto raw_width = [&](std::size_t width) {
    if (raw.size() != count * width)
      throw input_error(what + ": raw data holds " + std::to_string(raw.size()) + " bytes, but " +
                        std::to_string(count) + " " + type_name(type) + " values need " +
                        std::to_string(count * width));
  };
  auto push_value = [&](std::optional<Rational> value, std::size_t index) {
    if (!value)
      throw input_error(what + ": element " + std::to_string(index) +
                        " is NaN or infinite (a network with such a weight has no exact meaning)");
    result.values.push_back(std::move(*value));
  };

  // Room for as many values as the file stores at most (a raw value takes
  // two bytes or more), not for the declared count: a forged dims field may
  // declare billions, and the checks below refuse it only after this.
  const std::size_t stored = is_raw ? raw.size()
                                    : static_cast<std::size_t>(tensor.float_data_size()) +
                                          static_cast<std::size_t>(tensor.double_data_size()) +
                                          static_cast<std::size_t>(tensor.int32_data_size());
  result.values.reserve(type == TensorProto::INT64 || type == TensorProto::INT32 ? 0 : std::min(count, stored));
  switch (type) {
    case TensorProto::FLOAT:
      if (is_raw) {
        raw_width(4);
        for (std::size_t i = 0; i < count; ++i)
          push_value(rational_from_float_bits(static_cast<std::uint32_t>(little_endian(raw, 4 * i, 4))), i);
      } else {
        check_stored_count(static_cast<std::size_t>(tensor.float_data_size()), count, what);
        for (std::size_t i = 0; i < count; ++i)
          push_value(rational_if_finite(static_cast<double>(tensor.float_data(static_cast<int>(i)))), i);
      }
      break;
    case TensorProto::DOUBLE:
      if (is_raw) {
        raw_width(8);
        for (std::size_t i = 0; i < count; ++i)
          push_value(rational_if_finite(std::bit_cast<double>(little_endian(raw, 8 * i, 8))), i);
      } else {
        check_stored_count(static_cast<std::size_t>(tensor.double_data_size()), count, what);
        for (std::size_t i = 0; i < count; ++i)
          push_value(rational_if_finite(tensor.double_data(static_cast<int>(i))), i);
      }
      break;
    case TensorProto::FLOAT16:
    case TensorProto::BFLOAT16: {
      // Typed storage keeps each 16-bit pattern in the low half of an int32.
      auto decode = [&](std::uint16_t bits) {
        return type == TensorProto::FLOAT16 ? rational_from_half_bits(bits) : rational_from_bfloat_bits(bits);
      };
      if (is_raw) {
        raw_width(2);
        for (std::size_t i = 0; i < count; ++i)
          push_value(decode(static_cast<std::uint16_t>(little_endian(raw, 2 * i, 2))), i);
      } else {
        check_stored_count(static_cast<std::size_t>(tensor.int32_data_size()), count, what);
        for (std::size_t i = 0; i < count; ++i)
          push_value(decode(static_cast<std::uint16_t>(tensor.int32_data(static_cast<int>(i)) & 0xffff)), i);
      }
      break;
    }
    case TensorProto::INT64:
      if (is_raw) {
        raw_width(8);
        for (std::size_t i = 0; i < count; ++i)
          result.integers.push_back(static_cast<std::int64_t>(little_endian(raw, 8 * i, 8)));
      } else {
        check_stored_count(static_cast<std::size_t>(tensor.int64_data_size()), count, what);
        result.integers.assign(tensor.int64_data().begin(), tensor.int64_data().end());
      }
      break;
    case TensorProto::INT32:
      if (is_raw) {
        raw_width(4);
        for (std::size_t i = 0; i < count; ++i)
          result.integers.push_back(static_cast<std::int32_t>(little_endian(raw, 4 * i, 4)));
      } else {
        check_stored_count(static_cast<std::size_t>(tensor.int32_data_size()), count, what);
        result.integers.assign(tensor.int32_data().begin(), tensor.int32_data().end());
      }
      break;
    default:
      throw input_error(what + ": stored as " + type_name(type) +
                        "; pleat reads float32, float64, float16 and bfloat16 weights");
  }
  return result;
}

// ---- Attributes -----------------------------------------------------------------

const onnx::AttributeProto* find_attribute(const onnx::NodeProto& node, const std::string& name) {
  for (const auto& attribute : node.attribute())
    if (attribute.name() == name) return &attribute;
  return nullptr;
}

std::int64_t int_attribute(const onnx::NodeProto& node, const std::string& name, std::int64_t fallback) {
  const auto* attribute = find_attribute(node, name);
  return attribute ? attribute->i() : fallback;
}

// A float attribute as the exact rational of its float32 value.
Rational float_attribute(const onnx::NodeProto& node, const std::string& name, const std::string& label) {
  const auto* attribute = find_attribute(node, name);
  if (!attribute) return Rational(1);  // Gemm's alpha and beta default to 1.0
  const std::optional<Rational> value = rational_if_finite(static_cast<double>(attribute->f()));
  if (!value) throw input_error(label + ": attribute " + name + " is NaN or infinite");
  return *value;
}

}  // namespace pleat::detail
