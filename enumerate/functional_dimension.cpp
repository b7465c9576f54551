#include "enumerate/functional_dimension.hpp"

#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "enumerate/interior_points.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <exception>
#include <functional>
#include <mutex>
#include <set>
#include <thread>

namespace pleat {
namespace {

RationalMatrix stack_rows(const std::vector<RationalMatrix>& blocks, std::size_t columns) {
  std::size_t total = 0;
  for (const auto& block : blocks) total += block.rows();
  RationalMatrix out(total, columns);
  std::size_t r = 0;
  for (const auto& block : blocks)
    for (std::size_t i = 0; i < block.rows(); ++i, ++r)
      for (std::size_t c = 0; c < columns; ++c) out(r, c) = block(i, c);
  return out;
}

// Per-neuron activity over the walked regions, for naming mechanisms.
struct NeuronActivity {
  std::vector<char> ever_on, ever_not_on;
  explicit NeuronActivity(std::size_t n) : ever_on(n, 0), ever_not_on(n, 0) {}
  void record(const ActivationPattern& pattern) {
    for (std::size_t i = 0; i < pattern.states.size(); ++i)
      (pattern.states[i] == NeuronState::on ? ever_on : ever_not_on)[i] = 1;
  }
};

// Parameter index sets of one hidden neuron.
struct NeuronParameters {
  std::set<std::size_t> incoming;  // W_k[i,:] and b_k[i]
  std::set<std::size_t> bias;      // b_k[i]
  std::set<std::size_t> outgoing;  // W_{k+1}[:,i]
  std::set<std::size_t> next_biases;  // b_{k+1}[:]
};

std::vector<NeuronParameters> hidden_neuron_parameters(const Network& network) {
  std::vector<NeuronParameters> out;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const Layer& next = network.layers[k + 1];
    const std::size_t offset = network.parameter_offset(k);
    const std::size_t next_offset = network.parameter_offset(k + 1);
    for (std::size_t i = 0; i < layer.width(); ++i) {
      NeuronParameters p;
      for (std::size_t j = 0; j < layer.fan_in(); ++j) p.incoming.insert(offset + i * layer.fan_in() + j);
      const std::size_t bias = offset + layer.width() * layer.fan_in() + i;
      p.incoming.insert(bias);
      p.bias.insert(bias);
      for (std::size_t o = 0; o < next.width(); ++o) {
        p.outgoing.insert(next_offset + o * next.fan_in() + i);
        p.next_biases.insert(next_offset + next.width() * next.fan_in() + o);
      }
      out.push_back(std::move(p));
    }
  }
  return out;
}

bool is_subset(const std::set<std::size_t>& support, const std::set<std::size_t>& allowed) {
  return std::includes(allowed.begin(), allowed.end(), support.begin(), support.end());
}

bool is_proportional_row(const Layer& layer, std::size_t a, std::size_t b) {
  // (W[a,:], b[a]) = lambda (W[b,:], b[b]) with lambda > 0.
  RationalVector ra = layer.weights.row(a), rb = layer.weights.row(b);
  ra.push_back(layer.bias[a]);
  rb.push_back(layer.bias[b]);
  std::optional<Rational> lambda;
  for (std::size_t c = 0; c < ra.size(); ++c) {
    if ((ra[c] == 0) != (rb[c] == 0)) return false;
    if (ra[c] == 0) continue;
    const Rational ratio = ra[c] / rb[c];
    if (lambda && *lambda != ratio) return false;
    lambda = ratio;
  }
  return lambda && *lambda > 0;
}

// Hidden neurons with a positively proportional (w, b) in the same layer.
std::vector<char> duplicated_neurons(const Network& network) {
  std::vector<char> duplicated;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const std::size_t first = duplicated.size();
    duplicated.resize(first + layer.width(), 0);
    for (std::size_t a = 0; a < layer.width(); ++a)
      for (std::size_t b = a + 1; b < layer.width(); ++b)
        if (is_proportional_row(layer, a, b)) duplicated[first + a] = duplicated[first + b] = 1;
  }
  return duplicated;
}

