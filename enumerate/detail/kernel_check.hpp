// The exact check behind certify's upper bound: that given rational vectors
// annihilate every coefficient-block row of given patterns, decided in word
// arithmetic modulo a modulus above a proved bound (2^64n, or enough primes
// by the Chinese remainder theorem): a deterministic proof. Internal to
// enumerate/ (not installed).
#pragma once

#include "core/jacobian.hpp"
#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "core/stop.hpp"

#include <flint/nmod.h>

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <functional>
#include <memory>
#include <optional>
#include <utility>
#include <vector>

namespace pleat::detail {

// Rational rows kept by their nonzero entries: certify's extra directions
// are mostly one or two entries among thousands of columns, and a dense
// RationalMatrix of them costs a GMP allocation per entry (several, as it is
// copied and moved). Each row's entries (column, value): columns
// increasing, values nonzero. Exact.
struct SparseRationalRows {
  using Row = std::vector<std::pair<std::size_t, Rational>>;
  std::size_t cols = 0;
  std::vector<Row> rows;

  static SparseRationalRows from_dense(const RationalMatrix& dense);
  RationalMatrix dense() const;
  friend bool operator==(const SparseRationalRows&, const SparseRationalRows&) = default;
};

// Rows modulo a prime kept by their nonzero entries (column, residue),
// columns increasing: E modulo the walk's prime is mostly unit rows (a
// parameter no region depends on), where a dense rows x D matrix cost its
// zeroing (page faults: 1.4 MB on 2,15,15,15,15,1) and every scan of it.
struct SparseModularRows {
  using Row = std::vector<std::pair<std::size_t, std::uint64_t>>;
  std::size_t cols = 0;
  std::vector<Row> rows;

  static SparseModularRows from_dense(const ModularMatrix& dense) {
    SparseModularRows sparse{dense.cols(), std::vector<Row>(dense.rows())};
    for (std::size_t r = 0; r < dense.rows(); ++r)
      for (std::size_t c = 0; c < dense.cols(); ++c)
        if (dense(r, c) != 0) sparse.rows[r].emplace_back(c, dense(r, c));
    return sparse;
  }
  ModularMatrix dense() const {
    ModularMatrix out(rows.size(), cols);
    for (std::size_t r = 0; r < rows.size(); ++r)
      for (const auto& [c, value] : rows[r]) out(r, c) = value;
    return out;
  }
  // Each row's first column (cols for a zero row): the leads of an echelon form.
  std::vector<std::size_t> leading_columns() const {
    std::vector<std::size_t> leads;
    for (const Row& row : rows) leads.push_back(row.empty() ? cols : row.front().first);
    return leads;
  }
};

// values(0), ..., values(count - 1) (Rationals) times one positive rational:
// a primitive integer vector (the scale does not change which combinations
// vanish). out is resized to count. Exact.
template <typename Values>
void primitive_integers(std::size_t count, Values&& values, std::vector<Integer>& out) {
  Integer scale = 1, content = 0;
  for (std::size_t i = 0; i < count; ++i) mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), values(i).get_den_mpz_t());
  out.resize(count);
  for (std::size_t i = 0; i < count; ++i) {
    const Rational& value = values(i);
    mpz_divexact(out[i].get_mpz_t(), scale.get_mpz_t(), value.get_den_mpz_t());
    out[i] *= value.get_num();
    mpz_gcd(content.get_mpz_t(), content.get_mpz_t(), out[i].get_mpz_t());
  }
  if (content > 1)
    for (Integer& value : out) mpz_divexact(value.get_mpz_t(), value.get_mpz_t(), content.get_mpz_t());
}

// What the check's bound needs from the network alone: L (the lcm of the
// parameters' denominators) and L^(d-1) (d the depth), which clears every
// coefficient-block entry's denominators, and L^(d-1) B_c with |row_c| <=
// B_c for every coefficient-block row of every pattern (integers). Computed
// once, shared by every candidate checked. Exact.
struct CheckScale {
  std::vector<Integer> scaled_bounds;
  Integer lcm = 1, scale = 1;
  explicit CheckScale(const Network& network);
};

