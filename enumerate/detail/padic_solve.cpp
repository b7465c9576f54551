#include "enumerate/detail/padic_solve.hpp"

#include "enumerate/detail/modular_substitution.hpp"
#include "enumerate/detail/word_matrix.hpp"

#include "core/stop.hpp"

#include <flint/fmpq.h>
#include <flint/fmpq_mat.h>
#include <flint/fmpz.h>
#include <flint/nmod_vec.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <cstdint>
#include <cstdlib>
#include <memory>
#include <optional>
#include <vector>

namespace pleat::detail {
namespace {

__extension__ typedef unsigned __int128 Wide;

}  // namespace

// A modulo a word prime p as FLINT's LU factorization (row i of the
// factored matrix is row order[i] of A), with U's rows divided by their
// diagonal entries (kept inverted in `inverse_diagonal`): FLINT's solve with
// a non-unit U inverts its diagonal on every call, a fifth of a 42 x 42
// solve's time on 2,15,15,15,15,1 (a digit per call).
struct ModularLu {
  std::uint64_t prime;
  NmodMatrix lu;
  std::vector<slong> order;
  std::vector<std::uint64_t> inverse_diagonal;
  ModularLu(const fmpz_mat_struct* a, std::uint64_t p)
      : prime(p),
        lu(static_cast<std::size_t>(fmpz_mat_nrows(a)), static_cast<std::size_t>(fmpz_mat_nrows(a)), p),
        order(static_cast<std::size_t>(fmpz_mat_nrows(a))) {}
};

namespace {

// A's LU modulo the first of three fixed primes below 2^62 that does not
// divide det A; nullptr when all three do (A is then most likely singular).
std::unique_ptr<ModularLu> factor_modulo_some_prime(const fmpz_mat_struct* a) {
  std::uint64_t prime = (std::uint64_t{1} << 62) - (std::uint64_t{1} << 36);
  for (int attempt = 0; attempt < 3; ++attempt) {
    prime = n_nextprime(prime, 1);
    auto lu = std::make_unique<ModularLu>(a, prime);
    fmpz_mat_get_nmod_mat(lu->lu.get(), a);
    if (nmod_mat_lu(lu->order.data(), lu->lu.get(), 1) != fmpz_mat_nrows(a)) continue;
    const slong n = fmpz_mat_nrows(a);
    for (slong i = 0; i < n; ++i) {  // U = D U' with U' unit upper triangular
      const std::uint64_t inverse = n_invmod(nmod_mat_entry(lu->lu.get(), i, i), prime);
      lu->inverse_diagonal.push_back(inverse);
      for (slong j = i + 1; j < n; ++j)
        nmod_mat_entry(lu->lu.get(), i, j) = nmod_mul(nmod_mat_entry(lu->lu.get(), i, j), inverse, lu->lu.get()->mod);
    }
    return lu;
  }
  return nullptr;
}

// A and B modulo a second word prime q (not the lifting's): a candidate
// column x / d read off the p-adic digits is accepted when A x = d b modulo
// q, n^2 word products, instead of waiting for the next digit to give the
// same candidate (a step and a read-off more per column). The exact solution
// always passes; a wrong candidate passes with probability about 1/q, and
// the caller's exact check decides anyway.
class SecondPrimeCheck {
 public:
  explicit SecondPrimeCheck(const fmpz_mat_struct* a)
      : prime_(n_nextprime((std::uint64_t{1} << 62) - (std::uint64_t{1} << 37), 1)),
        a_(static_cast<std::size_t>(fmpz_mat_nrows(a)), static_cast<std::size_t>(fmpz_mat_ncols(a)), prime_) {
    fmpz_mat_get_nmod_mat(a_.get(), a);  // the lifting primes lie above q
  }

  // B modulo q, for the solve of A X = B that follows.
  void set_right(const fmpz_mat_struct* b) {
    b_.emplace(static_cast<std::size_t>(fmpz_mat_nrows(b)), static_cast<std::size_t>(fmpz_mat_ncols(b)), prime_);
    fmpz_mat_get_nmod_mat(b_->get(), b);
  }

