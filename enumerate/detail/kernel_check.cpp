#include "enumerate/detail/kernel_check.hpp"

#include <flint/nmod.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <array>
#include <atomic>

#include "enumerate/detail/check_basis.hpp"
#include "enumerate/detail/integer_check.hpp"
#include "enumerate/detail/parallel_for.hpp"
#include "enumerate/detail/thread_state.hpp"

namespace pleat::detail {
namespace {

// A row's entries scaled by a positive number to a primitive integer
// vector (primitive_integers), with their columns.
std::vector<std::pair<std::size_t, Integer>> primitive_integer_entries(const SparseRationalRows::Row& row) {
  std::vector<Integer> values;
  primitive_integers(row.size(), [&](std::size_t e) -> const Rational& { return row[e].second; }, values);
  std::vector<std::pair<std::size_t, Integer>> out;
  out.reserve(row.size());
  for (std::size_t e = 0; e < row.size(); ++e) out.emplace_back(row[e].first, std::move(values[e]));
  return out;
}

// The pattern's layer inputs and backward signals modulo a prime: the
// factors of every coefficient-block entry (core/jacobian.hpp): entry
// (o(n0+1), W_k[i,j]) = G_k[o,i] y_{k-1}[j]'s offset, (o(n0+1)+1+t, W_k[i,j])
// = G_k[o,i] times its slope t, (o(n0+1), b_k[i]) = G_k[o,i], 0 elsewhere.
// The same recurrences as coefficient_blocks_mod, without writing the
// D-column blocks out: a vector's products with the rows then cost its
// nonzero entries only.
// Buffers reused from one region to the next (one set per thread), so
// that the check allocates nothing per region and prime: layer k's input
// map (linear: fan_in x n0 row-major; offset: fan_in) and backward signal
// (nd x n_k row-major), and which neurons pass on the region.
struct RegionFactors {
  std::vector<std::vector<std::uint64_t>> linear, offset, signal;
  std::vector<std::vector<std::size_t>> passing;  // layer k: the neurons that pass (on, or linear)
  std::vector<std::size_t> all_inputs;  // 0 .. n0-1
};

__extension__ typedef unsigned __int128 Wide;

// A 128-bit value modulo a prime, inline (FLINT's NMOD2_RED2: the high word
// first, then both; no call into the library for each of the check's many
// small sums).
[[gnu::always_inline]] inline std::uint64_t reduce_wide(Wide value, const nmod_t& mod) {
  std::uint64_t reduced;
  const std::uint64_t high = static_cast<std::uint64_t>(value >> 64), low = static_cast<std::uint64_t>(value);
  if (high < mod.n)
    NMOD_RED2(reduced, high, low, mod);
  else
    NMOD2_RED2(reduced, high, low, mod);
  return reduced;
}

// How many products of residues a 128-bit sum may take between reductions:
// below 2^62 (every prime this check uses) 15 products of residues stay
// below 15 * 2^124, which with the running residue fits in 128 bits; below
// 2^63, 3 do.
unsigned products_between_reductions(std::uint64_t prime) { return prime < (std::uint64_t{1} << 62) ? 15 : 3; }

// Runs body.template operator()<Inputs>() with Inputs = n0 for the common
// 1 to 3 network inputs, else 0 (n0 read at run time): with n0 known at
// compile time the n0 + 1 sums of a row below stay in registers.
template <typename Body>
decltype(auto) with_input_count(std::size_t n0, Body&& body) {
  switch (n0) {
    case 1: return body.template operator()<1>();
    case 2: return body.template operator()<2>();
    case 3: return body.template operator()<3>();
    default: return body.template operator()<0>();
  }
}

// The n0 + 1 sums of a row (offset, then the n0 slopes): `fixed` when n0 is
// known at compile time (Inputs > 0: the sums stay in registers), else a
// buffer of this thread's. Not zeroed.
template <std::size_t Inputs>
[[gnu::always_inline]] inline Wide* row_sums(std::array<Wide, Inputs + 1>& fixed, std::size_t n0) {
  if constexpr (Inputs > 0) {
    return fixed.data();
  } else {
    thread_local std::vector<Wide> buffer;
    buffer.resize(n0 + 1);
    return buffer.data();
  }
}

// Counts one more product into each of the n0 + 1 sums and reduces them
// when `limit` (products_between_reductions) have gone in since the last
// reduction, before the next could overflow.
[[gnu::always_inline]] inline void reduce_when_due(Wide* sums, std::size_t n0, unsigned& pending, unsigned limit,
                                                   const nmod_t& mod) {
  if (++pending < limit) return;
  for (std::size_t t = 0; t <= n0; ++t) sums[t] = reduce_wide(sums[t], mod);
  pending = 0;
}

// A sum of products of residues modulo a prime, in 128 bits, reduced only
// when more products could overflow.
class LazySum {
 public:
  explicit LazySum(const nmod_t& mod) : mod_(mod), limit_(products_between_reductions(mod.n)) {}
  void add(std::uint64_t a, std::uint64_t b) {
    sum_ += static_cast<Wide>(a) * b;
    if (++pending_ == limit_) fold();
  }
  std::uint64_t value() {
    fold();
    return static_cast<std::uint64_t>(sum_);
  }

