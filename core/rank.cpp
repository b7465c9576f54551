#include "core/rank.hpp"
#include "core/stop.hpp"
#include "core/thread_caches.hpp"
#include "core/detail/flint_matrix.hpp"

#include <gmp.h>
// FLINT after GMP so that its mpz conversion functions are declared.
#include <flint/flint.h>
#include <flint/fmpq.h>
#include <flint/fmpq_mat.h>
#include <flint/fmpz.h>
#include <flint/fmpz_mat.h>
#include <flint/nmod.h>
#include <flint/nmod_mat.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <memory>
#include <string>
#include <utility>
#include <vector>

namespace pleat {
using namespace detail;
namespace {

// M with every row scaled by a positive rational to a primitive integer
// vector (same row space, same rank).
void fill_primitive_integer_rows(const RationalMatrix& matrix, FmpzMatrix& out) {
  Integer scale;
  Integer content;
  Integer value;
  for (std::size_t r = 0; r < matrix.rows(); ++r) {
    scale = 1;
    for (std::size_t c = 0; c < matrix.cols(); ++c)
      mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), matrix(r, c).get_den_mpz_t());
    content = 0;
    for (std::size_t c = 0; c < matrix.cols(); ++c) {
      value = matrix(r, c).get_num() * (scale / matrix(r, c).get_den());
      mpz_gcd(content.get_mpz_t(), content.get_mpz_t(), value.get_mpz_t());
    }
    if (content == 0) continue;  // zero row: out is initialised to zero
    for (std::size_t c = 0; c < matrix.cols(); ++c) {
      value = matrix(r, c).get_num() * (scale / matrix(r, c).get_den()) / content;
      fmpz_set_mpz(out.entry(r, c), value.get_mpz_t());
    }
  }
}

void fill_rational(const RationalMatrix& matrix, FmpqMatrix& out) {
  for (std::size_t r = 0; r < matrix.rows(); ++r)
    for (std::size_t c = 0; c < matrix.cols(); ++c)
      fmpq_set_mpq(out.entry(r, c), matrix(r, c).get_mpq_t());
}

Rational to_rational(const fmpq* value) {
  Rational out;
  fmpq_get_mpq(out.get_mpq_t(), value);
  return out;
}

// The reduced row-echelon form of M and its pivot columns (exact, FLINT's
// fraction-free rref over Q).
struct EchelonForm {
  RationalMatrix reduced;  // rank x cols
  std::vector<std::size_t> pivot_columns;
};

EchelonForm reduced_echelon_form(const RationalMatrix& matrix) {
  EchelonForm result;
  if (matrix.rows() == 0 || matrix.cols() == 0) {
    result.reduced = RationalMatrix(0, matrix.cols());
    return result;
  }
  FmpqMatrix input(matrix.rows(), matrix.cols());
  fill_rational(matrix, input);
  FmpqMatrix reduced(matrix.rows(), matrix.cols());
  const auto rank = static_cast<std::size_t>(fmpq_mat_rref(reduced.get(), input.get()));
  result.reduced = RationalMatrix(rank, matrix.cols());
  for (std::size_t r = 0; r < rank; ++r) {
    bool has_pivot = false;
    for (std::size_t c = 0; c < matrix.cols(); ++c) {
      const fmpq* entry = reduced.entry(r, c);
      if (fmpq_is_zero(entry)) continue;
      if (!has_pivot) {
        result.pivot_columns.push_back(c);
        has_pivot = true;
      }
      result.reduced(r, c) = to_rational(entry);
    }
  }
  return result;
}

}  // namespace

// ---- Exact rank and kernel --------------------------------------------------

