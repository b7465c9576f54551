// The walk's seen-set: every activation pattern it has met, packed two bits
// per neuron, with an open-addressing index of 4-byte slots. About 2 * ceil(n/32)
// words plus 8-16 bytes of index per pattern (n neurons), against a hash-set
// node, a vector and its heap block (well over 100 bytes) for
// std::unordered_set<ActivationPattern>.
#pragma once

#include "core/pattern.hpp"

#include <cstddef>
#include <cstdint>
#include <utility>
#include <vector>

namespace pleat::detail {

class PatternStore {
 public:
  // Patterns of `neurons` states each.
  explicit PatternStore(std::size_t neurons);

  // The slot of the pattern (slots count from 0 in order of first insertion
  // and never change) and whether it was new. Throws limit_error beyond
  // 2^32 - 2 patterns. Precondition: pattern.states.size() == neurons.
  std::pair<std::uint32_t, bool> insert(const ActivationPattern& pattern);

  ActivationPattern pattern(std::uint32_t slot) const;
  std::size_t size() const { return count_; }
  std::size_t neurons() const { return neurons_; }

  // As ActivationPattern's <, on the stored patterns.
  bool less(std::uint32_t a, std::uint32_t b) const;
  // How many leading neurons the two stored patterns agree on.
  std::size_t common_prefix(std::uint32_t a, std::uint32_t b) const;

 private:
  const std::uint64_t* words_of(std::uint32_t slot) const { return packed_.data() + std::size_t{slot} * words_; }
  std::uint64_t hash_of(const std::uint64_t* words) const;
  void grow();

  std::size_t neurons_;
  std::size_t words_;                  // 64-bit words per pattern
  std::size_t count_ = 0;
  std::vector<std::uint64_t> packed_;  // slot-major; the first neuron in the top bits of the first word
  std::vector<std::uint32_t> index_;   // slot + 1, or 0 for an empty cell; size a power of two
  std::vector<std::uint64_t> scratch_;
};

}  // namespace pleat::detail
