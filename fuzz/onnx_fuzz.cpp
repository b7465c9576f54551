// Fuzzes the ONNX importer (core/onnx_io.hpp) on raw model bytes. Whatever
// it accepts is a valid network; exported without rounding and imported
// again, it is the same network.
#include "core/onnx_io.hpp"

#include <cstdint>
#include <cstdlib>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  pleat::Network network;
  try {
    network = pleat::parse_onnx_model(bytes, "fuzz.onnx");
  } catch (const pleat::input_error&) {
    return 0;
  }
  network.validate();
  pleat::OnnxExport exported;
  try {
    exported = pleat::write_onnx_model(network);
  } catch (const pleat::input_error&) {
    return 0;  // a parameter beyond the float64 range (float16/bfloat16 never are, but the check is documented)
  }
  if (!exported.rounded_parameters.empty()) return 0;
  pleat::Network again = pleat::parse_onnx_model(exported.bytes, "fuzz.onnx");
  again.name = network.name;          // names and meta (producer, opset) are the exporter's own
  again.meta_json = network.meta_json;
  if (again != network) std::abort();
  return 0;
}