// Names the mechanism behind one extra kernel vector by its support.
void recognise_mechanism(const Network& network, const NeuronActivity& activity,
                         const std::vector<NeuronParameters>& parameters, const std::vector<char>& duplicated,
                         ExtraKernelDirection& direction) {
  std::set<std::size_t> support;
  for (std::size_t c = 0; c < direction.vector.size(); ++c)
    if (direction.vector[c] != 0) support.insert(c);
  const std::size_t hidden = parameters.size();

  auto try_union = [&](auto&& qualifies, auto&& parameters_of, const char* name) {
    std::set<std::size_t> allowed;
    std::vector<std::size_t> neurons;
    for (std::size_t n = 0; n < hidden; ++n) {
      if (!qualifies(n)) continue;
      const std::set<std::size_t> own = parameters_of(n);
      bool touches = false;
      for (std::size_t c : own) touches = touches || support.contains(c);
      if (!touches) continue;
      allowed.insert(own.begin(), own.end());
      neurons.push_back(n);
    }
    if (neurons.empty() || !is_subset(support, allowed)) return false;
    direction.mechanism = name;
    direction.neurons = neurons;
    return true;
  };
  auto union_of = [&](std::size_t n, std::initializer_list<const std::set<std::size_t>*> parts) {
    std::set<std::size_t> all;
    for (const auto* part : parts) all.insert(part->begin(), part->end());
    (void)n;
    return all;
  };

  auto has_zero_outgoing = [&](std::size_t n) {
    // The neuron's layer and index within it, to read its outgoing weights.
    std::size_t layer = 0, index = n;
    while (index >= network.layers[layer].width()) index -= network.layers[layer++].width();
    const Layer& next = network.layers[layer + 1];
    for (std::size_t o = 0; o < next.width(); ++o)
      if (next.weights(o, index) != 0) return false;
    return true;
  };
  if (try_union(has_zero_outgoing, [&](std::size_t n) { return parameters[n].incoming; }, "zero-outgoing-weights"))
    return;
  if (try_union([&](std::size_t n) { return !activity.ever_on[n]; },
                [&](std::size_t n) { return union_of(n, {&parameters[n].incoming, &parameters[n].outgoing}); },
                "dead-neuron"))
    return;
  if (try_union([&](std::size_t n) { return !activity.ever_not_on[n]; },
                [&](std::size_t n) { return union_of(n, {&parameters[n].bias, &parameters[n].next_biases}); },
                "always-active-neuron"))
    return;
  try_union([&](std::size_t n) { return duplicated[n] != 0; },
            [&](std::size_t n) { return union_of(n, {&parameters[n].incoming, &parameters[n].outgoing}); },
            "duplicate-neurons");
}

}  // namespace

RationalMatrix extra_kernel_basis(const RationalMatrix& kernel, const RationalMatrix& scaling) {
  const RationalMatrix scaling_basis = row_space_basis_exact(scaling);
  std::vector<std::size_t> pivots;
  for (std::size_t r = 0; r < scaling_basis.rows(); ++r) {
    std::size_t c = 0;
    while (scaling_basis(r, c) == 0) ++c;
    pivots.push_back(c);
  }
  RationalMatrix reduced = kernel;
  for (std::size_t r = 0; r < reduced.rows(); ++r)
    for (std::size_t s = 0; s < pivots.size(); ++s) {
      const Rational factor = reduced(r, pivots[s]);
      if (factor == 0) continue;
      for (std::size_t c = 0; c < reduced.cols(); ++c) reduced(r, c) -= factor * scaling_basis(s, c);
    }
  return row_space_basis_exact(reduced);
}

std::size_t batch_functional_dimension(const Network& network, const std::vector<RationalVector>& points) {
  std::vector<RationalMatrix> blocks;
  for (std::size_t i = 0; i < points.size(); ++i) {
    try {
      blocks.push_back(parameter_jacobian_exact(network, points[i]));
    } catch (const input_error& fault) {
      throw input_error("point " + std::to_string(i) + ": " + fault.what());
    }
  }
  return rank_exact(stack_rows(blocks, network.parametric_dimension()));
}

