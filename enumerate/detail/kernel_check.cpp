#include "enumerate/detail/kernel_check.hpp"

#include <flint/nmod.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <thread>

namespace pleat::detail {
namespace {

// B with |row_c| <= B_c for every coefficient-block row of every pattern:
// the entries are sums of products of parameters (core/jacobian.hpp: only
// additions and multiplications, patterns only drop terms), so the blocks of
// the network of |theta| with every neuron on bound them entrywise. Exact.
RationalVector coefficient_bounds(const Network& network) {
  Network absolute = network;
  for (Layer& layer : absolute.layers) {
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < layer.weights.cols(); ++c) layer.weights(r, c) = abs(layer.weights(r, c));
    for (Rational& b : layer.bias) b = abs(b);
  }
  ActivationPattern all_on;
  all_on.states.assign(network.relu_neuron_count(), NeuronState::on);
  const RationalMatrix blocks = coefficient_blocks(absolute, all_on);
  RationalVector bound(blocks.cols(), Rational(0));
  for (std::size_t r = 0; r < blocks.rows(); ++r)
    for (std::size_t c = 0; c < blocks.cols(); ++c)
      if (blocks(r, c) > bound[c]) bound[c] = blocks(r, c);
  return bound;
}

// The least common multiple of every parameter's denominator.
Integer denominator_lcm(const Network& network) {
  Integer lcm = 1;
  for (const Layer& layer : network.layers) {
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < layer.weights.cols(); ++c)
        mpz_lcm(lcm.get_mpz_t(), lcm.get_mpz_t(), layer.weights(r, c).get_den_mpz_t());
    for (const Rational& b : layer.bias) mpz_lcm(lcm.get_mpz_t(), lcm.get_mpz_t(), b.get_den_mpz_t());
  }
  return lcm;
}

// A rational row scaled by a positive number to a primitive integer vector.
std::vector<Integer> primitive_integer_row(const RationalVector& row) {
  Integer scale = 1, content = 0;
  for (const Rational& v : row) mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), v.get_den_mpz_t());
  std::vector<Integer> out(row.size());
  for (std::size_t c = 0; c < row.size(); ++c) {
    out[c] = row[c].get_num() * (scale / row[c].get_den());
    mpz_gcd(content.get_mpz_t(), content.get_mpz_t(), out[c].get_mpz_t());
  }
  if (content > 1)
    for (Integer& v : out) v /= content;
  return out;
}


// The pattern's layer inputs and backward signals modulo a prime: the
// factors of every coefficient-block entry (core/jacobian.hpp): entry
// (o(n0+1), W_k[i,j]) = G_k[o,i] y_{k-1}[j]'s offset, (o(n0+1)+1+t, W_k[i,j])
// = G_k[o,i] times its slope t, (o(n0+1), b_k[i]) = G_k[o,i], 0 elsewhere.
// The same recurrences as coefficient_blocks_mod, without writing the
// D-column blocks out: a vector's products with the rows then cost its
// nonzero entries only.
struct RegionFactors {
  std::vector<ModularMatrix> linear;   // layer k: fan_in x n0
  std::vector<ModularVector> offset;   // layer k: fan_in
  std::vector<ModularMatrix> signal;   // layer k: nd x n_k
};

__extension__ typedef unsigned __int128 Wide;

// A sum of products of residues modulo a prime, in 128 bits, reduced only
// when more products could overflow: below 2^62 (every prime this check
// uses) 15 products of residues stay below 15 * 2^124, which with the
// running residue fits in 128 bits; below 2^63, 3 do.
class LazySum {
 public:
  LazySum(std::uint64_t prime, std::uint64_t inverse)
      : prime_(prime), inverse_(inverse), limit_(prime < (std::uint64_t{1} << 62) ? 15 : 3) {}
  void add(std::uint64_t a, std::uint64_t b) {
    sum_ += static_cast<Wide>(a) * b;
    if (++pending_ == limit_) fold();
  }
  std::uint64_t value() {
    fold();
    return reduced_;
  }

 private:
  void fold() {
    sum_ += reduced_;
    reduced_ = n_ll_mod_preinv(static_cast<std::uint64_t>(sum_ >> 64), static_cast<std::uint64_t>(sum_), prime_,
                               inverse_);
    sum_ = 0;
    pending_ = 0;
  }
  std::uint64_t prime_, inverse_;
  unsigned limit_;
  Wide sum_ = 0;
  std::uint64_t reduced_ = 0;
  unsigned pending_ = 0;
};

