// read_network_any (core/network_io.hpp), in a file of its own: it is the one
// caller outside onnx_import.cpp of the ONNX reader, and keeping it apart keeps
// protobuf out of programs that only read JSON (core/CMakeLists.txt).
#include "core/network_io.hpp"

#include "core/onnx_io.hpp"

#include <iostream>
#include <string>

namespace pleat {

Network read_network_any(const std::string& path) {
  if (path != "-" && is_onnx_path(path)) return read_onnx_file(path);
  if (path != "-") return read_network_file(path);
  const std::string text = read_limited(std::cin, "<stdin>");
  try {
    return parse_network(text);
  } catch (const input_error& fault) {
    throw input_error(std::string("<stdin>: ") + fault.what());
  }
}

}  // namespace pleat