std::size_t rank_exact(const RationalMatrix& matrix) {
  if (matrix.rows() == 0 || matrix.cols() == 0) return 0;
  FmpzMatrix integer_rows(matrix.rows(), matrix.cols());
  fill_primitive_integer_rows(matrix, integer_rows);
  // A rank mod p is a lower bound; when it is already the largest possible
  // it is the rank.
  NmodMatrix reduced(matrix.rows(), matrix.cols(), primary_prime());
  fmpz_mat_get_nmod_mat(reduced.get(), integer_rows.get());
  const auto lower_bound = static_cast<std::size_t>(nmod_mat_rank(reduced.get()));
  if (lower_bound == std::min(matrix.rows(), matrix.cols())) return lower_bound;
  // Small matrices: FLINT's exact integer rank. Large ones: the proven kernel
  // (kernel_basis_exact), much faster when the entries are large.
  if (matrix.cols() <= 48) return static_cast<std::size_t>(fmpz_mat_rank(integer_rows.get()));
  return matrix.cols() - kernel_basis_exact(matrix).rows();
}

std::size_t rank_by_gauss_naive(const RationalMatrix& matrix) {
  RationalMatrix work = matrix;
  std::size_t rank = 0;
  for (std::size_t c = 0; c < work.cols() && rank < work.rows(); ++c) {
    std::size_t pivot = rank;
    while (pivot < work.rows() && work(pivot, c) == 0) ++pivot;
    if (pivot == work.rows()) continue;
    for (std::size_t k = 0; k < work.cols(); ++k) std::swap(work(rank, k), work(pivot, k));
    for (std::size_t r = rank + 1; r < work.rows(); ++r) {
      if (work(r, c) == 0) continue;
      const Rational factor = work(r, c) / work(rank, c);
      for (std::size_t k = c; k < work.cols(); ++k) work(r, k) -= factor * work(rank, k);
    }
    ++rank;
  }
  return rank;
}

RationalMatrix row_space_basis_exact(const RationalMatrix& matrix) {
  return reduced_echelon_form(matrix).reduced;
}

namespace {

// The canonical kernel of the integer matrix A modulo p: the RREF of the
// kernel basis read off A's RREF mod p. Returns A's rank mod p; kernel gets
// (cols - rank) rows and pivots the kernel RREF's leading columns.
std::size_t kernel_modulo(FmpzMatrix& integer_rows, std::size_t rows, std::size_t cols, std::uint64_t prime,
                          std::unique_ptr<NmodMatrix>& kernel, std::vector<std::size_t>& pivots) {
  NmodMatrix reduced(rows, cols, prime);
  fmpz_mat_get_nmod_mat(reduced.get(), integer_rows.get());
  const auto rank = static_cast<std::size_t>(nmod_mat_rref(reduced.get()));
  std::vector<std::size_t> row_pivots;
  std::vector<bool> is_pivot(cols, false);
  for (std::size_t i = 0; i < rank; ++i) {
    std::size_t c = 0;
    while (nmod_mat_entry(reduced.get(), static_cast<slong>(i), static_cast<slong>(c)) == 0) ++c;
    row_pivots.push_back(c);
    is_pivot[c] = true;
  }
  kernel = std::make_unique<NmodMatrix>(cols - rank, cols, prime);
  std::size_t row = 0;
  for (std::size_t free = 0; free < cols; ++free) {
    if (is_pivot[free]) continue;
    const auto r = static_cast<slong>(row++);
    nmod_mat_entry(kernel->get(), r, static_cast<slong>(free)) = 1;
    for (std::size_t i = 0; i < rank; ++i) {
      const std::uint64_t value = nmod_mat_entry(reduced.get(), static_cast<slong>(i), static_cast<slong>(free));
      nmod_mat_entry(kernel->get(), r, static_cast<slong>(row_pivots[i])) = value == 0 ? 0 : prime - value;
    }
  }
  nmod_mat_rref(kernel->get());
  pivots.clear();
  for (std::size_t i = 0; i < cols - rank; ++i) {
    std::size_t c = 0;
    while (nmod_mat_entry(kernel->get(), static_cast<slong>(i), static_cast<slong>(c)) == 0) ++c;
    pivots.push_back(c);
  }
  return rank;
}

// True when every row of the candidate annihilates every row of A, exactly.
bool annihilates(FmpzMatrix& integer_rows, std::size_t rows, const RationalMatrix& candidate) {
  fmpz_t sum;
  fmpz_init(sum);
  fmpz_t value;
  fmpz_init(value);
  bool is_kernel = true;
  for (std::size_t k = 0; k < candidate.rows() && is_kernel; ++k) {
    // The row times the lcm of its denominators: an integer vector, sparse.
    Integer scale = 1;
    for (std::size_t c = 0; c < candidate.cols(); ++c)
      mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), candidate(k, c).get_den_mpz_t());
    std::vector<std::pair<std::size_t, Integer>> entries;
    for (std::size_t c = 0; c < candidate.cols(); ++c)
      if (sgn(candidate(k, c)) != 0)
        entries.emplace_back(c, candidate(k, c).get_num() * (scale / candidate(k, c).get_den()));
    for (std::size_t r = 0; r < rows && is_kernel; ++r) {
      fmpz_zero(sum);
      for (const auto& [c, entry] : entries) {
        fmpz_set_mpz(value, entry.get_mpz_t());
        fmpz_addmul(sum, integer_rows.entry(r, c), value);
      }
      is_kernel = fmpz_is_zero(sum);
    }
  }
  fmpz_clear(value);
  fmpz_clear(sum);
  return is_kernel;
}

