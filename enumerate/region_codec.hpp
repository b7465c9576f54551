// Regions and activation patterns as bytes, for handing a walk's work between
// processes (enumerate/distributed_walk.hpp). Exact: decoding gives back every
// value as it was, each rational bit for bit. The bytes are an in-flight
// format between processes of one pleat build, not a file format: nothing
// versions them.
#pragma once

#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace pleat {

// Appends values to a byte string.
class ByteWriter {
 public:
  void put_unsigned(std::uint64_t value);  // LEB128: 1 byte below 128
  void put_bool(bool value) { put_unsigned(value ? 1 : 0); }
  void put_bytes(std::string_view bytes);  // length, then the bytes
  void put_rational(const Rational& value);
  void put_vector(const RationalVector& values);
  void put_pattern(const ActivationPattern& pattern);  // 2 bits per neuron state
  std::string& bytes() { return bytes_; }
  std::string take() { return std::move(bytes_); }

 private:
  std::string bytes_;
};

// Reads what a ByteWriter wrote, in the same order. Every read throws
// std::runtime_error ("truncated or corrupt message") when the bytes run out
// or do not fit, never reads past them.
class ByteReader {
 public:
  explicit ByteReader(std::string_view bytes) : bytes_(bytes) {}
  std::uint64_t get_unsigned();
  std::size_t get_size();  // get_unsigned, checked against what is left (a count of items)
  bool get_bool() { return get_unsigned() != 0; }
  std::string_view get_bytes();
  Rational get_rational();
  RationalVector get_vector();
  ActivationPattern get_pattern();
  bool at_end() const { return position_ == bytes_.size(); }

 private:
  std::string_view take(std::size_t count);
  std::string_view bytes_;
  std::size_t position_ = 0;
};

// Every field of a Region, its certificates included when present.
void put_region(ByteWriter& out, const Region& region);
Region get_region(ByteReader& in);

}  // namespace pleat
