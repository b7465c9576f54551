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
  // One neuron's terms: they share H_k[o, neuron]. A run of several terms
  // in a layer before the last keeps M_t = sum over its terms of e_c
  // X_k[j]_t (modulo 2^(64 n), each thread its own, `cache` its offset
  // there) while layer k's inputs stay those it was computed from: X_k
  // depends on the pattern's layers before k only, so patterns in
  // lexicographic order share it (on 2,15,15,15,15,1 seed 1, 1215 regions
  // have 121 distinct first layers and 419 first two), and the run then
  // costs h M_t, not a product per term. The last layer's inputs depend on
  // every hidden layer: no two regions share them, and no run there keeps
  // M_t (the check's time 4.1 -> 3.8 ms there, and 0.95 -> 0.91 ms on
  // 2,15,15,15,1; keeping them too measured no better).
  struct Run {
    std::size_t layer, neuron, first, last;
    std::size_t slot = 0, cache = 0;  // among the cached runs; offset of its (n0 + 1) n limbs
    // Runs [this, group_end) of one term each, all a weight W_k[i_c, j] of
    // one layer k at one input j (group_end > this one's index + 1; else 0):
    // their N_t is X_k[j]_t S with S = sum_c e_c H_k[o, i_c], n limbs, so
    // they cost g + n0 + 1 products, not g (n0 + 1) (on 2,15,15,15,15,1
    // seed 1, three vectors with 9 to 12 such runs: a mix of two neurons).
    std::size_t group_end = 0;
  };
  struct Vector {
    std::size_t index;  // among the check's vectors
    std::size_t limbs;  // n
    std::vector<Run> runs;
    // Every term a weight W_k[i, j] of one layer k at one input j (one term
    // per neuron i: on 2,15,15,15,15,1 seed 1, 37 of the 54 vectors checked,
    // two neurons each): then N_t = X_k[j]_t S with S = sum_c e_c H_k[o, i_c]
    // an integer, so N_t = 0 for every t exactly when X_k[j] = 0 or N_t = 0
    // at one t where X_k[j]_t != 0. One product per term, not n0 + 1.
    bool one_input = false;
    // A one-input vector's passing signals: N = 0 at an X_k[j] != 0 proves
    // S = 0 for those H_k[o, i_c], hence N = 0 at every X_k[j] with the
    // same signals. Each thread keeps, per output o, the signals of the last
    // pass (runs.size() values from `memo`): on 2,15,15,15,15,1 seed 1 the
    // one-input vectors read the last hidden layer, whose signals are the
    // output weights or 0, the same over most consecutive regions.
    std::size_t memo = 0;
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
  std::vector<char> read_last_;  // the inputs j of layer forward_to a term reads: X_{forward_to} only there
  // The neurons i of layer backward_to whose signal a term reads: H_{backward_to} (which feeds no earlier
  // layer) only there.
  std::vector<char> read_first_;
  std::size_t cached_runs_ = 0, cache_limbs_ = 0;
  std::size_t memo_signals_ = 0;  // of every one-input vector (Vector::memo), per output
  std::uint64_t id_ = 0;  // for each thread's reuse of layer inputs

  struct Factors;
  void compute_factors(const ActivationPattern& pattern, Factors& factors, std::size_t reuse_below) const;
  // A run's M_t (n limbs each, t = 0..n0) from its layer's inputs.
  void run_sums(const Run& run, std::size_t n, const Wide* offsets, const Wide* linear, std::uint64_t* m) const;
};

}  // namespace pleat::detail