namespace {

// Runs work(i) for i in [0, count) on up to `threads` threads; rethrows the
// first exception (a Stopped included) after every thread has ended.
void parallel_for(std::size_t count, unsigned threads, const std::function<void(std::size_t)>& work) {
  std::atomic<std::size_t> next{0};
  std::mutex error_mutex;
  std::exception_ptr error;
  const StopRequest* stop = current_stop_request();
  auto run = [&] {
    std::optional<StopScope> scope;
    if (stop) scope.emplace(*stop);
    try {
      for (std::size_t i; (i = next++) < count;) work(i);
    } catch (...) {
      const std::lock_guard lock(error_mutex);
      if (!error) error = std::current_exception();
      next = count;
    }
  };
  threads = static_cast<unsigned>(std::max<std::size_t>(1, std::min<std::size_t>(threads, count)));
  std::vector<std::thread> pool;
  for (unsigned t = 1; t < threads; ++t) pool.emplace_back(run);
  run();
  for (auto& thread : pool) thread.join();
  if (error) std::rethrow_exception(error);
}

// Each extra direction with its mechanism, named on up to `threads` threads
// in chunks (progress(done) between chunks, from the calling thread; the
// stop request is polled there too). The same for any thread count.
std::vector<ExtraKernelDirection> name_extra_directions(const Network& network, const NeuronActivity& activity,
                                                        const RationalMatrix& extra, unsigned threads,
                                                        const std::function<void(std::size_t)>& progress) {
  const auto parameters = hidden_neuron_parameters(network);
  const std::vector<char> duplicated = duplicated_neurons(network);
  std::vector<ExtraKernelDirection> named(extra.rows());
  const std::size_t chunk = 64 * static_cast<std::size_t>(std::max(1u, threads));
  for (std::size_t start = 0; start < extra.rows(); start += chunk) {
    poll_stop();
    progress(start);
    const std::size_t count = std::min(chunk, extra.rows() - start);
    parallel_for(count, threads, [&](std::size_t i) {
      ExtraKernelDirection& direction = named[start + i];
      direction.vector = extra.row(start + i);
      recognise_mechanism(network, activity, parameters, duplicated, direction);
    });
  }
  return named;
}

// ---- The proof after the walk ----------------------------------------------
//
// The walk leaves a modular row basis (prime p) of every smooth region's
// coefficient-block rows, rank r. Its kernel mod p, reduced modulo the
// scaling directions S, is the image of the extra directions E (the canonical
// basis of kernel / span(S)). E is lifted to Q by rational reconstruction from
// the kept rows' images modulo further primes, then proved: every row of E
// annihilates every smooth region's rows exactly (below), S does so by
// construction (core/jacobian.hpp), so rank <= D - rank(S u E) <= D -
// rank_p(S u E); and rank >= r (the basis' nonsingular minor). Equal: certified.

// Which rows of which region rose the walk's rank (their images modulo any
// prime stack to an r x D matrix whose kernel contains the true kernel).
struct KeptRows {
  ActivationPattern pattern;
  std::vector<std::size_t> rows;
};

ModularMatrix kept_rows_modulo(const ModularNetwork& network, const std::vector<KeptRows>& kept, std::size_t rank,
                               std::size_t columns) {
  ModularMatrix out(rank, columns);
  std::size_t r = 0;
  for (const KeptRows& region : kept) {
    const ModularMatrix blocks = coefficient_blocks_mod(network, region.pattern);
    for (std::size_t row : region.rows) {
      for (std::size_t c = 0; c < columns; ++c) out(r, c) = blocks(row, c);
      ++r;
    }
  }
  return out;
}

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

// A deterministic exact test that given integer vectors annihilate a
// pattern's coefficient-block rows, in word arithmetic. For a row of the
// blocks and an integer vector e, N = L^d (row . e) is an integer (entries are
// polynomials of degree < d in theta with integer coefficients; L = lcm of the
// parameters' denominators) and |N| <= L^d sum_c B_c |e_c| (coefficient_bounds).
// N = 0 mod primes whose product exceeds that bound proves N = 0 (Chinese
// remainder theorem); the first prime also screens out failures quickly.
// What the check's bound needs from the network alone: B (coefficient_bounds)
// and L^d. Computed once, shared by every candidate checked.
struct CheckScale {
  RationalVector bounds;
  Integer scale = 1;
  explicit CheckScale(const Network& network) : bounds(coefficient_bounds(network)) {
    const Integer lcm = denominator_lcm(network);
    for (std::size_t k = 0; k < network.depth(); ++k) scale *= lcm;
  }
};

class AnnihilationCheck {
 public:
  AnnihilationCheck(const Network& network, const RationalMatrix& vectors, const CheckScale& check_scale)
      : vector_count_(vectors.rows()) {
    if (vector_count_ == 0) return;
    const RationalVector& bounds = check_scale.bounds;
    const Integer& scale = check_scale.scale;
    std::vector<std::vector<Integer>> integer_rows;
    Rational largest = 0;
    // Thousands of dense vectors and, on deep networks, hundreds of primes:
    // poll the current thread's stop request (a no-op without a StopScope).
    for (std::size_t r = 0; r < vectors.rows(); ++r) {
      poll_stop();
      integer_rows.push_back(primitive_integer_row(vectors.row(r)));
      Rational sum = 0;
      for (std::size_t c = 0; c < vectors.cols(); ++c)
        if (integer_rows.back()[c] != 0) sum += bounds[c] * Rational(abs(integer_rows.back()[c]));
      if (sum > largest) largest = sum;
    }
    const Rational bound = largest * Rational(scale);
    Integer product = 1;
    for (std::size_t index = 0; Rational(product) <= bound; ++index) {
      const std::uint64_t prime = prime_sequence(index);
      auto reduced = reduce_modulo(network, prime);
      if (!reduced) continue;  // the prime divides a denominator
      product *= Integer(static_cast<unsigned long>(prime));
      Modulus modulus{std::move(*reduced), {}};
      for (const auto& row : integer_rows) {
        poll_stop();
        std::vector<std::pair<std::size_t, std::uint64_t>> sparse;
        for (std::size_t c = 0; c < row.size(); ++c)
          if (row[c] != 0) sparse.emplace_back(c, *reduce_modulo(Rational(row[c]), prime));
        modulus.vectors.push_back(std::move(sparse));
      }
      moduli_.push_back(std::move(modulus));
    }
  }

