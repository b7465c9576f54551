// Reading and writing the network file format (spec: network-format.md) and
// pleat's domain file format (outputs.md). Reading is exact: numbers are taken
// from their literal text, never through a double.
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

// The whole of a stream (standard input) as text, refusing more than
// max_network_file_bytes; `name` starts the message.
std::string read_limited(std::istream& stream, const std::string& name);

// The canonical document (rationals as strings in lowest terms, name and meta
// kept). parse_network(write_network(n)) == n.
std::string write_network(const Network& network);

// A "pleat-domain/1" document: the open polytope {x : normal . x + offset > 0}
// (shared/spec/outputs.md, Domains). Read exactly, with the same path-first
// messages as networks; whether it is full-dimensional is the caller's check.
struct PolytopeDocument {
  std::size_t input_dim = 0;
  std::vector<std::pair<RationalVector, Rational>> constraints;  // (normal, offset)
};
PolytopeDocument parse_domain(std::string_view json_text);
PolytopeDocument read_domain_file(const std::filesystem::path& path);

}  // namespace pleat
