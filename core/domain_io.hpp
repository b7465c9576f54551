// Reading pleat's domain file format, "pleat-domain/1" (docs/formats.md,
// Domains). Exact: numbers are taken from their literal text. Files above
// max_network_file_bytes (core/network_io.hpp) are refused.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <filesystem>
#include <string_view>
#include <utility>
#include <vector>

namespace pleat {

// A "pleat-domain/1" document: the open polytope {x : normal . x + offset > 0}
// (docs/formats.md, Domains). Read exactly, with the same path-first
// messages as networks; whether it is full-dimensional is the caller's check.
struct PolytopeDocument {
  std::size_t input_dim = 0;
  std::vector<std::pair<RationalVector, Rational>> constraints;  // (normal, offset)
};
PolytopeDocument parse_domain(std::string_view json_text);
PolytopeDocument read_domain_file(const std::filesystem::path& path);

}  // namespace pleat
