#include "enumerate/detail/kernel_check.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <thread>

namespace pleat::detail {
namespace {

__extension__ typedef unsigned __int128 Wide;

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

}  // namespace

CheckScale::CheckScale(const Network& network) : bounds(coefficient_bounds(network)) {
  const Integer lcm = denominator_lcm(network);
  for (std::size_t k = 0; k < network.depth(); ++k) scale *= lcm;
}

AnnihilationCheck::AnnihilationCheck(const Network& network, const RationalMatrix& vectors,
                                     const CheckScale& check_scale)
    : vector_count_(vectors.rows()) {
  if (vector_count_ == 0) return;
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
    Modulus modulus{std::move(*reduced), {}};
    for (std::size_t v = 0; v < integer_rows.size(); ++v) {
      if (Rational(product) > needed[v]) continue;  // proved by the primes before
      poll_stop();
      std::vector<std::pair<std::size_t, std::uint64_t>> sparse;
      for (std::size_t c = 0; c < integer_rows[v].size(); ++c)
        if (integer_rows[v][c] != 0) sparse.emplace_back(c, *reduce_modulo(Rational(integer_rows[v][c]), prime));
      modulus.vectors.push_back(std::move(sparse));
    }
    product *= Integer(static_cast<unsigned long>(prime));
    moduli_.push_back(std::move(modulus));
  }
}

bool AnnihilationCheck::annihilates(const ActivationPattern& pattern) const {
  for (const Modulus& modulus : moduli_) {
    poll_stop();
    const std::uint64_t prime = modulus.network.prime;
    const ModularMatrix blocks = coefficient_blocks_mod(modulus.network, pattern);
    for (std::size_t r = 0; r < blocks.rows(); ++r)
      for (const auto& vector : modulus.vectors) {
        Wide sum = 0;  // at most D products below 2^124 each: no overflow for D < 16
        std::uint64_t reduced = 0;
        std::size_t pending = 0;
        for (const auto& [c, value] : vector) {
          if (blocks(r, c) == 0) continue;
          sum += static_cast<Wide>(blocks(r, c)) * value;
          if (++pending == 8) {  // 8 products < 2^127: reduce before it could wrap
            reduced = static_cast<std::uint64_t>((reduced + sum % prime) % prime);
            sum = 0;
            pending = 0;
          }
        }
        reduced = static_cast<std::uint64_t>((reduced + sum % prime) % prime);
        if (reduced != 0) return false;
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