RegionFactors region_factors(const ModularNetwork& network, const ActivationPattern& pattern) {
  const std::uint64_t prime = network.prime, inverse = n_preinvert_limb(prime);
  const std::size_t depth = network.weights.size(), n0 = network.input_dim;
  const std::size_t nd = network.bias.back().size();
  std::vector<std::vector<char>> passing(depth);
  std::size_t neuron = 0;
  for (std::size_t k = 0; k < depth; ++k) {
    const std::size_t width = network.weights[k].rows();
    passing[k].assign(width, 1);
    if (k + 1 < depth || network.has_output_relu)
      for (std::size_t i = 0; i < width; ++i) passing[k][i] = pattern.is_on(neuron++) ? 1 : 0;
  }
  RegionFactors factors;
  factors.linear.resize(depth);
  factors.offset.resize(depth);
  factors.signal.resize(depth);
  factors.linear[0] = ModularMatrix(n0, n0);
  for (std::size_t t = 0; t < n0; ++t) factors.linear[0](t, t) = 1;
  factors.offset[0].assign(n0, 0);
  for (std::size_t k = 0; k + 1 < depth; ++k) {
    const ModularMatrix& weights = network.weights[k];
    const ModularMatrix& in_linear = factors.linear[k];
    const ModularVector& in_offset = factors.offset[k];
    ModularMatrix linear(weights.rows(), n0);
    ModularVector offset(weights.rows(), 0);
    for (std::size_t i = 0; i < weights.rows(); ++i) {
      if (!passing[k][i]) continue;  // off or 'z': 0 on the region
      LazySum value(prime, inverse);
      value.add(network.bias[k][i], 1);
      for (std::size_t j = 0; j < weights.cols(); ++j) value.add(weights(i, j), in_offset[j]);
      offset[i] = value.value();
      for (std::size_t t = 0; t < n0; ++t) {
        LazySum slope(prime, inverse);
        for (std::size_t j = 0; j < weights.cols(); ++j) slope.add(weights(i, j), in_linear(j, t));
        linear(i, t) = slope.value();
      }
    }
    factors.linear[k + 1] = std::move(linear);
    factors.offset[k + 1] = std::move(offset);
  }
  ModularMatrix reaching(nd, nd);
  for (std::size_t o = 0; o < nd; ++o) reaching(o, o) = 1;
  for (std::size_t k = depth; k-- > 0;) {
    if (k + 1 < depth) {
      const ModularMatrix& next_signal = factors.signal[k + 1];
      const ModularMatrix& next_weights = network.weights[k + 1];
      reaching = ModularMatrix(nd, next_weights.cols());
      for (std::size_t o = 0; o < nd; ++o)
        for (std::size_t i = 0; i < next_weights.cols(); ++i) {
          LazySum value(prime, inverse);
          for (std::size_t m = 0; m < next_weights.rows(); ++m) value.add(next_signal(o, m), next_weights(m, i));
          reaching(o, i) = value.value();
        }
    }
    for (std::size_t i = 0; i < passing[k].size(); ++i)
      if (!passing[k][i])
        for (std::size_t o = 0; o < nd; ++o) reaching(o, i) = 0;
    factors.signal[k] = reaching;
  }
  return factors;
}

}  // namespace

CheckScale::CheckScale(const Network& network) : bounds(coefficient_bounds(network)) {
  const Integer lcm = denominator_lcm(network);
  for (std::size_t k = 0; k < network.depth(); ++k) scale *= lcm;
}

AnnihilationCheck::AnnihilationCheck(const Network& network, const RationalMatrix& vectors,
                                     const CheckScale& check_scale)
    : vector_count_(vectors.rows()) {
  if (vector_count_ == 0) return;
  for (std::size_t k = 0; k < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j) columns_.push_back({k, i, j});
    for (std::size_t i = 0; i < layer.width(); ++i) columns_.push_back({k, i, ColumnRole::bias});
  }
  const RationalVector& bounds = check_scale.bounds;
  const Integer& scale = check_scale.scale;
  std::vector<std::vector<Integer>> integer_rows;
  std::vector<Rational> needed;  // each vector's bound: primes until their product exceeds it
  Rational largest = 0;
  // Thousands of dense vectors and, on deep networks, hundreds of primes:
  // poll the current thread's stop request (a no-op without a StopScope).
  for (std::size_t r = 0; r < vectors.rows(); ++r) {
    poll_stop();
    integer_rows.push_back(primitive_integer_row(vectors.row(r)));
    Rational sum = 0;
    for (std::size_t c = 0; c < vectors.cols(); ++c)
      if (integer_rows.back()[c] != 0) sum += bounds[c] * Rational(abs(integer_rows.back()[c]));
    needed.push_back(sum * Rational(scale));
    if (needed.back() > largest) largest = needed.back();
  }
  // Each vector is reduced modulo the first primes whose product exceeds its
  // own bound only: a vector with small entries (most extra directions)
  // costs one or two primes even when another needs dozens.
  Integer product = 1;
  for (std::size_t index = 0; Rational(product) <= largest; ++index) {
    const std::uint64_t prime = prime_sequence(index);
    auto reduced = reduce_modulo(network, prime);
    if (!reduced) continue;  // the prime divides a denominator
    Modulus modulus{std::move(*reduced), {}, {}};
    std::vector<std::size_t> position(vectors.cols(), vectors.cols());  // in modulus.columns
    for (std::size_t v = 0; v < integer_rows.size(); ++v) {
      if (Rational(product) > needed[v]) continue;  // proved by the primes before
      poll_stop();
      std::vector<std::pair<std::size_t, std::uint64_t>> sparse;
      for (std::size_t c = 0; c < integer_rows[v].size(); ++c) {
        if (integer_rows[v][c] == 0) continue;
        if (position[c] == vectors.cols()) {
          position[c] = modulus.columns.size();
          modulus.columns.push_back(c);
        }
        sparse.emplace_back(position[c], *reduce_modulo(Rational(integer_rows[v][c]), prime));
      }
      modulus.vectors.push_back(std::move(sparse));
    }
    product *= Integer(static_cast<unsigned long>(prime));
    moduli_.push_back(std::move(modulus));
  }
}