class IntegerCheck;  // integer_check.hpp

// Each ReLU neuron's smooth patterns as bits: bit p of words [n words,
// (n + 1) words) is set when neuron n is on in patterns[p]; then one more
// row, at index `neurons`, with every pattern's bit set (a neuron without
// ReLU, the network's input, a bias: always on). Built once per proof and
// read by both LiveTerms and AnnihilationCheck::live_bits.
struct NeuronOnBits {
  std::size_t neurons = 0, words = 0;
  std::vector<std::uint64_t> bits;
  const std::uint64_t* of(std::size_t n) const { return bits.data() + n * words; }
};
// Polls the current thread's stop request every 64 patterns. `neurons`:
// the patterns' ReLU neuron count (their states' size).
NeuronOnBits neuron_on_bits(std::size_t neurons, const std::vector<ActivationPattern>& patterns);

// How the check takes the products: `fastest` in fixed-width integers when
// every scaled bound B_c is below 2^127 (integer_check.hpp: one pass per
// region), else modulo primes; `primes` modulo primes always. Both exact.
enum class CheckArithmetic { fastest, primes };

// A deterministic exact test that given vectors annihilate a pattern's
// coefficient-block rows, in word arithmetic. Each vector is scaled to a
// primitive integer vector, and those are replaced by combinations that
// span the same space with smaller entries (check_basis.hpp: the verdict is
// the same, since every vector annihilates the rows exactly when every
// vector of their span does); e is one of them. For a row of the blocks, N = L^(d-1) (row . e)
// is an integer (entries are sums of products of at most d - 1 parameters,
// one from each layer but the column's own, with integer coefficients) and
// |N| <= L^(d-1) sum_c B_c |e_c|. N = 0 modulo a number above that bound
// proves N = 0: 2^(64n), in fixed-width integers, when every B_c < 2^127
// (integer_check.hpp); else the product of enough primes (the first prime
// also screens out failures quickly).
class AnnihilationCheck {
 public:
  // Polls the current thread's stop request (poll_stop) while it reduces the
  // vectors modulo each prime, on up to `threads` threads (the same check
  // for any number).
  AnnihilationCheck(const Network& network, const SparseRationalRows& vectors, const CheckScale& check_scale,
                    unsigned threads = 1, CheckArithmetic arithmetic = CheckArithmetic::fastest);
  AnnihilationCheck(const Network& network, const RationalMatrix& vectors, const CheckScale& check_scale,
                    unsigned threads = 1, CheckArithmetic arithmetic = CheckArithmetic::fastest)
      : AnnihilationCheck(network, SparseRationalRows::from_dense(vectors), check_scale, threads, arithmetic) {}
  ~AnnihilationCheck();
  AnnihilationCheck(const AnnihilationCheck&) = delete;
  AnnihilationCheck& operator=(const AnnihilationCheck&) = delete;
  // The primes the products are taken modulo (0 in fixed-width integers).
  std::size_t primes() const { return moduli_.size(); }
  // True exactly when every vector annihilates every row of the pattern's
  // blocks. Exact; polls the current thread's stop request. The products are
  // taken from the pattern's layer inputs and backward signals modulo each
  // prime, without writing the blocks out (a vector costs its nonzero
  // entries).
  [[nodiscard]] bool annihilates(const ActivationPattern& pattern) const;
  // Which vectors have a term on each pattern (live_vectors), for every
  // pattern at once: bit p of words [v words, (v + 1) words) for vector v
  // and patterns[p]. From each neuron's patterns as bits: a word AND per
  // term and 64 patterns, where live_vectors reads every term per pattern.
  // `on`: neuron_on_bits(patterns) when built already (LiveTerms::on_bits).
  struct LiveBits {
    std::size_t words = 0;
    std::vector<std::uint64_t> bits;
  };
  [[nodiscard]] LiveBits live_bits(const std::vector<ActivationPattern>& patterns,
                                   const NeuronOnBits* on = nullptr) const;
  // annihilates for patterns[index] of the patterns `live` was made from.
  [[nodiscard]] bool annihilates(const ActivationPattern& pattern, const LiveBits& live, std::size_t index) const;

