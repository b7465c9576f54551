// Reading region files (pleat-regions/1) back: the one reader, shared by
// verify and draw --from.
// Every fault is an input_error naming the line and the key.
#pragma once

#include "cli/common.hpp"
#include "core/pattern.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walk_check.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace pleat::cli {

// Region files are read one line at a time; a region line of a large network
// with its certificate is far below this.
inline constexpr std::size_t max_region_line_bytes = std::size_t{64} << 20;

class LineReader {
 public:
  LineReader(const Network& network, std::size_t line) : network_(network), line_(line) {}
  // Numbers, patterns and multiplier keys must then be written exactly as
  // pleat writes them (lowest terms, spec pattern notation, no zero
  // multipliers): what verify needs so that no text differs from what it checks.
  void require_canonical() { canonical_ = true; }

  [[noreturn]] void fail(const std::string& what) const;
  std::size_t line() const { return line_; }
  const Json& field(const Json& object, const char* key) const;
  Rational rational(const Json& value) const;             // an exact number written as a string
  RationalVector rationals(const Json& value) const;
  std::vector<std::size_t> indices(const Json& value) const;
  ActivationPattern pattern(const Json& value) const;
  RationalVector sparse(const Json& value, std::size_t size) const;  // {"index": value}, zero elsewhere

 private:
  const Network& network_;
  std::size_t line_;
  bool canonical_ = false;
};

// The header's "domain" (as cli/formats/region_json.cpp's domain_to_json writes it).
Domain domain_from_json(const Json& value, std::size_t input_dim, const LineReader& reader);

// How a region file is read. exact_copy (verify): every key is required or
// refused as docs/formats.md says, numbers, patterns and the domain are
// written exactly as pleat writes them, a repeated key or an empty line is
// refused, so nothing in the file escapes the check. tolerant (draw --from):
// only what a figure needs is required; unknown keys, empty lines and
// non-canonical numbers are accepted, and certificates are skipped.
enum class RegionFileReading { exact_copy, tolerant };

// A region file read back: the header and one record per region line.
struct RegionFile {
  std::string path;  // as messages name the file ("standard input" for -)
  Domain domain;
  std::string network_label;                        // the header's "network" ("" when tolerant and absent)
  std::optional<std::size_t> parametric_dimension;  // the header's, when written
  std::vector<SavedRegion> regions;                 // in file order
};

// Reads one region file (pleat-regions/1) one line at a time. Throws
// input_error naming the file, the line and the key for any fault. Nothing
// is re-checked against the network here beyond sizes (enumerate/walk_check.hpp
// does that).
RegionFile read_region_file(const Network& network, const std::string& path, RegionFileReading reading);

}  // namespace pleat::cli