 private:
  void fold() {
    sum_ = reduce_wide(sum_, mod_);
    pending_ = 0;
  }
  const nmod_t& mod_;
  unsigned limit_;
  Wide sum_ = 0;
  unsigned pending_ = 0;
};

// The next layer's inputs at its passing neurons: each neuron's offset and
// n0 slopes in one pass over its inputs (each weight read once), summed
// lazily. Inputs: n0 when known at compile time, else 0.
template <std::size_t Inputs>
void layer_inputs(const ModularMatrix& weights, const std::vector<std::uint64_t>& bias,
                  const std::vector<std::size_t>& inputs, const std::vector<std::size_t>& passing,
                  const std::vector<std::uint64_t>& in_offset, const std::vector<std::uint64_t>& in_linear,
                  std::vector<std::uint64_t>& offset, std::vector<std::uint64_t>& linear, std::size_t n0_at_run_time,
                  const nmod_t& mod) {
  const std::size_t n0 = Inputs > 0 ? Inputs : n0_at_run_time;
  const unsigned limit = products_between_reductions(mod.n);
  std::array<Wide, Inputs + 1> fixed;
  Wide* sums = row_sums<Inputs>(fixed, n0);
  for (std::size_t i : passing) {
    std::fill(sums, sums + n0 + 1, Wide{0});
    sums[0] = bias[i];
    unsigned pending = 0;
    for (std::size_t j : inputs) {
      const std::uint64_t w = weights(i, j);
      sums[0] += static_cast<Wide>(w) * in_offset[j];
      const std::uint64_t* slopes = in_linear.data() + j * n0;
      for (std::size_t t = 0; t < n0; ++t) sums[t + 1] += static_cast<Wide>(w) * slopes[t];
      reduce_when_due(sums, n0, pending, limit, mod);
    }
    offset[i] = static_cast<std::uint64_t>(reduce_wide(sums[0], mod));
    for (std::size_t t = 0; t < n0; ++t) linear[i * n0 + t] = reduce_wide(sums[t + 1], mod);
  }
}

// Fills factors with the region's layer inputs for layers 0..forward_to and
// its backward signals for layers backward_to..depth-1 (what the columns a
// modulus checks need: a weight of layer k needs layer k's input and
// signal, a bias its signal only). Neurons that do not pass are 0 in both,
// so the sums run over the passing ones only (about half of a ReLU layer).
// reuse_below: the layer inputs 1..reuse_below (the outputs of layers below
// reuse_below) are those already in factors, from a pattern that agrees with
// this one on every neuron of those layers (same network and forward_to).
void region_factors(const ModularNetwork& network, const nmod_t& mod, const ActivationPattern& pattern,
                    std::size_t forward_to, std::size_t backward_to, RegionFactors& factors,
                    std::size_t reuse_below = 0) {
  const std::size_t depth = network.weights.size(), n0 = network.input_dim;
  const std::size_t nd = network.bias.back().size();
  factors.passing.resize(depth);
  factors.linear.resize(depth);
  factors.offset.resize(depth);
  factors.signal.resize(depth);
  std::size_t neuron = 0;
  for (std::size_t k = 0; k < depth; ++k) {
    const std::size_t width = network.weights[k].rows();
    std::vector<std::size_t>& passing = factors.passing[k];
    passing.clear();
    const bool has_relu = k + 1 < depth || network.has_output_relu;
    for (std::size_t i = 0; i < width; ++i, neuron += has_relu ? 1 : 0)
      if (!has_relu || pattern.is_on(neuron)) passing.push_back(i);
  }
  factors.linear[0].assign(n0 * n0, 0);
  for (std::size_t t = 0; t < n0; ++t) factors.linear[0][t * n0 + t] = 1;
  factors.offset[0].assign(n0, 0);
  std::vector<std::size_t>& all_inputs = factors.all_inputs;
  all_inputs.resize(n0);
  for (std::size_t t = 0; t < n0; ++t) all_inputs[t] = t;
  for (std::size_t k = reuse_below; k < forward_to; ++k) {
    const ModularMatrix& weights = network.weights[k];
    const std::vector<std::uint64_t>& in_linear = factors.linear[k];
    const std::vector<std::uint64_t>& in_offset = factors.offset[k];
    const std::vector<std::size_t>& inputs = k == 0 ? all_inputs : factors.passing[k - 1];
    std::vector<std::uint64_t>& linear = factors.linear[k + 1];
    std::vector<std::uint64_t>& offset = factors.offset[k + 1];
    linear.assign(weights.rows() * n0, 0);
    offset.assign(weights.rows(), 0);
    if (k == 0) {  // the input itself: offset b_0[i], slopes W_0[i,:], no products
      for (std::size_t i : factors.passing[0]) {
        offset[i] = network.bias[0][i];
        for (std::size_t t = 0; t < n0; ++t) linear[i * n0 + t] = weights(i, t);
      }
      continue;
    }
    with_input_count(n0, [&]<std::size_t Inputs>() {
      layer_inputs<Inputs>(weights, network.bias[k], inputs, factors.passing[k], in_offset, in_linear, offset, linear,
                           n0, mod);
    });
  }
  for (std::size_t k = depth; k-- > backward_to;) {
    const std::size_t width = network.weights[k].rows();
    std::vector<std::uint64_t>& signal = factors.signal[k];
    signal.assign(nd * width, 0);
    if (k + 1 == depth) {
      for (std::size_t o : factors.passing[k]) signal[o * width + o] = 1;
      continue;
    }
    const std::vector<std::uint64_t>& next_signal = factors.signal[k + 1];
    const ModularMatrix& next_weights = network.weights[k + 1];
    const std::size_t next_width = next_weights.rows();
    if (k + 2 == depth) {  // the last signal is the identity on its passing outputs: no products
      for (std::size_t o : factors.passing[k + 1])
        for (std::size_t i : factors.passing[k]) signal[o * width + i] = next_weights(o, i);
      continue;
    }
    for (std::size_t o = 0; o < nd; ++o)
      for (std::size_t i : factors.passing[k]) {
        LazySum value(mod);
        for (std::size_t m : factors.passing[k + 1]) value.add(next_signal[o * next_width + m], next_weights(m, i));
        signal[o * width + i] = value.value();
      }
  }
}

// Each parameter's place in the network, in parameter order
// (Network::parameter_offset): layer k's weights row by row, then its bias.
struct ParameterRole {
  static constexpr std::size_t bias = static_cast<std::size_t>(-1);
  std::size_t layer, neuron, input;
};

// The marked parameters (column, role), in parameter order, into `out`
// (reused: no allocation once it has grown).
void wanted_roles(const ModularNetwork& network, const std::vector<char>& wanted,
                  std::vector<std::pair<std::size_t, ParameterRole>>& out) {
  out.clear();
  std::size_t c = 0;
  for (std::size_t k = 0; k < network.weights.size(); ++k) {
    const ModularMatrix& weights = network.weights[k];
    for (std::size_t i = 0; i < weights.rows(); ++i)
      for (std::size_t j = 0; j < weights.cols(); ++j, ++c)
        if (wanted[c]) out.push_back({c, {k, i, j}});
    for (std::size_t i = 0; i < weights.rows(); ++i, ++c)
      if (wanted[c]) out.push_back({c, {k, i, ParameterRole::bias}});
  }
}

}  // namespace

void coefficient_rows_at(const ModularNetwork& network, const ActivationPattern& pattern,
                         const std::vector<std::size_t>& rows, const std::vector<char>& wanted, ModularMatrix& out,
                         std::size_t first_out_row, const std::vector<std::size_t>* place) {
  thread_local std::vector<std::pair<std::size_t, ParameterRole>> columns;  // (column, role)
  wanted_roles(network, wanted, columns);
  std::size_t forward_to = 0, backward_to = network.weights.size();
  for (const auto& [c, role] : columns) {
    if (role.input != ParameterRole::bias) forward_to = std::max(forward_to, role.layer);
    backward_to = std::min(backward_to, role.layer);
  }
  if (columns.empty()) return;
  thread_local RegionFactors factors;
  nmod_t mod;
  nmod_init(&mod, network.prime);
  region_factors(network, mod, pattern, forward_to, backward_to, factors);
  const std::uint64_t prime = network.prime, inverse = mod.ninv;
  const std::size_t n0 = network.input_dim;
  for (std::size_t r = 0; r < rows.size(); ++r) {
    const std::size_t o = rows[r] / (n0 + 1), t = rows[r] % (n0 + 1);  // row o(n0+1): offsets, then slope t-1
    for (const auto& [c, role] : columns) {
      const std::size_t width = network.weights[role.layer].rows();
      const std::uint64_t g = factors.signal[role.layer][o * width + role.neuron];
      std::uint64_t value = 0;
      if (role.input == ParameterRole::bias)
        value = t == 0 ? g : 0;
      else if (g != 0)
        value = n_mulmod2_preinv(g,
                                 t == 0 ? factors.offset[role.layer][role.input]
                                        : factors.linear[role.layer][role.input * n0 + (t - 1)],
                                 prime, inverse);
      out(first_out_row + r, place ? (*place)[c] : c) = value;
    }
  }
}

AnnihilationCheck::~AnnihilationCheck() = default;

AnnihilationCheck::AnnihilationCheck(const Network& network, const SparseRationalRows& vectors,
                                     const CheckScale& check_scale, unsigned threads, CheckArithmetic arithmetic)
    : vector_count_(vectors.rows.size()) {
  static std::atomic<std::uint64_t> checks{0};
  id_ = ++checks;
  for (std::size_t k = 0; k < network.depth(); ++k)
    if (k + 1 < network.depth() || network.has_output_relu())
      neuron_layer_.insert(neuron_layer_.end(), network.layers[k].width(), k);
  if (vector_count_ == 0) return;
  for (std::size_t k = 0; k < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j) columns_.push_back({k, i, j});
    for (std::size_t i = 0; i < layer.width(); ++i) columns_.push_back({k, i, ColumnRole::bias});
  }
  // The first ReLU neuron of each layer (none_ for a layer without ReLU),
  // and each vector's terms' neurons.
  std::vector<std::size_t> first_neuron(network.depth(), none_);
  for (std::size_t k = 0, neuron = 0; k < network.depth(); ++k)
    if (k + 1 < network.depth() || network.has_output_relu()) {
      first_neuron[k] = neuron;
      neuron += network.layers[k].width();
    }
  std::vector<std::vector<std::pair<std::size_t, Integer>>> integer_rows(vector_count_);
  // Thousands of vectors and, on deep networks, hundreds of primes: poll
  // the current thread's stop request (a no-op without a StopScope).
  parallel_for(vector_count_, threads, [&](std::size_t r) {
    poll_stop();
    integer_rows[r] = primitive_integer_entries(vectors.rows[r]);
  });
  lower_check_cost(integer_rows);  // the same span, smaller entries (check_basis.hpp): checked from here on
  const std::size_t always_on = neuron_layer_.size();  // the flag live_vectors keeps at 1
  first_term_.push_back(0);
  for (std::size_t v = 0; v < vector_count_; ++v) {
    for (const auto& [c, value] : integer_rows[v]) {
      const ColumnRole& role = columns_[c];
      const std::size_t own = first_neuron[role.layer] == none_ ? always_on : first_neuron[role.layer] + role.neuron;
      const std::size_t input =
          role.input == ColumnRole::bias || role.layer == 0 ? always_on : first_neuron[role.layer - 1] + role.input;
      term_neurons_.push_back({own, input});
    }
    first_term_.push_back(term_neurons_.size());
  }
  // The neurons the products depend on (read_states_): an entry at W_k[i,j]
  // is G_k[o,i] x_k[j]_t, at b_k[i] G_k[o,i] L^k; G_k[o,i] depends on
  // neuron i of layer k and every neuron of the layers after k, x_k[j] on
  // neuron j of layer k - 1 and every neuron of the layers before k - 1.
  std::vector<char> reads(always_on + 1, 0);
  std::size_t signals_from = network.depth(), inputs_below = 0;  // layers read whole
  for (std::size_t v = 0; v < vector_count_; ++v)
    for (const auto& [c, value] : integer_rows[v]) {
      const ColumnRole& role = columns_[c];
      signals_from = std::min(signals_from, role.layer + 1);
      if (role.input != ColumnRole::bias && role.layer > 0) inputs_below = std::max(inputs_below, role.layer - 1);
    }
  for (const TermNeurons& term : term_neurons_) reads[term.own] = reads[term.input] = 1;
  for (std::size_t n = 0; n < always_on; ++n)
    if (reads[n] || neuron_layer_[n] >= signals_from || neuron_layer_[n] < inputs_below) read_states_.push_back(n);
  const std::vector<Integer>& bounds = check_scale.scaled_bounds;
  // Each vector's bound L^(d-1) sum_c B_c |e_c|: primes until their product exceeds it.
  std::vector<Integer> needed(vector_count_, 0);
  parallel_for(vector_count_, threads, [&](std::size_t r) {
    poll_stop();
    Integer& sum = needed[r];
    for (const auto& [c, value] : integer_rows[r])
      if (sgn(value) > 0)
        mpz_addmul(sum.get_mpz_t(), bounds[c].get_mpz_t(), value.get_mpz_t());
      else
        mpz_submul(sum.get_mpz_t(), bounds[c].get_mpz_t(), value.get_mpz_t());
  });
  if (arithmetic == CheckArithmetic::fastest && IntegerCheck::applies(check_scale)) {
    integer_ = std::make_unique<const IntegerCheck>(network, check_scale, integer_rows, needed);
    return;
  }
  const Integer largest = *std::max_element(needed.begin(), needed.end());
  // Each vector is reduced modulo the first primes whose product exceeds its
  // own bound only: a vector with small entries (most extra directions)
  // costs one or two primes even when another needs dozens. The primes and
  // the vectors each checks are fixed first; the residues then on every
  // thread (each prime its own modulus).
  std::vector<std::uint64_t> primes;
  std::vector<std::vector<std::size_t>> checked;  // by each prime: the vectors
  Integer product = 1;
  for (std::size_t index = 0; product <= largest; ++index) {
    poll_stop();
    const std::uint64_t prime = prime_sequence(index);
    if (mpz_divisible_ui_p(check_scale.lcm.get_mpz_t(), prime)) continue;  // the prime divides a denominator
    std::vector<std::size_t> open;
    for (std::size_t v = 0; v < integer_rows.size(); ++v)
      if (product <= needed[v]) open.push_back(v);  // not proved by the primes before
    primes.push_back(prime);
    checked.push_back(std::move(open));
    product *= Integer(static_cast<unsigned long>(prime));
  }
  moduli_.resize(primes.size());
  parallel_for(primes.size(), threads, [&](std::size_t m) {
    poll_stop();
    const std::uint64_t prime = primes[m];
    Modulus& modulus = moduli_[m];
    modulus.network = *reduce_modulo(network, prime);
    nmod_init(&modulus.mod, prime);
    modulus.backward_to = network.depth();
    for (std::size_t v : checked[m]) {
      std::vector<Entry> sparse;
      for (const auto& [c, value] : integer_rows[v]) {
        const std::uint64_t residue = mpz_fdiv_ui(value.get_mpz_t(), prime);
        if (residue == 0) continue;  // no term modulo this prime
        const ColumnRole& role = columns_[c];
        if (role.input != ColumnRole::bias) modulus.forward_to = std::max(modulus.forward_to, role.layer);
        modulus.backward_to = std::min(modulus.backward_to, role.layer);
        sparse.push_back(
            {role, network.layers[role.layer].width(), residue, n_mulmod_precomp_shoup(residue, prime), v});
      }
      if (sparse.size() == 1) {
        modulus.units.push_back(sparse.front());
      } else if (!sparse.empty()) {
        RunVector runs;
        runs.vector = v;
        for (const Entry& entry : sparse) {
          const ColumnRole& role = entry.role;
          if (runs.runs.empty() || runs.runs.back().layer != role.layer || runs.runs.back().neuron != role.neuron)
            runs.runs.push_back({role.layer, role.neuron, entry.width, runs.terms.size(), runs.terms.size()});
          runs.terms.push_back({role.input, entry.value, entry.shoup});
          ++runs.runs.back().last;
        }
        modulus.vectors.push_back(std::move(runs));
      }
    }
  });
}