bool AnnihilationCheck::annihilates(const ActivationPattern& pattern) const {
  for (const Modulus& modulus : moduli_) {
    poll_stop();
    const std::uint64_t prime = modulus.network.prime, inverse = n_preinvert_limb(prime);
    const RegionFactors factors = region_factors(modulus.network, pattern);
    const std::size_t nd = factors.signal.back().rows(), n0 = modulus.network.input_dim;
    const std::size_t used = modulus.columns.size();
    // The blocks' entries at the columns this prime's vectors use, row by row.
    ModularVector entries((n0 + 1) * used, 0);
    for (std::size_t o = 0; o < nd; ++o) {
      for (std::size_t u = 0; u < used; ++u) {
        const ColumnRole& role = columns_[modulus.columns[u]];
        const std::uint64_t g = factors.signal[role.layer](o, role.neuron);
        if (g == 0) continue;
        if (role.input == ColumnRole::bias) {
          entries[u] = g;  // the offset row only
          continue;
        }
        entries[u] = n_mulmod2_preinv(g, factors.offset[role.layer][role.input], prime, inverse);
        for (std::size_t t = 0; t < n0; ++t)
          entries[(1 + t) * used + u] =
              n_mulmod2_preinv(g, factors.linear[role.layer](role.input, t), prime, inverse);
      }
      for (std::size_t row = 0; row <= n0; ++row)
        for (const auto& vector : modulus.vectors) {
          LazySum sum(prime, inverse);
          for (const auto& [u, value] : vector) sum.add(entries[row * used + u], value);
          if (sum.value() != 0) return false;
        }
      std::fill(entries.begin(), entries.end(), 0);
    }
  }
  return true;
}

std::optional<std::size_t> first_rejected_pattern(const AnnihilationCheck& check,
                                                  const std::vector<ActivationPattern>& patterns, unsigned threads,
                                                  const StopRequest& stop, bool& stopped,
                                                  const std::function<void(std::size_t, std::size_t)>& progress) {
  std::atomic<std::size_t> next{0}, done{0};
  std::atomic<std::size_t> first_rejected{patterns.size()};
  std::atomic<bool> halt{false};
  std::mutex error_mutex;
  std::exception_ptr error;
  auto work = [&](bool reports) {
    const StopScope scope(stop);  // annihilates() polls it inside one pattern
    try {
      for (std::size_t i; !halt && (i = next++) < patterns.size();) {
        if (i > first_rejected.load()) continue;  // a smaller index already failed
        if (stop.is_requested()) {
          halt = true;
          break;
        }
        if (!check.annihilates(patterns[i])) {
          std::size_t current = first_rejected.load();
          while (i < current && !first_rejected.compare_exchange_weak(current, i)) {
          }
        }
        ++done;
        if (reports && progress) progress(done.load(), patterns.size());
      }
    } catch (...) {
      const std::lock_guard lock(error_mutex);
      if (!error) error = std::current_exception();
      halt = true;
    }
  };
  threads = static_cast<unsigned>(std::max<std::size_t>(1, std::min<std::size_t>(threads, patterns.size())));
  std::vector<std::thread> pool;
  for (unsigned t = 1; t < threads; ++t) pool.emplace_back(work, false);
  work(true);
  for (auto& thread : pool) thread.join();
  if (error) std::rethrow_exception(error);
  if (halt && stop.is_requested()) {
    stopped = true;
    return std::nullopt;
  }
  if (first_rejected.load() < patterns.size()) return first_rejected.load();
  return std::nullopt;
}

}  // namespace pleat::detail
