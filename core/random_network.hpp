// Reproducible random networks: the same arguments give the same network,
// bit for bit, on every machine and compiler (no standard-library
// distributions, no libm; every transcendental step is correctly rounded by
// MPFR, and the last step is an exact decimal rounding).
//
// How (seed, sample) become numbers:
//   splitmix64(s): s += 0x9E3779B97F4A7C15; z = s;
//                  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9;
//                  z = (z ^ (z >> 27)) * 0x94D049BB133111EB;
//                  return z ^ (z >> 31)            (all arithmetic mod 2^64)
//   key   = splitmix64 with s = seed (its first output)
//   s     = key XOR sample
//   the xoshiro256** state is the next four outputs of splitmix64 from s, so
//   for one seed different samples get different streams.
//   The stream is xoshiro256** (Blackman and Vigna, 2018), one 64-bit word per
//   step: result = rotl(s1 * 5, 7) * 9, then its usual state update.
// How words become values (all in 128-bit MPFR, correctly rounded per step):
//   uniform u in [0, 1):  (word >> 11) / 2^53, exact;
//   uniform u in (0, 1]:  ((word >> 11) + 1) / 2^53, exact;
//   normal:  u1 in (0, 1] from one word, then u2 in [0, 1) from the next,
//            N = sqrt(-2 log u1) * cos(2 pi u2) (Box-Muller, cosine branch only);
//   --init he:      weight = N * sqrt(2 / fan_in), bias = N * sqrt(1 / fan_in);
//   --init uniform: value = (2u - 1) / sqrt(fan_in), u in [0, 1) from one word.
//   Each value is then rounded to `digits` significant decimal digits (MPFR's
//   correctly rounded mpfr_get_str, round to nearest, of the 128-bit value)
//   and kept as that exact decimal rational. A bias that comes out exactly 0 is drawn again (else
//   every first-layer hyperplane would pass through the origin); weights may
//   be anything.
// Order of draws: layer by layer from the first; within a layer all weights
// row by row (row i = neuron i, the file's orientation), then the biases.
// That is the parameter order of the network format.
// Hidden layers are ReLU, the output layer linear. `meta` records the
// generator ("pleat-random/1": any change to the above must change this
// label), architecture, seed, sample, init and digits.
#pragma once

#include "core/network.hpp"

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace pleat {

enum class Initialization { he, uniform };

// "he" / "uniform"; parse throws input_error for anything else.
std::string_view initialization_name(Initialization init);
Initialization parse_initialization(std::string_view text);

// The network with layer widths `architecture` (input first, at least two
// entries, all positive) drawn as described above. Preconditions:
// architecture as said, 1 <= digits <= 40; otherwise throws usage_error.
// Exact: the parameters are the decimal rationals described, nothing else.
Network random_network(const std::vector<std::size_t>& architecture, std::uint64_t seed,
                       std::uint64_t sample = 0, Initialization init = Initialization::he,
                       int digits = 6);

// The generator itself, exposed for tests and for anything else that must
// draw reproducibly from (seed, sample).
class RandomStream {
 public:
  RandomStream(std::uint64_t seed, std::uint64_t sample);
  std::uint64_t next_word();

 private:
  std::uint64_t state_[4];
};

}  // namespace pleat