namespace {

// The product of one vector with the rows o(n0+1) .. o(n0+1)+n0 of a
// pattern's blocks modulo a prime is 0 for every one of them: row t's entry
// at W_k[i,j] is G_k[o,i] x_t[j] (x_0 the offset, x_t the slope t), at b_k[i]
// G_k[o,i] on row 0 and 0 on the others. A vector with one entry needs no
// product (a prime field has no zero divisors); a longer one is read once
// for all n0 + 1 rows: each entry's value times G_k[o,i] by Shoup's method
// (the entry is fixed, the region changes), then that times x_t[j] for
// every t, summed lazily in 128 bits: one reduction per vector and row.
// G_k[o,i] is read once per run of one neuron's entries, and a run whose
// neuron does not pass (G 0) is skipped.
template <std::size_t Inputs, typename RunVector>
bool annihilates_rows(const RunVector& vector, const RegionFactors& factors, const ModularNetwork& network,
                      std::size_t o, const nmod_t& mod) {
  const std::size_t n0 = Inputs > 0 ? Inputs : network.input_dim;
  const unsigned limit = products_between_reductions(network.prime);
  std::array<Wide, Inputs + 1> fixed;
  Wide* sums = row_sums<Inputs>(fixed, n0);
  std::fill(sums, sums + n0 + 1, Wide{0});
  unsigned pending = 0;
  for (const auto& run : vector.runs) {
    const std::uint64_t g = factors.signal[run.layer][o * run.width + run.neuron];
    if (g == 0) continue;
    const std::uint64_t* offsets = factors.offset[run.layer].data();
    const std::uint64_t* linear = factors.linear[run.layer].data();
    for (std::size_t e = run.first; e < run.last; ++e) {
      const auto& term = vector.terms[e];
      const std::uint64_t scaled = n_mulmod_shoup(term.value, g, term.shoup, network.prime);
      if (term.input == static_cast<std::size_t>(-1)) {
        sums[0] += scaled;
      } else {
        sums[0] += static_cast<Wide>(scaled) * offsets[term.input];
        const std::uint64_t* slopes = linear + term.input * n0;
        for (std::size_t t = 0; t < n0; ++t) sums[t + 1] += static_cast<Wide>(scaled) * slopes[t];
      }
      reduce_when_due(sums, n0, pending, limit, mod);
    }
  }
  for (std::size_t t = 0; t <= n0; ++t)
    if (reduce_wide(sums[t], mod) != 0) return false;
  return true;
}

// The same for a vector with one entry: its column of the rows is 0.
template <typename Entry>
bool annihilates_rows(const Entry& unit, const RegionFactors& factors, std::size_t n0, std::size_t o) {
  const auto& role = unit.role;
  if (factors.signal[role.layer][o * unit.width + role.neuron] == 0) return true;
  if (role.input == static_cast<std::size_t>(-1)) return false;  // the bias: G on row 0
  if (factors.offset[role.layer][role.input] != 0) return false;
  const std::uint64_t* slopes = factors.linear[role.layer].data() + role.input * n0;
  for (std::size_t t = 0; t < n0; ++t)
    if (slopes[t] != 0) return false;
  return true;
}

}  // namespace