 private:
  // What a parameter is: W_k[neuron, input] or, with input == bias, b_k[neuron].
  struct ColumnRole {
    static constexpr std::size_t bias = static_cast<std::size_t>(-1);
    std::size_t layer, neuron, input;
  };
  // One nonzero entry of a vector modulo a prime: its parameter's role, its
  // residue and that residue's Shoup quotient (products with it cost no
  // division).
  struct Entry {
    ColumnRole role;
    std::size_t width;  // of the role's layer: G_k is nd x width
    std::uint64_t value, shoup;
    std::size_t vector;  // its index among the check's vectors
  };
  // A vector with several entries modulo a prime: its terms in parameter
  // order, in runs of one neuron's parameters (a run's weights, or its
  // bias, share G_k[o, neuron]: read once per run, and a run whose neuron
  // does not pass costs nothing).
  struct Term {
    std::size_t input;  // ColumnRole::bias for the bias
    std::uint64_t value, shoup;
  };
  struct NeuronRun {
    std::size_t layer, neuron, width, first, last;  // terms [first, last)
  };
  struct RunVector {
    std::vector<NeuronRun> runs;
    std::vector<Term> terms;
    std::size_t vector = 0;  // its index among the check's vectors
  };
  // The ReLU neurons a vector's term at W_k[i,j] or b_k[i] goes through:
  // `own` (neuron i of layer k) and `input` (neuron j of layer k - 1);
  // where there is none (a layer without ReLU, the network's input, a
  // bias), the index of the pattern's neuron count, read as always on. On a
  // pattern where either is not on, every coefficient-block entry in that
  // column is 0 exactly: G_k[o,i] = 0, or x_k[j] = 0.
  static constexpr std::size_t none_ = static_cast<std::size_t>(-1);
  struct TermNeurons {
    std::size_t own, input;
  };
  // Which vectors have a term with both its neurons on the pattern: else
  // the vector's products with the pattern's rows are 0 term by term, with
  // no arithmetic (a dead neuron's directions, most unit vectors). Each
  // term an AND of two flags, no branch on the states (on 2,15,15,15,15,1
  // seed 1: 54 vectors, 226 terms, 1215 regions). Returns whether any
  // vector is live.
  bool live_vectors(const ActivationPattern& pattern, std::vector<char>& live) const;
  // annihilates without the reuse of the last pattern's answer.
  bool annihilates_here(const ActivationPattern& pattern, const LiveBits* live_bits, std::size_t index) const;
  struct Modulus {
    ModularNetwork network;
    nmod_t mod{};  // FLINT's nmod_init(network.prime), once
    // Sparse, residues, in parameter order (a vector with every residue 0
    // is left out: it annihilates every row modulo this prime); the vectors
    // with one entry apart (a zero test each).
    std::vector<RunVector> vectors;
    std::vector<Entry> units;
    // The layers whose inputs (0..forward_to) and backward signals
    // (backward_to..depth-1) those columns need.
    std::size_t forward_to = 0, backward_to = 0;
  };
  std::size_t vector_count_;
  std::vector<ColumnRole> columns_;  // parameter order (Network::parameter_offset)
  std::vector<Modulus> moduli_;
  // Which layer each ReLU neuron of a pattern is in; and this check's own
  // number, for the per-thread reuse of layer inputs from one pattern to the
  // next (a pattern that agrees with the last one on its first layers
  // shares their inputs).
  std::vector<std::size_t> neuron_layer_;
  std::vector<TermNeurons> term_neurons_;  // vector v's in [first_term_[v], first_term_[v + 1])
  std::vector<std::size_t> first_term_;
  // The pattern's neurons the vectors' products depend on (the others
  // change no entry in their columns), increasing.
  std::vector<std::size_t> read_states_;
  std::uint64_t id_ = 0;
  std::unique_ptr<const IntegerCheck> integer_;  // the products in fixed-width integers, instead of moduli_
};

