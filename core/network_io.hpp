// Reading and writing the network file format (docs/formats.md, Networks).
// Reading is exact: numbers are taken from their literal text, never through
// a double. Domain files: core/domain_io.hpp.
#pragma once

#include "core/network.hpp"

#include <cstdint>
#include <filesystem>
#include <iosfwd>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace pleat {

// Parses a "pleat-network/1" document. Throws input_error with one message
// naming the JSON path of the first fault, e.g.
// "layers[1].weights[2]: expected 3 numbers, found 2". Nothing is returned
// half-read.
Network parse_network(std::string_view json_text);

// Network and domain files larger than this are refused before they are read:
// a network of a few MiB is already far past what a walk can handle.
inline constexpr std::uintmax_t max_network_file_bytes = std::uintmax_t{64} << 20;  // 64 MiB

// Reads a file; a missing or unreadable file is an input_error naming it (so
// is one above max_network_file_bytes), and
// every fault of parse_network comes back prefixed with the file name:
// "FILE: layers[0].bias: missing field".
Network read_network_file(const std::filesystem::path& path);

// A network file of either kind pleat reads, chosen by its name: ONNX when the
// extension is .onnx (core/onnx_io.hpp), otherwise pleat-network/1 JSON; "-"
// reads JSON from standard input (messages then start with "<stdin>: ").
// Errors as read_network_file / read_onnx_file. Defined in read_network_any.cpp
// so that a program reading only JSON does not link the ONNX reader.
Network read_network_any(const std::string& path);

// The whole of a stream (standard input) as text, refusing more than
// max_network_file_bytes; `name` starts the message.
std::string read_limited(std::istream& stream, const std::string& name);

// The canonical document (rationals as strings in lowest terms, name and meta
// kept). parse_network(write_network(n)) == n.
std::string write_network(const Network& network);

}  // namespace pleat
