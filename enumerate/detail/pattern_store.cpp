#include "enumerate/detail/pattern_store.hpp"

#include "core/errors.hpp"

#include <algorithm>
#include <bit>
#include <limits>
#include <string>

namespace pleat::detail {
namespace {

constexpr std::size_t states_per_word = 32;
constexpr std::uint32_t max_patterns = std::numeric_limits<std::uint32_t>::max() - 1;

// Two bits per state, the first state highest: comparing the words as
// unsigned integers compares the states lexicographically (NeuronState's
// values are 0..3, in the order operator<=> uses).
void pack(const ActivationPattern& pattern, std::uint64_t* words, std::size_t word_count) {
  std::fill(words, words + word_count, 0);
  for (std::size_t i = 0; i < pattern.states.size(); ++i) {
    const auto code = static_cast<std::uint64_t>(pattern.states[i]) & 3u;
    words[i / states_per_word] |= code << (62 - 2 * (i % states_per_word));
  }
}

std::uint64_t mix(std::uint64_t x) {  // splitmix64's finaliser
  x ^= x >> 30;
  x *= 0xbf58476d1ce4e5b9ULL;
  x ^= x >> 27;
  x *= 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

}  // namespace

PatternStore::PatternStore(std::size_t neurons)
    : neurons_(neurons), words_(std::max<std::size_t>(1, (neurons + states_per_word - 1) / states_per_word)),
      index_(64, 0), scratch_(words_) {}

std::uint64_t PatternStore::hash_of(const std::uint64_t* words) const {
  std::uint64_t h = 0x9e3779b97f4a7c15ULL;
  for (std::size_t w = 0; w < words_; ++w) h = mix(h ^ words[w]);
  return h;
}

void PatternStore::grow() {
  std::vector<std::uint32_t> bigger(index_.size() * 2, 0);
  const std::size_t mask = bigger.size() - 1;
  for (std::uint32_t slot = 0; slot < count_; ++slot) {
    std::size_t cell = hash_of(words_of(slot)) & mask;
    while (bigger[cell] != 0) cell = (cell + 1) & mask;
    bigger[cell] = slot + 1;
  }
  index_ = std::move(bigger);
}

std::pair<std::uint32_t, bool> PatternStore::insert(const ActivationPattern& pattern) {
  if (pattern.states.size() != neurons_) throw usage_error("PatternStore: pattern has the wrong number of neurons");
  pack(pattern, scratch_.data(), words_);
  const std::size_t mask = index_.size() - 1;
  std::size_t cell = hash_of(scratch_.data()) & mask;
  for (; index_[cell] != 0; cell = (cell + 1) & mask) {
    const std::uint32_t slot = index_[cell] - 1;
    if (std::equal(scratch_.begin(), scratch_.end(), words_of(slot))) return {slot, false};
  }
  if (count_ >= max_patterns)
    throw limit_error("walk: more than " + std::to_string(max_patterns) + " activation patterns");
  const auto slot = static_cast<std::uint32_t>(count_++);
  packed_.insert(packed_.end(), scratch_.begin(), scratch_.end());
  index_[cell] = slot + 1;
  if (2 * count_ > index_.size()) grow();  // load factor at most 1/2
  return {slot, true};
}

ActivationPattern PatternStore::pattern(std::uint32_t slot) const {
  ActivationPattern out;
  out.states.resize(neurons_);
  const std::uint64_t* words = words_of(slot);
  for (std::size_t i = 0; i < neurons_; ++i)
    out.states[i] = static_cast<NeuronState>((words[i / states_per_word] >> (62 - 2 * (i % states_per_word))) & 3u);
  return out;
}

bool PatternStore::less(std::uint32_t a, std::uint32_t b) const {
  return std::lexicographical_compare(words_of(a), words_of(a) + words_, words_of(b), words_of(b) + words_);
}

std::size_t PatternStore::common_prefix(std::uint32_t a, std::uint32_t b) const {
  const std::uint64_t* x = words_of(a);
  const std::uint64_t* y = words_of(b);
  for (std::size_t w = 0; w < words_; ++w) {
    const std::uint64_t differ = x[w] ^ y[w];
    if (differ != 0)
      return std::min(neurons_, w * states_per_word + static_cast<std::size_t>(std::countl_zero(differ)) / 2);
  }
  return neurons_;
}

}  // namespace pleat::detail