bool AnnihilationCheck::live_vectors(const ActivationPattern& pattern, std::vector<char>& live) const {
  const std::size_t neurons = neuron_layer_.size();
  thread_local std::vector<unsigned char> on;  // the pattern's neurons on, then 1 (always_on)
  on.resize(neurons + 1);
  for (std::size_t n = 0; n < neurons; ++n) on[n] = pattern.states[n] == NeuronState::on ? 1 : 0;
  on[neurons] = 1;
  live.resize(vector_count_);
  unsigned char any_live = 0;
  for (std::size_t v = 0; v < vector_count_; ++v) {
    unsigned char is_live = 0;
    for (std::size_t t = first_term_[v]; t < first_term_[v + 1] && !is_live; ++t)
      is_live = on[term_neurons_[t].own] & on[term_neurons_[t].input];
    live[v] = static_cast<char>(is_live);
    any_live |= is_live;
  }
  return any_live != 0;
}

bool AnnihilationCheck::annihilates(const ActivationPattern& pattern) const { return annihilates(pattern, LiveBits(), 0); }

bool AnnihilationCheck::annihilates(const ActivationPattern& pattern, const LiveBits& live, std::size_t index) const {
  // A pattern equal to the last one this thread found annihilated at every
  // neuron the products read (read_states_) has the same products: every
  // entry in the vectors' columns is the same polynomial in the parameters
  // (on 2,5,5,5,5,1 seed 1 the vectors are in the last two layers, and
  // regions differing only in other neurons of the last hidden layer follow
  // each other in lexicographic order).
  struct Passed { std::uint64_t id = 0; std::vector<NeuronState> states; };  // one per thread
  Passed& passed = thread_state<Passed>();
  if (passed.id == id_ && passed.states.size() == pattern.states.size() &&
      std::all_of(read_states_.begin(), read_states_.end(),
                  [&](std::size_t n) { return passed.states[n] == pattern.states[n]; }))
    return true;
  passed.id = 0;  // invalid until this pattern is found annihilated
  if (!annihilates_here(pattern, live.words > 0 ? &live : nullptr, index)) return false;
  passed.id = id_;
  passed.states = pattern.states;
  return true;
}