  // Whether A numerators = denominator B[:, c] modulo q.
  bool passes(const std::vector<Integer>& numerators, const Integer& denominator, std::size_t c) {
    const nmod_t mod = a_.get()->mod;
    residues_.resize(numerators.size());
    for (std::size_t j = 0; j < numerators.size(); ++j)
      residues_[j] = mpz_fdiv_ui(numerators[j].get_mpz_t(), prime_);
    const std::uint64_t d = mpz_fdiv_ui(denominator.get_mpz_t(), prime_);
    // Row i of A times the residues: FLINT's dot product, reduced once per
    // row (a third of the time of a reduction per product at 999 x 999).
    const auto n = static_cast<slong>(numerators.size());
    const int limbs = _nmod_vec_dot_bound_limbs(n, mod);
    for (slong i = 0; i < n; ++i) {
      const std::uint64_t expected = nmod_mul(d, nmod_mat_entry(b_->get(), i, static_cast<slong>(c)), mod);
      if (_nmod_vec_dot(a_.get()->rows[i], residues_.data(), n, mod, limbs) != expected) return false;
    }
    return true;
  }

 private:
  std::uint64_t prime_;
  NmodMatrix a_;
  std::optional<NmodMatrix> b_;
  std::vector<std::uint64_t> residues_;
};

// One column's lifting: its residual, X modulo p^k so far, and where to
// read it off next.
struct ColumnLift {
  // (b - A x_k) / p^k: `size` words per entry (ResidualWords), two's complement
  std::vector<std::uint64_t> residual;
  std::vector<Integer> value;     // x_k: X modulo p^k, in [0, p^k)
  // The denominator the next read-off starts from: the last candidate's
  // (which failed modulo the second prime), else the last column accepted
  // (the columns share A's denominator; one try), else 1.
  Integer guess = 1;
  bool is_done = false;
  // The digit count at which to read the column off next: a failed attempt
  // (one reconstruction at that size, which costs more than a step on small
  // systems) waits a quarter more digits, a new candidate one.
  std::size_t next_attempt = 1;
  // The entry the next read-off starts at: the one the last failed at.
  std::size_t first = 0;
};

// The column's entries as fractions with one denominator d (from `guess`,
// grown entry by entry by rational reconstruction: d x_i modulo p^k is a
// small integer, or its reconstruction's denominator multiplies d), every
// numerator and d at most sqrt(p^k / 2). False when that fails (too few
// digits yet). With the last candidate's d as the guess, a column already
// right costs one product per entry and no reconstruction. A reconstruction
// n / e is refused unless |n| e is below p^k / 2^reconstruction_gap: a
// random residue (too few digits yet) reconstructs within sqrt(p^k / 2)
// both ways most of the time (each residue has such a fraction with
// probability about 0.6), with |n| e about p^k over a partial quotient, and
// on 2,15,15,15,15,1 seed 1 a failed read-off then took three
// reconstructions of up to 1400 bits, not one (160 in all for 48 failed
// read-offs). The gap refuses it at the first; the true column, with |n|
// e at most p^k / 2 once it can be read, waits at most one digit more
// (62 bits > 48).
constexpr std::size_t reconstruction_gap = 48;

bool read_off(const std::vector<Integer>& value, const Integer& modulus, const Integer& guess,
              std::size_t& first, std::vector<Integer>& numerators, Integer& denominator) {
  Integer bound;  // sqrt(p^k / 2)
  mpz_fdiv_q_2exp(bound.get_mpz_t(), modulus.get_mpz_t(), 1);
  mpz_sqrt(bound.get_mpz_t(), bound.get_mpz_t());
  Integer half;
  mpz_fdiv_q_2exp(half.get_mpz_t(), modulus.get_mpz_t(), 1);
  denominator = guess;
  if (denominator > bound) return false;
  numerators.assign(value.size(), Integer(0));
  Integer scaled;
  fmpz_t residue, modulus_f;
  fmpq_t fraction;
  fmpz_init(residue);
  fmpz_init(modulus_f);
  fmpq_init(fraction);
  fmpz_set_mpz(modulus_f, modulus.get_mpz_t());
  const auto modulus_bits = static_cast<std::size_t>(fmpz_bits(modulus_f));
  bool is_read = true;
  const std::size_t n = value.size();
  for (std::size_t k = 0; k < n && is_read; ++k) {
    const std::size_t i = (first + k) % n;
    scaled = value[i] * denominator;
    mpz_fdiv_r(scaled.get_mpz_t(), scaled.get_mpz_t(), modulus.get_mpz_t());
    if (scaled > half) scaled -= modulus;
    if (abs(scaled) <= bound) {
      numerators[i] = scaled;
      continue;
    }
    if (scaled < 0) scaled += modulus;
    fmpz_set_mpz(residue, scaled.get_mpz_t());
    if (!fmpq_reconstruct_fmpz(fraction, residue, modulus_f) ||
        fmpz_bits(fmpq_numref(fraction)) + fmpz_bits(fmpq_denref(fraction)) + reconstruction_gap > modulus_bits) {
      is_read = false;
      first = i;
      break;
    }
    Integer factor;  // the new entry's denominator: every earlier numerator and d take it
    fmpz_get_mpz(factor.get_mpz_t(), fmpq_denref(fraction));
    denominator *= factor;
    if (denominator > bound) {
      is_read = false;
      first = i;
      break;
    }
    for (std::size_t before = 0; before < k && is_read; ++before) {
      Integer& numerator = numerators[(first + before) % n];
      numerator *= factor;
      is_read = abs(numerator) <= bound;
    }
    fmpz_get_mpz(numerators[i].get_mpz_t(), fmpq_numref(fraction));
  }
  fmpq_clear(fraction);
  fmpz_clear(modulus_f);
  fmpz_clear(residue);
  return is_read;
}

// The residuals (b - A x_k) / p^k in fixed-width words: |r_k| <= M =
// max(|b|, 2 n max|A|) for every k (|r_(k+1)| <= |r_k| / p + n max|A|).
// Each step works modulo 2^(64 size), size the words of M and a sign:
// r_k - A d_k in word products (it may exceed 2^(64 size): only its residue
// is needed), then one Hensel division, t p^-1 modulo 2^(64 size), which is
// the exact quotient r_(k+1) since p divides t and |r_(k+1)| <= M <
// 2^(64 size - 1). No multi-precision call.
struct ResidualWords {
  std::size_t size;
  std::uint64_t prime, inverse;  // p^-1 modulo 2^64
  std::uint64_t prime_inverse;   // FLINT's precomputed inverse of p (n_preinvert_limb)
  std::uint64_t wrap;            // 2^(64 size) modulo p
  ResidualWords(std::size_t a_bits, std::size_t b_bits, std::size_t n, std::uint64_t p)
      : prime(p), prime_inverse(n_preinvert_limb(p)) {
    std::size_t n_bits = 0;
    while ((std::size_t{1} << n_bits) <= n) ++n_bits;
    const std::size_t bound_bits = std::max(b_bits, a_bits + n_bits + 1) + 1;  // M and a sign
    size = (bound_bits + 63) / 64;
    inverse = p;  // Newton's iteration modulo 2^64: 3, 6, 12, 24, 48, 96 bits
    for (int i = 0; i < 5; ++i) inverse *= 2 - p * inverse;
    Wide power = 1;
    for (std::size_t w = 0; w < size; ++w) power = (power << 64) % p;
    wrap = static_cast<std::uint64_t>(power);
  }
  void set(std::uint64_t* r, const fmpz_t value) const {
    std::fill(r, r + size, std::uint64_t{0});
    const bool negative = fmpz_sgn(value) < 0;
    if (!COEFF_IS_MPZ(*value)) {
      const slong small = *value;
      r[0] = negative ? static_cast<std::uint64_t>(-small) : static_cast<std::uint64_t>(small);
    } else {
      const __mpz_struct* big = COEFF_TO_PTR(*value);
      const auto limbs = static_cast<std::size_t>(big->_mp_size < 0 ? -big->_mp_size : big->_mp_size);
      for (std::size_t l = 0; l < limbs && l < size; ++l) r[l] = big->_mp_d[l];
    }
    if (negative) negate(r);
  }
  void negate(std::uint64_t* r) const {
    std::uint64_t carry = 1;
    for (std::size_t w = 0; w < size; ++w) {
      r[w] = ~r[w] + carry;
      carry = carry != 0 && r[w] == 0 ? 1 : 0;
    }
  }
  // r / p, exactly (p divides r).
  void divide_exactly(std::uint64_t* r) const {
    std::uint64_t borrow = 0;
    for (std::size_t w = 0; w < size; ++w) {
      const std::uint64_t s = r[w] - borrow;
      const std::uint64_t below = r[w] < borrow ? 1 : 0;
      const std::uint64_t q = s * inverse;
      r[w] = q;
      borrow = static_cast<std::uint64_t>((static_cast<Wide>(q) * prime) >> 64) + below;
    }
  }
  // r modulo p, in [0, p): its words read as the unsigned U, less 2^(64
  // size) when negative.
  std::uint64_t residue(const std::uint64_t* r) const {
    std::uint64_t value = 0;  // Horner's rule by words, each step a reduction by p's precomputed inverse
    for (std::size_t w = size; w-- > 0;) value = n_ll_mod_preinv(value, r[w], prime, prime_inverse);
    if ((r[size - 1] >> 63) == 0) return value;
    return value >= wrap ? value - wrap : value + (prime - wrap);
  }
};

}  // namespace

// What the lifting keeps of A between right-hand sides. For A the
// transpose of another solver's matrix (PA = LU there), that LU is shared:
// A = U^T L^T P, so A x = b is U'^T w = b, y = D^-1 w, L^T z = y (the
// triangles of LU's transpose, both unit) and x[order[i]] = z[i].
struct SquareSolver::Lifting {
  std::shared_ptr<ModularLu> lu;  // nullptr: singular modulo the primes tried
  std::optional<NmodMatrix> transposed_lu;  // when lu is A^T's
  std::optional<WordMatrix> words;
  std::optional<SecondPrimeCheck> second_prime;
  Lifting(const fmpz_mat_struct* a, std::shared_ptr<ModularLu> transposes) {
    if (transposes) {
      lu = std::move(transposes);
      const auto n = static_cast<std::size_t>(fmpz_mat_nrows(a));
      transposed_lu.emplace(n, n, lu->prime);
      nmod_mat_transpose(transposed_lu->get(), lu->lu.get());
    } else {
      lu = factor_modulo_some_prime(a);
    }
    if (!lu) return;
    words.emplace(a);
    second_prime.emplace(a);
  }
};

SquareSolver::SquareSolver(const fmpz_mat_struct* a, SquareSolver* transpose) : a_(a), transpose_(transpose) {}
SquareSolver::~SquareSolver() = default;

std::shared_ptr<ModularLu> SquareSolver::factors() {
  if (!lifting_) lifting_ = std::make_unique<Lifting>(a_, transpose_ ? transpose_->factors() : nullptr);
  if (lifting_->transposed_lu) return nullptr;  // a transpose's transpose: factored anew
  return lifting_->lu;
}

std::optional<RationalMatrix> SquareSolver::lift(const fmpz_mat_struct* b, std::size_t most_digits) {
  ran_out_ = false;
  digits_ = 0;
  const fmpz_mat_struct* a = a_;
  const auto n = static_cast<std::size_t>(fmpz_mat_nrows(a)), m = static_cast<std::size_t>(fmpz_mat_ncols(b));
  if (static_cast<std::size_t>(fmpz_mat_ncols(a)) != n || static_cast<std::size_t>(fmpz_mat_nrows(b)) != n)
    return std::nullopt;
  RationalMatrix solution(n, m);
  if (n == 0 || m == 0) return solution;
  if (!lifting_) lifting_ = std::make_unique<Lifting>(a, transpose_ ? transpose_->factors() : nullptr);
  if (!lifting_->lu) return std::nullopt;
  ModularLu* lu = lifting_->lu.get();
  const bool is_transposed = lifting_->transposed_lu.has_value();
  nmod_mat_struct* triangles = is_transposed ? lifting_->transposed_lu->get() : lu->lu.get();
  const std::uint64_t prime = lu->prime;
  const WordMatrix& words = *lifting_->words;
  SecondPrimeCheck& second_prime = *lifting_->second_prime;
  second_prime.set_right(b);
  // Enough digits for any solution: p^k above 2 max(N, D)^2 (N and D
  // FLINT's Hadamard bounds on the numerators and the denominator: the
  // reconstruction reads fractions up to sqrt(p^k / 2) both ways), two more
  // for the agreement of successive candidates.
  Integer limit;
  {
    fmpz_t numerator_bound, denominator_bound;
    fmpz_init(numerator_bound);
    fmpz_init(denominator_bound);
    fmpz_mat_solve_bound(numerator_bound, denominator_bound, a, b);
    if (fmpz_cmp(denominator_bound, numerator_bound) > 0) fmpz_swap(numerator_bound, denominator_bound);
    fmpz_mul(numerator_bound, numerator_bound, numerator_bound);
    fmpz_mul_2exp(numerator_bound, numerator_bound, 1);
    fmpz_get_mpz(limit.get_mpz_t(), numerator_bound);
    fmpz_clear(denominator_bound);
    fmpz_clear(numerator_bound);
  }
  const ResidualWords residual_words(static_cast<std::size_t>(std::abs(fmpz_mat_max_bits(a))),
                                     static_cast<std::size_t>(std::abs(fmpz_mat_max_bits(b))), n, prime);
  const std::size_t size = residual_words.size;
  std::vector<ColumnLift> columns(m);
  for (std::size_t c = 0; c < m; ++c) {
    columns[c].residual.resize(n * size);
    columns[c].value.assign(n, Integer(0));
    for (std::size_t i = 0; i < n; ++i)
      residual_words.set(columns[c].residual.data() + i * size,
                         fmpz_mat_entry(b, static_cast<slong>(i), static_cast<slong>(c)));
  }
  Integer power = 1;  // p^k
  // The open columns (increasing) and their right-hand sides and digits
  // modulo p: the triangular solves take only those (on 2,15,15,15,15,1
  // seed 1, three of six columns are done after 4 of 27 digits).
  std::vector<std::size_t> lifted;
  std::vector<std::uint64_t> digits;  // n x open, row-major
  std::vector<std::uint64_t> digit(n);
  std::vector<Integer> numerators;
  Integer denominator;
  std::size_t open = m, digits_so_far = 0;
  for (std::size_t extra = 0; open > 0 && extra < 2;) {
    poll_stop();
    if (digits_so_far >= most_digits) {
      ran_out_ = true;
      return std::nullopt;
    }
    if (power > limit) ++extra;
    if (lifted.size() != open) {
      lifted.clear();
      for (std::size_t c = 0; c < m; ++c)
        if (!columns[c].is_done) lifted.push_back(c);
      digits.resize(n * open);
    }
    // The next digit of every open column: A^-1 (residual mod p), through
    // the LU (rows in its order; A^T's LU: in A's order, unknowns in the LU's).
    for (std::size_t i = 0; i < n; ++i) {
      const auto row = is_transposed ? i : static_cast<std::size_t>(lu->order[i]);
      for (std::size_t o = 0; o < open; ++o)
        digits[i * open + o] = residual_words.residue(columns[lifted[o]].residual.data() + row * size);
    }
    // L y = r, then U x = y as U' x = D^-1 y.
    solve_triangles_modulo(triangles, lu->inverse_diagonal.data(), digits.data(), n, open);
    for (std::size_t o = 0; o < lifted.size(); ++o) {
      ColumnLift& column = columns[lifted[o]];
      for (std::size_t i = 0; i < n; ++i)
        digit[is_transposed ? static_cast<std::size_t>(lu->order[i]) : i] = digits[i * open + o];
      for (std::size_t i = 0; i < n; ++i) mpz_addmul_ui(column.value[i].get_mpz_t(), power.get_mpz_t(), digit[i]);
      // residual = (residual - A digit) / p, exactly.
      for (std::size_t i = 0; i < n; ++i) {
        std::uint64_t* r = column.residual.data() + i * size;
        words.subtract_row_times(i, digit.data(), r, size);
        residual_words.divide_exactly(r);
      }
    }
    power *= static_cast<unsigned long>(prime);
    digits_ = ++digits_so_far;
    // Read each open column off; done when its candidate passes modulo the
    // second prime. A column accepted makes the later ones try now with its
    // denominator, the earlier ones at the next step.
    for (std::size_t c = 0; c < m; ++c) {
      ColumnLift& column = columns[c];
      if (column.is_done || (digits_so_far < column.next_attempt && extra == 0 && digits_so_far != most_digits))
        continue;
      if (!read_off(column.value, power, column.guess, column.first, numerators, denominator)) {
        column.guess = 1;
        column.next_attempt = digits_so_far + std::max<std::size_t>(1, digits_so_far / 4);
        continue;
      }
      column.next_attempt = digits_so_far + 1;
      if (!second_prime.passes(numerators, denominator, c)) {
        column.guess = denominator;
        continue;
      }
      column.is_done = true;
      --open;
      for (std::size_t i = 0; i < n; ++i) {
        Rational& entry = solution(i, c);
        entry.get_num() = numerators[i];
        entry.get_den() = denominator;
        entry.canonicalize();
      }
      column = ColumnLift{{}, {}, 1, true};
      for (ColumnLift& other : columns)
        if (!other.is_done && other.guess == 1) {  // a read-off with the right guess: a product per entry
          other.guess = denominator;
          other.next_attempt = std::min(other.next_attempt, digits_so_far);
        }
    }
  }
  if (open > 0) return std::nullopt;
  return solution;
}

std::optional<RationalMatrix> SquareSolver::solve(const fmpz_mat_struct* b, std::size_t most_digits) {
  const auto n = static_cast<std::size_t>(fmpz_mat_nrows(a_)), m = static_cast<std::size_t>(fmpz_mat_ncols(b));
  ran_out_ = false;
  digits_ = 0;
  if (n >= padic_from_unknowns && !gave_up_lifting_) {
    if (std::optional<RationalMatrix> lifted = lift(b, most_digits)) return lifted;
    if (ran_out_) return std::nullopt;
    gave_up_lifting_ = lifting_ && !lifting_->lu;  // singular modulo three primes: no use trying again
  }
  FmpqMatrix flint_solution(n, m);
  if (!(n < padic_from_unknowns ? fmpq_mat_solve_fmpz_mat_fraction_free(flint_solution.get(), a_, b)
                                : fmpq_mat_solve_fmpz_mat_dixon(flint_solution.get(), a_, b)))
    return std::nullopt;
  RationalMatrix solution(n, m);
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j = 0; j < m; ++j) fmpq_get_mpq(solution(i, j).get_mpq_t(), flint_solution.entry(i, j));
  return solution;
}

std::optional<RationalMatrix> solve_by_padic_lifting(const fmpz_mat_struct* a, const fmpz_mat_struct* b) {
  return SquareSolver(a).lift(b);
}

std::optional<RationalMatrix> solve_square_exactly(const fmpz_mat_struct* a, const fmpz_mat_struct* b) {
  return SquareSolver(a).solve(b);
}

}  // namespace pleat::detail
