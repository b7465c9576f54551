// The kernel check's exact products in fixed-width integers, for networks
// whose scaled coefficient-block entries fit in 127 bits (kernel_check.hpp:
// AnnihilationCheck uses it then instead of one pass per prime). Internal to
// enumerate/ (not installed).
//
// Arithmetic modulo 2^128 is exact ring arithmetic on the integers: the
// fraction-free layer inputs X_k = L^k x_k and backward signals
// H_k = L^(d-1-k) G_k computed modulo 2^128 (from L W_k and L^(k+1) b_k,
// integers) are right modulo 2^128, so is each scaled entry F = H X (or
// H L^k at a bias), and |F| <= B_c < 2^127 makes F's two's complement the
// integer itself. A vector's product N = sum_c e_c F_c is then taken modulo
// 2^(64 n) with n limbs such that 2^(64 n) exceeds its bound L^(d-1) sum_c
// B_c |e_c| >= |N|: N = 0 modulo 2^(64 n) proves N = 0. One pass over a
// region's layers serves every vector, where the check modulo primes needs
// one per prime (15 for random 2,15,15,15,15,1 seed 1).
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "enumerate/detail/kernel_check.hpp"

#include <cstddef>
#include <cstdint>
#include <utility>
#include <vector>

namespace pleat::detail {

class IntegerCheck {
 public:
  using Entries = std::vector<std::pair<std::size_t, Integer>>;  // (column, primitive integer entry)

  // Whether every scaled bound B_c is below 2^127 (the premise above).
  static bool applies(const CheckScale& check_scale);

  // vectors[v]: vector v's nonzero entries, primitive integers, columns
  // increasing; bounds[v] >= L^(d-1) sum_c B_c |e_c|. Precondition: applies.
  IntegerCheck(const Network& network, const CheckScale& check_scale, const std::vector<Entries>& vectors,
               const std::vector<Integer>& bounds);

  // True exactly when every vector v with live[v] annihilates every row of
  // the pattern's blocks (the others are not looked at). Exact.
  [[nodiscard]] bool annihilates(const ActivationPattern& pattern, const std::vector<char>& live) const;

 private:
  __extension__ typedef unsigned __int128 Wide;
  static constexpr std::size_t bias = static_cast<std::size_t>(-1);
  struct Term {
    std::size_t input;  // bias for the bias
    std::size_t limbs;  // offset of e_c's n limbs (two's complement modulo 2^(64 n)) in limbs_
  };
  struct Run {  // one neuron's terms: they share H_k[o, neuron]
    std::size_t layer, neuron, first, last;
  };
  struct Vector {
    std::size_t index;  // among the check's vectors
    std::size_t limbs;  // n
    std::vector<Run> runs;
  };
  struct Unit {  // a vector with one entry: its column must be 0
    std::size_t index, layer, neuron, input;
  };
  std::size_t depth_ = 0, n0_ = 0, nd_ = 0;
  bool output_relu_ = false;
  std::vector<std::size_t> widths_;
  std::vector<std::vector<Wide>> weights_;  // L W_k modulo 2^128, row-major
  std::vector<std::vector<Wide>> biases_;   // L^(k+1) b_k modulo 2^128
  std::vector<Wide> powers_;                // L^k modulo 2^128
  std::vector<std::size_t> neuron_layer_;   // layer of each ReLU neuron
  std::vector<Vector> vectors_;
  std::vector<Term> terms_;
  std::vector<std::uint64_t> limbs_;
  std::vector<Unit> units_;
  std::size_t forward_to_ = 0, backward_to_ = 0, most_limbs_ = 1;
  std::uint64_t id_ = 0;  // for each thread's reuse of layer inputs

  struct Factors;
  void compute_factors(const ActivationPattern& pattern, Factors& factors, std::size_t reuse_below) const;
};

}  // namespace pleat::detail
