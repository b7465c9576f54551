// Fraction-free layer maps for the walker: the network's layers over one
// common denominator each, composed in integers (128-bit when a bound proves
// they fit, GMP otherwise). Every value is exact.
#pragma once

#include "core/evaluate.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <vector>

namespace pleat::detail {

// The network's layers over one common denominator each, for fraction-free
// layer maps: layer k is (weights / denominator, bias / denominator) with
// integer weights and bias. Built once per walk.
struct IntegerLayer {
  std::size_t rows = 0, cols = 0;
  std::vector<Integer> weights;  // rows x cols, row-major
  std::vector<Integer> bias;
  Integer denominator = 1;
  bool is_relu = true;
};

// An affine map of x with integer entries over one positive denominator.
struct IntegerMap {
  std::size_t rows = 0, cols = 0;
  std::vector<Integer> linear;  // rows x cols
  std::vector<Integer> offset;
  Integer denominator = 1;
};

// Fraction-free layer maps in fixed-width integers, when a bound proves they
// fit: with S_k = max_r sum_t |W_k[r][t]| and E_k the product of the
// denominators of layers 1..k, every entry of layer k's linear part is at most
// L_k = S_k L_(k-1) (L_0 = 1) and every offset at most
// O_k = E_(k-1) max_r |b_k[r]| + S_k O_(k-1) (O_0 = 0), whatever the pattern
// (a neuron that is off only drops terms); each partial sum of a row is
// bounded the same way. All of them below 2^125 make every product below
// exact in __int128; below 2^253 (and every weight below 2^63), exact in
// Int256's arithmetic modulo 2^256. Beyond that, GMP.
__extension__ typedef __int128 Wide;
__extension__ typedef unsigned __int128 UnsignedWide;

// A 256-bit two's complement integer, least significant limb first. Sums and
// products are taken modulo 2^256, which is exact for values in
// (-2^255, 2^255): the bound above keeps every map entry and partial sum below
// 2^253 in magnitude.
struct Int256 {
  std::array<std::uint64_t, 4> limbs{};
};

// acc += weight * x (modulo 2^256).
inline void add_product(Int256& acc, std::int64_t weight, const Int256& x) {
  const std::uint64_t m = weight < 0 ? 0 - static_cast<std::uint64_t>(weight) : static_cast<std::uint64_t>(weight);
  std::array<std::uint64_t, 4> product;
  UnsignedWide carry = 0;
  for (std::size_t i = 0; i < 4; ++i) {
    const UnsignedWide t = static_cast<UnsignedWide>(x.limbs[i]) * m + carry;
    product[i] = static_cast<std::uint64_t>(t);
    carry = t >> 64;
  }
  if (weight >= 0) {
    UnsignedWide sum = 0;
    for (std::size_t i = 0; i < 4; ++i) {
      sum += static_cast<UnsignedWide>(acc.limbs[i]) + product[i];
      acc.limbs[i] = static_cast<std::uint64_t>(sum);
      sum >>= 64;
    }
  } else {
    std::uint64_t borrow = 0;
    for (std::size_t i = 0; i < 4; ++i) {
      const std::uint64_t a = acc.limbs[i];
      const std::uint64_t b = product[i];
      const std::uint64_t difference = a - b - borrow;
      borrow = (a < b || (a == b && borrow)) ? 1 : 0;
      acc.limbs[i] = difference;
    }
  }
}

template <class T>
struct FixedLayers {  // for T = Wide
  std::vector<std::vector<T>> weights;  // per layer, rows x cols
  std::vector<std::vector<T>> bias;
  std::vector<T> input_denominator;     // per layer: E_(k-1)
  std::vector<Integer> map_denominator;  // per layer: E_k
};

// The layers for Int256 maps: weights in 64 bits, and per row the exact
// product E_(k-1) b_k[r] that starts each offset; the leading layers whose
// bound fits 128 bits also as FixedLayers<Wide> (`low`), composed in Wide.
struct Layers256 {
  FixedLayers<Wide> low;                           // layers 0 .. low.weights.size() - 1
  std::vector<std::vector<std::int64_t>> weights;  // per layer, rows x cols
  std::vector<std::vector<Int256>> bias_term;      // per layer, rows
  std::vector<Integer> map_denominator;            // per layer: E_k
};


std::vector<IntegerLayer> integer_layers(const Network& network);

// The layers in 128 (256) bits when the bound above proves every map of
// every pattern fits; nullopt otherwise.
std::optional<FixedLayers<Wide>> wide_layers(const std::vector<IntegerLayer>& layers);
std::optional<Layers256> layers_256(const std::vector<IntegerLayer>& layers);

// Layer k's pre-activation rows (n linear entries, then the offset) from the
// previous layer's rows, only those with active[t] (neurons that are on).
void compose_fixed(const IntegerLayer& layer, const FixedLayers<Wide>& fixed, std::size_t k, std::size_t n,
                   const std::vector<Wide>& input, const std::vector<char>& active, std::vector<Wide>& out);
void compose_fixed(const IntegerLayer& layer, const Layers256& fixed, std::size_t k, std::size_t n,
                   const std::vector<Int256>& input, const std::vector<char>& active, std::vector<Int256>& out);

void set_integer(Integer& out, Wide value);
void set_integer(Integer& out, const Int256& value);
Int256 to_int256(const Integer& value);  // precondition: |value| < 2^255
Int256 to_int256(Wide value);

// Layer k's pre-activation map from the previous pre-activation map, with the
// input's rows limited to those with active[t] (the neurons that are on).
// Reuses out's integers (no allocation once the buffers have grown).
void compose_active(const IntegerLayer& layer, const IntegerMap& input, const std::vector<char>& active,
                    IntegerMap& out);

AffineMap to_rational_map(const IntegerMap& map);

// maps_on_pattern (core/evaluate.hpp) with the same exact values, computed
// fraction-free. Exact.
PatternMaps maps_on_pattern_fraction_free(const std::vector<IntegerLayer>& layers, std::size_t input_dim,
                                          const ActivationPattern& pattern);

inline bool is_zero_linear(const IntegerMap& map, std::size_t r) {
  for (std::size_t c = 0; c < map.cols; ++c)
    if (sgn(map.linear[r * map.cols + c]) != 0) return false;
  return true;
}

// A pattern's fraction-free pre-activation maps, every layer, in the
// narrowest integers the bound allows (Wide, else Int256 with its leading
// layers in Wide, else GMP). Layer k's map depends only on the states of the
// layers below k, so the maps of the previous pattern are kept up to the
// first layer whose states differ (a walk hands each thread patterns in
// sorted order). Exact. One per thread; layers must outlive it.
class PatternLayerMaps {
 public:
  PatternLayerMaps(const Network& network, const std::vector<IntegerLayer>& layers);
  // Every layer's pre-activation map for the pattern (valid until the next call).
  // Polls the stop request on the GMP tier (may throw Stopped).
  const std::vector<IntegerMap>& compute(const ActivationPattern& pattern);