// Whether the matrix is in reduced row-echelon form with leading entries 1.
bool is_reduced_echelon(const RationalMatrix& m) {
  std::size_t previous = 0;
  for (std::size_t r = 0; r < m.rows(); ++r) {
    std::size_t lead = 0;
    while (lead < m.cols() && sgn(m(r, lead)) == 0) ++lead;
    if (lead == m.cols() || (r > 0 && lead <= previous) || m(r, lead) != 1) return false;
    for (std::size_t other = 0; other < m.rows(); ++other)
      if (other != r && sgn(m(other, lead)) != 0) return false;
    previous = lead;
  }
  return true;
}

// The canonical kernel by one prime and one exact solve. Modulo p: the
// kernel's RREF gives its leading columns Q (k of them) and the rank r; the
// other columns N (r of them) and r rows S independent mod p give a square
// block A[S, N], nonsingular mod p and hence over Q. The kernel vector with
// 1 at Q_j and 0 at the other columns of Q has v_N = -A[S, N]^-1 A[S, Q_j]:
// FLINT's fmpq_mat_solve_fmpz_mat (Dixon p-adic lifting for large systems).
// Proof that the k vectors found span the kernel: each is checked to
// annihilate every row of A exactly; they are independent (identity on Q);
// and rank_Q(A) >= rank_p(A) = r (a rank mod p is a lower bound), so the
// kernel has dimension <= cols - r = k. Their RREF is then the canonical
// basis (they are in RREF already unless p was unlucky). Returns nullopt when
// the check fails (an unlucky prime; the caller eliminates exactly).
std::optional<RationalMatrix> kernel_basis_by_solving(FmpzMatrix& integer_rows, std::size_t rows,
                                                      std::size_t cols) {
  const std::uint64_t prime = primary_prime();
  std::unique_ptr<NmodMatrix> kernel_mod;
  std::vector<std::size_t> leading;
  const std::size_t rank = kernel_modulo(integer_rows, rows, cols, prime, kernel_mod, leading);
  const std::size_t nullity = cols - rank;
  if (nullity == 0) return RationalMatrix(0, cols);  // full column rank mod p, hence over Q
  std::vector<bool> is_leading(cols, false);
  for (std::size_t c : leading) is_leading[c] = true;
  std::vector<std::size_t> others;
  for (std::size_t c = 0; c < cols; ++c)
    if (!is_leading[c]) others.push_back(c);
  // r rows independent on the columns N: the pivot columns of A[:, N]^T mod p.
  std::vector<std::size_t> chosen_rows;
  if (rank > 0) {
    NmodMatrix transposed(rank, rows, prime);
    for (std::size_t i = 0; i < rank; ++i)
      for (std::size_t r = 0; r < rows; ++r)
        nmod_mat_entry(transposed.get(), static_cast<slong>(i), static_cast<slong>(r)) =
            fmpz_fdiv_ui(integer_rows.entry(r, others[i]), prime);
    if (static_cast<std::size_t>(nmod_mat_rref(transposed.get())) != rank) return std::nullopt;
    std::size_t r = 0;
    for (std::size_t i = 0; i < rank; ++i) {
      while (nmod_mat_entry(transposed.get(), static_cast<slong>(i), static_cast<slong>(r)) == 0) ++r;
      chosen_rows.push_back(r);
    }
  }
  RationalMatrix candidate(nullity, cols);
  for (std::size_t j = 0; j < nullity; ++j) candidate(j, leading[j]) = 1;
  // Kernel vectors whose right-hand side A[S, Q_j] is zero have v_N = 0
  // (typically the columns of parameters that never matter on the rows
  // given); solve only for the others.
  std::vector<std::size_t> solved;
  for (std::size_t j = 0; j < nullity; ++j)
    for (std::size_t i = 0; i < rank; ++i)
      if (!fmpz_is_zero(integer_rows.entry(chosen_rows[i], leading[j]))) {
        solved.push_back(j);
        break;
      }
  if (!solved.empty()) {
    FmpzMatrix square(rank, rank);
    FmpzMatrix right(rank, solved.size());
    for (std::size_t i = 0; i < rank; ++i) {
      for (std::size_t m = 0; m < rank; ++m)
        fmpz_set(square.entry(i, m), integer_rows.entry(chosen_rows[i], others[m]));
      for (std::size_t s = 0; s < solved.size(); ++s)
        fmpz_neg(right.entry(i, s), integer_rows.entry(chosen_rows[i], leading[solved[s]]));
    }
    FmpqMatrix solution(rank, solved.size());
    if (!fmpq_mat_solve_fmpz_mat(solution.get(), square.get(), right.get())) return std::nullopt;
    for (std::size_t m = 0; m < rank; ++m)
      for (std::size_t s = 0; s < solved.size(); ++s)
        candidate(solved[s], others[m]) = to_rational(solution.entry(m, s));
  }
  if (!annihilates(integer_rows, rows, candidate)) return std::nullopt;
  if (is_reduced_echelon(candidate)) return candidate;
  return row_space_basis_exact(candidate);
}

}  // namespace