bool AnnihilationCheck::annihilates_here(const ActivationPattern& pattern, const LiveBits* live_bits,
                                         std::size_t index) const {
  // The vectors with a term on the pattern: the others annihilate its rows
  // term by term (live_vectors, or read off live_bits), for every prime.
  thread_local std::vector<char> live;
  if (live_bits) {
    live.resize(vector_count_);
    unsigned char any_live = 0;
    // Indexed, not a pointer walked from bits.data(): with no vectors the
    // bits are empty and data() may be null.
    for (std::size_t v = 0; v < vector_count_; ++v) {
      const std::uint64_t word = live_bits->bits[v * live_bits->words + index / 64];
      live[v] = static_cast<char>((word >> (index % 64)) & 1);
      any_live |= static_cast<unsigned char>(live[v]);
    }
    if (!any_live) return true;
  } else if (!live_vectors(pattern, live)) {
    return true;
  }
  if (integer_) return integer_->annihilates(pattern, live);
  // This thread's factors for each prime, with the pattern they were
  // computed for (reset for another check).
  struct Reuse {
    std::uint64_t id = 0;
    std::vector<RegionFactors> factors;
    std::vector<std::vector<NeuronState>> patterns;
  };
  Reuse& reuse = thread_state<Reuse>();
  if (reuse.id != id_) {
    reuse.id = id_;
    reuse.factors.assign(moduli_.size(), RegionFactors());
    reuse.patterns.assign(moduli_.size(), {});
  }
  for (std::size_t m = 0; m < moduli_.size(); ++m) {
    const Modulus& modulus = moduli_[m];
    poll_stop();
    // A prime whose vectors all have no term on the pattern costs nothing
    // (its layer inputs stay those of the last pattern it checked).
    const bool checks_some =
        std::any_of(modulus.vectors.begin(), modulus.vectors.end(), [&](const RunVector& v) { return live[v.vector]; }) ||
        std::any_of(modulus.units.begin(), modulus.units.end(), [&](const Entry& u) { return live[u.vector]; });
    if (!checks_some) continue;
    const nmod_t& mod = modulus.mod;
    RegionFactors& factors = reuse.factors[m];
    std::vector<NeuronState>& last = reuse.patterns[m];
    // The inputs of the layers before the first neuron that differs from
    // the last pattern's are still valid.
    std::size_t same = 0;
    if (last.size() == pattern.states.size()) {
      std::size_t n = 0;
      while (n < last.size() && last[n] == pattern.states[n]) ++n;
      same = n < neuron_layer_.size() ? neuron_layer_[n] : modulus.network.weights.size();
    }
    last.clear();  // invalid until the factors are complete
    region_factors(modulus.network, mod, pattern, modulus.forward_to, modulus.backward_to, factors, same);
    last = pattern.states;
    const std::size_t nd = modulus.network.bias.back().size();
    const std::size_t n0 = modulus.network.input_dim;
    for (std::size_t o = 0; o < nd; ++o) {
      for (const Entry& unit : modulus.units)
        if (live[unit.vector] && !annihilates_rows(unit, factors, n0, o)) return false;
      const bool vectors_pass = with_input_count(n0, [&]<std::size_t Inputs>() {
        for (const auto& vector : modulus.vectors)
          if (live[vector.vector] && !annihilates_rows<Inputs>(vector, factors, modulus.network, o, mod)) return false;
        return true;
      });
      if (!vectors_pass) return false;
    }
  }
  return true;
}

}  // namespace pleat::detail