  std::size_t primes() const { return moduli_.size(); }

  // True exactly when every vector annihilates every row of the pattern's blocks.
  bool annihilates(const ActivationPattern& pattern) const {
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

 private:
  __extension__ typedef unsigned __int128 Wide;
  struct Modulus {
    ModularNetwork network;
    std::vector<std::vector<std::pair<std::size_t, std::uint64_t>>> vectors;  // sparse, residues
  };
  std::size_t vector_count_;
  std::vector<Modulus> moduli_;
};

// The smallest index of a pattern the check rejects, checked on `threads`
// threads (the answer does not depend on their number), or nullopt when all
// pass. Sets stopped (and returns nullopt) when the stop request fires.
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

// The leading column of each row of an echelon matrix (its shape).
std::vector<std::size_t> echelon_shape(const ModularMatrix& echelon) {
  std::vector<std::size_t> leads;
  for (std::size_t r = 0; r < echelon.rows(); ++r) {
    std::size_t c = 0;
    while (c < echelon.cols() && echelon(r, c) == 0) ++c;
    leads.push_back(c);
  }
  return leads;
}

// The extra directions E modulo p: the canonical basis of the kernel vectors
// that vanish at Q (the pivot columns of the scaling directions' echelon
// form), a complement of the scaling directions in the kernel. They are the
// kernel of the rows without the columns Q, put back with zeros at Q (zero
// columns keep a reduced echelon form reduced): one elimination of
// rank x (D - |Q|) instead of (rank + |Q|) x D.
ModularMatrix extra_directions_of_rows(const ModularMatrix& rows, const std::vector<std::size_t>& scaling_pivots,
                                       std::uint64_t prime) {
  std::vector<bool> is_scaling_pivot(rows.cols(), false);
  for (std::size_t c : scaling_pivots) is_scaling_pivot[c] = true;
  std::vector<std::size_t> columns;  // the columns outside Q, increasing
  for (std::size_t c = 0; c < rows.cols(); ++c)
    if (!is_scaling_pivot[c]) columns.push_back(c);
  ModularMatrix restricted(rows.rows(), columns.size());
  for (std::size_t r = 0; r < rows.rows(); ++r)
    for (std::size_t q = 0; q < columns.size(); ++q) restricted(r, q) = rows(r, columns[q]);
  const ModularMatrix kernel = kernel_basis_modulo(restricted, prime);
  ModularMatrix extra(kernel.rows(), rows.cols());
  for (std::size_t r = 0; r < kernel.rows(); ++r)
    for (std::size_t q = 0; q < columns.size(); ++q) extra(r, columns[q]) = kernel(r, q);
  return extra;
}

// The same from the kept rows' images modulo another prime, or nullopt when
// the prime divides a denominator.
std::optional<ModularMatrix> extra_directions_modulo(const Network& network, const std::vector<KeptRows>& kept,
                                                     std::size_t rank,
                                                     const std::vector<std::size_t>& scaling_pivots,
                                                     std::uint64_t prime) {
  auto reduced = reduce_modulo(network, prime);
  if (!reduced) return std::nullopt;
  return extra_directions_of_rows(kept_rows_modulo(*reduced, kept, rank, network.parametric_dimension()),
                                  scaling_pivots, prime);
}

// The extra directions' images modulo the given primes, computed on up to
// `threads` threads (one elimination each); nullopt for a prime that divides
// a denominator.
std::vector<std::optional<ModularMatrix>> extra_directions_modulo_primes(
    const Network& network, const std::vector<KeptRows>& kept, std::size_t rank,
    const std::vector<std::size_t>& scaling_pivots, const std::vector<std::uint64_t>& primes, unsigned threads) {
  std::vector<std::optional<ModularMatrix>> images(primes.size());
  parallel_for(primes.size(), threads, [&](std::size_t i) {
    images[i] = extra_directions_modulo(network, kept, rank, scaling_pivots, primes[i]);
  });
  return images;
}

// Images modulo further primes computed beside the walk's prime's (one per
// spare thread), and the index in prime_sequence after the last of them.
struct AheadImages {
  std::vector<std::uint64_t> primes;
  std::vector<std::optional<ModularMatrix>> images;
  std::size_t next_prime_index = 0;
};

// Lifts the extra directions from their image modulo the walk's prime and
// proves them. After each round of primes (one per thread, computed in
// parallel), a reconstruction that succeeds is checked exactly on every
// smooth region; the first that passes is returned: it is proved, whatever
// primes produced it (a wrong one fails on some region, almost always the
// first, and costs little). Starts with the walk's prime alone, so small
// entries need no elimination beyond the walk's. Returns nullopt when stopped
// (stopped is set) or when no candidate passes within max_primes, or when
// the images stop having the first one's shape (the walk's prime then hid a
// row: bounds only).
std::optional<RationalMatrix> lift_and_prove_extra_directions(
    const Network& network, const std::vector<std::size_t>& scaling_pivots, const std::vector<KeptRows>& kept,
    std::size_t rank, const ModularMatrix& first_image, std::uint64_t first_prime, const AheadImages& ahead,
    const std::vector<ActivationPattern>& smooth, const CheckScale& check_scale, unsigned threads,
    const StopRequest& stop, bool& stopped, const std::function<void(std::size_t)>& lift_progress,
    const std::function<void(std::size_t, std::size_t)>& check_progress) {
  RationalReconstruction lifting(first_image.rows(), first_image.cols());
  lifting.add_image(first_image, first_prime);
  const std::vector<std::size_t> shape = echelon_shape(first_image);
  std::optional<RationalMatrix> rejected;  // the last candidate the check rejected
  std::size_t next_prime_index = ahead.next_prime_index, unusable_in_a_row = 0;
  constexpr std::size_t max_primes = 4096, max_unusable_in_a_row = 16;
  auto add_images = [&](const std::vector<std::uint64_t>& primes, const std::vector<std::optional<ModularMatrix>>& images) {
    for (std::size_t i = 0; i < primes.size(); ++i) {
      const auto& image = images[i];
      if (!image || image->rows() != first_image.rows() || echelon_shape(*image) != shape) {
        ++unusable_in_a_row;
        continue;
      }
      unusable_in_a_row = 0;
      lifting.add_image(*image, primes[i]);
      if (lift_progress) lift_progress(lifting.primes());
    }
  };
  add_images(ahead.primes, ahead.images);
  while (true) {
    if (stop.is_requested()) {
      stopped = true;
      return std::nullopt;
    }
    std::optional<RationalMatrix> candidate = lifting.reconstruct();
    if (candidate && candidate != rejected) {
      const AnnihilationCheck check(network, *candidate, check_scale);
      const auto failed = first_rejected_pattern(check, smooth, threads, stop, stopped, check_progress);
      if (stopped) return std::nullopt;
      if (!failed) return candidate;
      rejected = std::move(candidate);
    }
    if (lifting.primes() >= max_primes || unusable_in_a_row >= max_unusable_in_a_row) return std::nullopt;
    std::vector<std::uint64_t> primes;
    while (primes.size() < std::max(1u, threads)) {
      const std::uint64_t prime = prime_sequence(next_prime_index++);
      if (prime != first_prime) primes.push_back(prime);
    }
    add_images(primes, extra_directions_modulo_primes(network, kept, rank, scaling_pivots, primes, threads));
  }
}

// Whether E vanishes at the columns Q and is in reduced row-echelon form
// with leading 1s: then S u E is independent whenever S restricted to Q is
// nonsingular (a combination vanishing at Q has no S part; E's leading 1s
// then force the rest to zero). Exact.
bool is_echelon_off(const RationalMatrix& extra, const std::vector<std::size_t>& columns) {
  std::vector<bool> is_excluded(extra.cols(), false);
  for (std::size_t c : columns) is_excluded[c] = true;
  std::size_t previous = 0;
  for (std::size_t r = 0; r < extra.rows(); ++r) {
    poll_stop();
    std::size_t lead = 0;
    while (lead < extra.cols() && extra(r, lead) == 0) ++lead;
    if (lead == extra.cols() || extra(r, lead) != 1 || (r > 0 && lead <= previous)) return false;
    for (std::size_t other = 0; other < extra.rows(); ++other)
      if (other != r && extra(other, lead) != 0) return false;
    for (std::size_t c : columns)
      if (extra(r, c) != 0) return false;
    previous = lead;
  }
  return true;
}

RationalMatrix stack_matrices(const RationalMatrix& top, const RationalMatrix& bottom) {
  RationalMatrix out(top.rows() + bottom.rows(), top.cols());
  for (std::size_t r = 0; r < top.rows(); ++r) out.set_row(r, top.row(r));
  for (std::size_t r = 0; r < bottom.rows(); ++r) out.set_row(top.rows() + r, bottom.row(r));
  return out;
}

// ---- The no-walk path --------------------------------------------------------

bool has_zero_at_point(const ActivationPattern& pattern) {
  return std::find(pattern.states.begin(), pattern.states.end(), NeuronState::zero_at_point) != pattern.states.end();
}

// The pattern of the open region around x when x lies on no bent hyperplane
// and that region has smooth points; nullopt otherwise (a bent hyperplane
// through x: nudge it; a region without smooth points: no rows). Exact.
enum class PointVerdict { smooth, on_bent_hyperplane, not_smooth };
struct PointRegion {
  PointVerdict verdict = PointVerdict::on_bent_hyperplane;
  ActivationPattern pattern;
};

PointRegion region_of_point(const Network& network, const IntegerPatternEvaluator& evaluator,
                            const RationalVector& x) {
  ActivationPattern pattern = evaluator.pattern_at(x);  // evaluate_exact's pattern, in integers
  if (has_zero_at_point(pattern)) {
    pattern = pattern_around_point(network, x);  // identically-zero neurons become 'z'
    if (has_zero_at_point(pattern)) return {PointVerdict::on_bent_hyperplane, {}};
    if (!nonsmooth_neurons(network, pattern).empty()) return {PointVerdict::not_smooth, {}};
  }
  return {PointVerdict::smooth, std::move(pattern)};
}

}  // namespace

std::optional<std::size_t> first_region_not_annihilated(const Network& network, const RationalMatrix& vectors,
                                                        const std::vector<ActivationPattern>& patterns,
                                                        unsigned threads) {
  if (vectors.cols() != network.parametric_dimension())
    throw usage_error("first_region_not_annihilated: the vectors need one entry per parameter");
  if (vectors.rows() == 0) return std::nullopt;
  const AnnihilationCheck check(network, vectors, CheckScale(network));
  bool stopped = false;
  return first_rejected_pattern(check, patterns, std::max(1u, threads), StopRequest(), stopped, {});
}

FunctionalDimensionResult certify_functional_dimension(const Network& network, const Domain& domain,
                                                       const FunctionalDimensionOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  const StopRequest stop(options.walk.interrupt, options.walk.time_limit_seconds);
  FunctionalDimensionResult result;
  const std::size_t parameters = network.parametric_dimension();
  result.parametric_dimension = parameters;
  // The scaling directions' rank and pivot columns from the network's zero
  // pattern (no elimination: cheap even for thousands of layers).
  const ScalingStructure scaling = scaling_structure(network);
  result.scaling_bound = parameters - scaling.rank;
  auto report = [&](const char* phase, std::size_t done, std::size_t total) {
    if (options.on_phase) options.on_phase(CertifyProgress{phase, done, total, stop.elapsed_seconds()});
  };

  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  ModularRowBasis basis(modular.prime, parameters);
  std::vector<KeptRows> kept;
  std::vector<ActivationPattern> smooth;
  NeuronActivity activity(network.relu_neuron_count());

  auto add_region_rows = [&](const ActivationPattern& pattern) {
    const ModularMatrix rows = coefficient_blocks_mod(modular, pattern);
    KeptRows region{pattern, {}};
    for (std::size_t r = 0; r < rows.rows(); ++r)
      if (basis.add_row(rows.row(r))) region.rows.push_back(r);
    if (!region.rows.empty()) kept.push_back(std::move(region));
  };
  const unsigned threads =
      options.walk.threads ? options.walk.threads : std::max(1u, std::thread::hardware_concurrency());

  // Points first: rows of the regions that exact interior points land in.
  // Batches are drawn in order and their patterns decided in parallel, then
  // their rows added in point order, so the result does not depend on the
  // thread count. Stalls after `patience` points without a rise in rank.
  std::set<ActivationPattern> seen_by_points;
  auto rows_from_points = [&] {
    InteriorPointSource source(domain, options.points_seed);
    const IntegerPatternEvaluator evaluator(network);
    const std::size_t patience = std::max<std::size_t>(64, result.scaling_bound / 2);
    const std::size_t budget = 4 * result.scaling_bound + 256;
    const std::size_t batch = 16 * static_cast<std::size_t>(threads);
    std::size_t since_rise = 0;
    const StopScope scope(stop);
    while (basis.rank() < result.scaling_bound && since_rise < patience && result.points_drawn < budget) {
      if (stop.is_requested()) return;
      std::vector<RationalVector> points(batch);
      for (RationalVector& point : points) point = source.next();
      std::vector<PointRegion> regions(batch);
      std::vector<ModularMatrix> rows(batch);
      parallel_for(batch, threads, [&](std::size_t i) {
        regions[i] = region_of_point(network, evaluator, points[i]);
        for (unsigned attempt = 0; attempt < 8 && regions[i].verdict == PointVerdict::on_bent_hyperplane; ++attempt) {
          // A nudge drawn from the point's own generator: the same for any thread count.
          InteriorPointSource nudges(domain, options.points_seed ^ (0x9e3779b97f4a7c15ull * (result.points_drawn + i + 1)));
          points[i] = nudges.nudge(points[i], attempt);
          regions[i] = region_of_point(network, evaluator, points[i]);
        }
        if (regions[i].verdict == PointVerdict::smooth && !seen_by_points.contains(regions[i].pattern))
          rows[i] = coefficient_blocks_mod(modular, regions[i].pattern);
      });
      for (std::size_t i = 0; i < batch && basis.rank() < result.scaling_bound; ++i) {
        ++result.points_drawn;
        ++since_rise;
        if (regions[i].verdict != PointVerdict::smooth || !seen_by_points.insert(regions[i].pattern).second) continue;
        KeptRows region{regions[i].pattern, {}};
        for (std::size_t r = 0; r < rows[i].rows(); ++r)
          if (basis.add_row(rows[i].row(r))) region.rows.push_back(r);
        if (region.rows.empty()) continue;
        kept.push_back(std::move(region));
        result.witness_points.push_back(points[i]);
        since_rise = 0;
      }
      report("points", basis.rank(), result.scaling_bound);
    }
  };

  WalkOptions walk_options = options.walk;
  walk_options.on_region = [&](const Region& region) {
    ++result.regions_walked;
    activity.record(region.pattern);
    if (!region.nonsmooth_neurons.empty()) return true;  // no smooth points: no rows
    smooth.push_back(region.pattern);
    if (!seen_by_points.contains(region.pattern)) add_region_rows(region.pattern);
    if (options.stop_at_scaling_bound && basis.rank() == result.scaling_bound) {
      result.early_stop = true;
      return false;
    }
    return true;
  };
  const bool tries_points = options.stop_at_scaling_bound && options.points_first;
  if (tries_points) {
    try {
      rows_from_points();
    } catch (const Stopped&) {
      // bounds below
    }
  }
  if (tries_points && basis.rank() == result.scaling_bound) {
    result.early_stop = true;
    result.certified_by_points = true;
  } else if (tries_points && stop.is_requested()) {
    result.stop_reason = stop.reason();
  } else {
    // The limit counts from the start of certify, not of the walk.
    if (options.walk.time_limit_seconds > 0)
      walk_options.time_limit_seconds = std::max(1e-9, options.walk.time_limit_seconds - stop.elapsed_seconds());
    result.walk = options.walker ? options.walker(network, domain, walk_options)
                                 : walk_regions(network, domain, walk_options);
    result.walk_complete = result.walk.complete;
    result.nonsmooth_regions = result.walk.nonsmooth_regions;
    result.stop_reason = result.early_stop ? StopReason::none : result.walk.stop_reason;
  }
  // Proved whatever happens next: the kept rows' nonsingular minor, the scaling kernel.
  result.lower_bound = basis.rank();
  result.upper_bound = result.scaling_bound;

  bool stopped = false;
  auto stop_now = [&] {
    if (StopReason reason = stop.reason(); reason != StopReason::none) {
      result.stop_reason = reason;
      stopped = true;
    }
    return stopped;
  };

  // Lifts the extra directions, proves them on every smooth region, names
  // their mechanisms (lift_and_prove_extra_directions). The walk's basis
  // holds every smooth region's rows modulo its prime, so the first image is
  // the kernel of all of them modulo p.
  auto prove_by_extra_directions = [&] {
    // The scaling directions' pivot columns Q: S restricted to its
    // independent rows and Q is nonsingular over Q (core/jacobian.hpp).
    const std::vector<std::size_t>& scaling_pivots = scaling.pivot_columns;
    report("kernel", 0, 0);
    // With spare threads, the first further primes' eliminations run beside
    // the walk prime's (wall time the lift would spend anyway whenever one
    // prime does not suffice; with one thread nothing is computed ahead).
    AheadImages ahead;
    while (ahead.primes.size() + 1 < threads) {
      const std::uint64_t prime = prime_sequence(ahead.next_prime_index++);
      if (prime != modular.prime) ahead.primes.push_back(prime);
    }
    ahead.images.resize(ahead.primes.size());
    ModularMatrix first_image;
    parallel_for(1 + ahead.primes.size(), threads, [&](std::size_t i) {
      if (i == 0)
        first_image = extra_directions_of_rows(basis.rows(), scaling_pivots, modular.prime);
      else
        ahead.images[i - 1] = extra_directions_modulo(network, kept, basis.rank(), scaling_pivots, ahead.primes[i - 1]);
    });
    RationalMatrix extra(0, parameters);
    if (first_image.rows() > 0) {
      const CheckScale check_scale(network);
      auto proved = lift_and_prove_extra_directions(
          network, scaling_pivots, kept, basis.rank(), first_image, modular.prime, ahead, smooth, check_scale, threads, stop,
          stopped, [&](std::size_t primes) { report("kernel", primes, 0); },
          [&](std::size_t done, std::size_t total) { report("check", done, total); });
      if (stopped) result.stop_reason = stop.reason();
      if (!proved) return;  // stopped, or nothing proved: bounds only
      extra = std::move(*proved);
    }
    if (stop_now()) return;
    // Proved: S and E annihilate every smooth region's rows exactly.
    // Independent: E is echelon and vanishes on Q (checked exactly here).
    if (!is_echelon_off(extra, scaling_pivots)) return;
    result.lower_bound = basis.rank();
    result.upper_bound = std::min(result.scaling_bound, parameters - scaling.rank - extra.rows());
    if (options.keep_kernel)
      result.kernel = stack_matrices(scaling_directions(network, scaling.independent_neurons), extra);
    result.extra_kernel = name_extra_directions(network, activity, extra, threads, [&](std::size_t done) {
      report("naming", done, extra.rows());
    });
    result.certified = result.lower_bound == result.upper_bound;
  };

  if (result.early_stop) {
    result.certified = true;
  } else if (result.walk.certified && !stop_now()) {
    // The kernel's elimination, read-off and lifting poll the request too
    // (core/rank.cpp): a stop there leaves the bounds proved above.
    try {
      const StopScope scope(stop);
      prove_by_extra_directions();
    } catch (const Stopped& stopped_here) {
      result.stop_reason = stopped_here.reason();
      stopped = true;
    }
  } else {
    // A walk cut short or with an anomaly: the two proved bounds only.
    result.certified = result.lower_bound == result.upper_bound && result.stop_reason == StopReason::none;
  }
  if (result.certified) result.functional_dimension = result.lower_bound;
  result.regions_contributing = kept.size();
  if (options.keep_rows && !kept.empty()) {
    std::vector<RationalMatrix> blocks;
    for (const KeptRows& region : kept) blocks.push_back(coefficient_blocks(network, region.pattern));
    result.rows = stack_rows(blocks, parameters);
  }
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

}  // namespace pleat