RationalMatrix kernel_basis_by_rational_elimination(const RationalMatrix& matrix) {
  const std::size_t cols = matrix.cols();
  const EchelonForm echelon = reduced_echelon_form(matrix);
  // One kernel vector per free column f: v_f = 1, v_pivot(i) = -R(i, f).
  std::vector<bool> is_pivot(cols, false);
  for (std::size_t c : echelon.pivot_columns) is_pivot[c] = true;
  RationalMatrix kernel(cols - echelon.pivot_columns.size(), cols);
  std::size_t row = 0;
  for (std::size_t free = 0; free < cols; ++free) {
    if (is_pivot[free]) continue;
    kernel(row, free) = 1;
    for (std::size_t i = 0; i < echelon.pivot_columns.size(); ++i)
      kernel(row, echelon.pivot_columns[i]) = -echelon.reduced(i, free);
    ++row;
  }
  // That basis depends on nothing but M's row space, but its own echelon form
  // is the documented canonical one.
  return row_space_basis_exact(kernel);
}

RationalMatrix kernel_basis_exact(const RationalMatrix& matrix) {
  const std::size_t cols = matrix.cols();
  if (matrix.rows() == 0 || cols == 0) {
    RationalMatrix identity(cols, cols);
    for (std::size_t c = 0; c < cols; ++c) identity(c, c) = 1;
    return identity;
  }
  FmpzMatrix integer_rows(matrix.rows(), cols);
  fill_primitive_integer_rows(matrix, integer_rows);
  if (auto kernel = kernel_basis_by_solving(integer_rows, matrix.rows(), cols)) return std::move(*kernel);
  return kernel_basis_by_rational_elimination(matrix);
}

// ---- Primes and reduction modulo p ------------------------------------------

// n_nextprime((1 << 62) - (1 << 32)) and n_nextprime((1 << 61) - (1 << 32)),
// written out (tests/core/rank_test.cpp checks both): finding the first
// cost every certify run about 15 us before its walk, most of it the first
// touch of FLINT's primality code.
std::uint64_t primary_prime() { return 4611686014132420667u; }