 private:
  std::size_t first_layer_to_compute(const ActivationPattern& pattern) const;
  void set_active(const ActivationPattern& pattern, std::size_t k);
  void compute_gmp_maps(const ActivationPattern& pattern, std::size_t start);
  template <class T, class Layers>
  void compute_fixed_maps(const ActivationPattern& pattern, std::size_t start, const Layers& fixed,
                          const std::vector<T>& identity, std::vector<std::vector<T>>& fixed_pre);
  void compute_mixed_maps(const ActivationPattern& pattern, std::size_t start);
  template <class T>
  void store_map(std::size_t k, const std::vector<T>& values, const Integer& denominator);

  const Network& network_;
  const std::vector<IntegerLayer>& layers_;
  std::optional<FixedLayers<Wide>> wide_;  // the layers in 128 bits, when every map provably fits
  std::optional<Layers256> wide256_;       // else in 256 bits, when those provably fit
  IntegerMap identity_;
  std::vector<Wide> wide_identity_;
  std::vector<Int256> wide256_identity_;
  std::vector<std::vector<Wide>> wide_pre_;
  std::vector<std::vector<Int256>> wide256_pre_;
  std::vector<Int256> widened_;            // the last 128-bit layer's map, widened
  std::vector<char> active_;
  ActivationPattern maps_pattern_;         // the pattern of pre_'s maps (no states: none)
  std::vector<IntegerMap> pre_;            // per layer, the pre-activation map
};

// build_pattern_cell given the pattern's maps (however they were computed).
std::optional<PatternCell> cell_from_maps(const Network& network, const Domain& domain,
                                          const ActivationPattern& pattern, PatternMaps maps);

}  // namespace pleat::detail