// Rows `rows` of a pattern's coefficient blocks modulo the network's prime,
// at the columns marked in `wanted` only (size D): written to out's rows
// first_out_row, first_out_row + 1, ... at those columns (column c at
// (*place)[c] when place is given), the other entries left as they are.
// Equal there to coefficient_blocks_mod, from the check's layer inputs and
// backward signals (only the layers those columns need).
void coefficient_rows_at(const ModularNetwork& network, const ActivationPattern& pattern,
                         const std::vector<std::size_t>& rows, const std::vector<char>& wanted, ModularMatrix& out,
                         std::size_t first_out_row, const std::vector<std::size_t>* place = nullptr);

// a.states < b.states (lexicographic) by memcmp: it orders the one-byte
// states as std::vector's < does, in a fraction of its time (a serial 0.15 ms
// when first_rejected_pattern sorts 2,15,15,15,1's 792 regions).
inline bool states_before(const ActivationPattern& a, const ActivationPattern& b) {
  static_assert(sizeof(NeuronState) == 1);
  const std::vector<NeuronState>&x = a.states, &y = b.states;
  const int sign = x.empty() || y.empty() ? 0 : std::memcmp(x.data(), y.data(), std::min(x.size(), y.size()));
  return sign != 0 ? sign < 0 : x.size() < y.size();
}

// Which vectors have a live term on some pattern: a term at W_k[i,j] is
// live on a pattern where neuron i of layer k and neuron j of layer k - 1
// are both on, at b_k[i] where neuron i is (no condition from a layer
// without ReLU or from the network's input). A vector with no live term on
// any pattern annihilates every pattern's rows term by term (each entry of
// its columns is G_k[o,i] times x_k[j], or G_k[o,i], and a neuron that is
// not on makes its factor 0), the check's own reasoning; it need not be
// checked (on 2,15,15,15,15,1 seed 1, 162 of the 216 extra directions
// checked: parameters of neurons that are never on). From each neuron's
// inputs on together with it in some pattern (bitsets: one pass over the
// patterns). Exact.
std::vector<char> live_on_some_pattern(const Network& network, const SparseRationalRows& vectors,
                                       const std::vector<ActivationPattern>& patterns);

// live_on_some_pattern in two steps: the bitsets from the patterns (built
// beside certify's read-off, proof_start.hpp), then any vectors against them.
// The network must outlive it.
class LiveTerms {
 public:
  LiveTerms(const Network& network, const std::vector<ActivationPattern>& patterns);
  std::vector<char> of(const SparseRationalRows& vectors) const;
  // The patterns' neuron bits it was built from (for the check's live_bits).
  const NeuronOnBits& on_bits() const { return on_; }

 private:
  const Network* network_;
  NeuronOnBits on_;
  std::vector<std::size_t> first_, first_neuron_, first_word_;  // per layer: parameter column, neuron, word
  std::vector<std::uint64_t> together_;
  std::vector<char> own_;
};

// The patterns' indices in lexicographic order of their states
// (states_before): the order first_rejected_pattern checks them in.
std::vector<std::size_t> lexicographic_order(const std::vector<ActivationPattern>& patterns);

// The smallest index of a pattern the check rejects, checked on `threads`
// threads (the answer does not depend on their number), or nullopt when all
// pass. The patterns are taken in lexicographic order of their states, in
// runs per thread, so that consecutive ones share their first layers'
// inputs. Sets stopped (and returns nullopt) when the stop request fires;
// progress(done, total) is called from the calling thread, about 64 times
// (at most every 16 patterns, and at the last). sorted:
// lexicographic_order(patterns) when computed already; on:
// neuron_on_bits(patterns) when built already (LiveTerms::on_bits).
[[nodiscard]]
std::optional<std::size_t> first_rejected_pattern(const AnnihilationCheck& check,
                                                  const std::vector<ActivationPattern>& patterns, unsigned threads,
                                                  const StopRequest& stop, bool& stopped,
                                                  const std::function<void(std::size_t, std::size_t)>& progress,
                                                  const std::vector<std::size_t>* sorted = nullptr,
                                                  const NeuronOnBits* on = nullptr);

}  // namespace pleat::detail