std::uint64_t screening_prime() { return 2305843004918726671u; }

std::uint64_t next_prime_after(std::uint64_t after) {
  if (after >= largest_supported_prime_bound - 1000)
    throw usage_error("next_prime_after: argument too large for a word-size prime");
  return n_nextprime(after, 1);
}

std::optional<std::uint64_t> reduce_modulo(const Rational& value, std::uint64_t prime) {
  if (prime < 2) throw usage_error("reduce_modulo: prime must be at least 2");
  const std::uint64_t denominator = mpz_fdiv_ui(value.get_den_mpz_t(), prime);
  if (denominator == 0) return std::nullopt;
  const std::uint64_t numerator = mpz_fdiv_ui(value.get_num_mpz_t(), prime);  // in [0, p)
  if (denominator == 1) return numerator;
  return n_mulmod2_preinv(numerator, n_invmod(denominator, prime), prime, n_preinvert_limb(prime));
}

namespace {

// values[0..count) mod p into out, false when p divides a denominator: the
// same residues as reduce_modulo of each value, with one inversion in all
// (the denominators' prefix products inverted once, then unwound: three
// products per value instead of an extended gcd each; on 2,5,5,5,5,1 the
// network's reduction was 20 us of certify, most of it the inversions).
bool reduce_values_modulo(const Rational* values, std::size_t count, std::uint64_t prime, std::uint64_t* out) {
  if (prime < 2) throw usage_error("reduce_modulo: prime must be at least 2");
  nmod_t mod;
  nmod_init(&mod, prime);
  std::vector<std::uint64_t> prefix(count);  // product of the denominators' residues up to each value
  std::uint64_t product = 1;
  for (std::size_t i = 0; i < count; ++i) {
    const std::uint64_t denominator = mpz_fdiv_ui(values[i].get_den_mpz_t(), prime);
    if (denominator == 0) return false;
    out[i] = denominator;  // for now
    product = nmod_mul(product, denominator, mod);
    prefix[i] = product;
  }
  std::uint64_t inverse = n_invmod(product, prime);  // of the product up to i, from the last i down
  for (std::size_t i = count; i-- > 0;) {
    const std::uint64_t denominator = out[i];
    const std::uint64_t of_this = i > 0 ? nmod_mul(inverse, prefix[i - 1], mod) : inverse;  // 1 / denominator_i
    inverse = nmod_mul(inverse, denominator, mod);
    const std::uint64_t numerator = mpz_fdiv_ui(values[i].get_num_mpz_t(), prime);  // in [0, p)
    out[i] = denominator == 1 ? numerator : nmod_mul(numerator, of_this, mod);
  }
  return true;
}

}  // namespace

std::optional<ModularMatrix> reduce_modulo(const RationalMatrix& matrix, std::uint64_t prime) {
  ModularMatrix out(matrix.rows(), matrix.cols());
  const std::size_t count = matrix.rows() * matrix.cols();  // row-major, contiguous
  if (count > 0 && !reduce_values_modulo(&matrix(0, 0), count, prime, &out(0, 0))) return std::nullopt;
  return out;
}

std::optional<ModularVector> reduce_modulo(const RationalVector& values, std::uint64_t prime) {
  ModularVector out(values.size());
  if (!values.empty() && !reduce_values_modulo(values.data(), values.size(), prime, out.data())) return std::nullopt;
  return out;
}

std::size_t rank_modulo(const ModularMatrix& matrix, std::uint64_t prime) {
  check_prime_range(prime, "rank_modulo");
  if (matrix.rows() == 0 || matrix.cols() == 0) return 0;
  NmodMatrix work(matrix.rows(), matrix.cols(), prime);
  for (std::size_t r = 0; r < matrix.rows(); ++r)
    for (std::size_t c = 0; c < matrix.cols(); ++c) {
      if (matrix(r, c) >= prime) throw usage_error("rank_modulo: entry is not a residue");
      nmod_mat_entry(work.get(), static_cast<slong>(r), static_cast<slong>(c)) = matrix(r, c);
    }
  return static_cast<std::size_t>(nmod_mat_rank(work.get()));
}

}  // namespace pleat
