#include "core/rank.hpp"
#include "core/stop.hpp"
#include "core/thread_caches.hpp"

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
#include <mutex>
#include <string>
#include <utility>

namespace pleat {
namespace {

constexpr std::uint64_t largest_supported_prime_bound = std::uint64_t{1} << 63;

// RAII owners of FLINT matrices.
class FmpzMatrix {
 public:
  FmpzMatrix(std::size_t rows, std::size_t cols) {
    free_number_caches_at_thread_exit();  // fmpz entries come from a per-thread pool
    fmpz_mat_init(value_, static_cast<slong>(rows), static_cast<slong>(cols));
  }
  ~FmpzMatrix() { fmpz_mat_clear(value_); }
  FmpzMatrix(const FmpzMatrix&) = delete;
  FmpzMatrix& operator=(const FmpzMatrix&) = delete;
  fmpz_mat_struct* get() { return value_; }
  fmpz* entry(std::size_t r, std::size_t c) {
    return fmpz_mat_entry(value_, static_cast<slong>(r), static_cast<slong>(c));
  }

 private:
  fmpz_mat_t value_;
};

class FmpqMatrix {
 public:
  FmpqMatrix(std::size_t rows, std::size_t cols) {
    free_number_caches_at_thread_exit();
    fmpq_mat_init(value_, static_cast<slong>(rows), static_cast<slong>(cols));
  }
  ~FmpqMatrix() { fmpq_mat_clear(value_); }
  FmpqMatrix(const FmpqMatrix&) = delete;
  FmpqMatrix& operator=(const FmpqMatrix&) = delete;
  fmpq_mat_struct* get() { return value_; }
  fmpq* entry(std::size_t r, std::size_t c) {
    return fmpq_mat_entry(value_, static_cast<slong>(r), static_cast<slong>(c));
  }

 private:
  fmpq_mat_t value_;
};

class NmodMatrix {
 public:
  NmodMatrix(std::size_t rows, std::size_t cols, std::uint64_t prime) {
    nmod_mat_init(value_, static_cast<slong>(rows), static_cast<slong>(cols), prime);
  }
  ~NmodMatrix() { nmod_mat_clear(value_); }
  NmodMatrix(const NmodMatrix&) = delete;
  NmodMatrix& operator=(const NmodMatrix&) = delete;
  nmod_mat_struct* get() { return value_; }

 private:
  nmod_mat_t value_;
};

void check_prime_range(std::uint64_t prime, const char* where) {
  if (prime < 2 || prime >= largest_supported_prime_bound)
    throw usage_error(std::string(where) + ": prime must lie in [2, 2^63)");
}

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

std::uint64_t primary_prime() {
  static const std::uint64_t prime = n_nextprime((std::uint64_t{1} << 62) - (std::uint64_t{1} << 32), 1);
  return prime;
}

std::uint64_t screening_prime() {
  static const std::uint64_t prime = n_nextprime((std::uint64_t{1} << 61) - (std::uint64_t{1} << 32), 1);
  return prime;
}

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

std::optional<ModularMatrix> reduce_modulo(const RationalMatrix& matrix, std::uint64_t prime) {
  ModularMatrix out(matrix.rows(), matrix.cols());
  for (std::size_t r = 0; r < matrix.rows(); ++r)
    for (std::size_t c = 0; c < matrix.cols(); ++c) {
      const auto residue = reduce_modulo(matrix(r, c), prime);
      if (!residue) return std::nullopt;
      out(r, c) = *residue;
    }
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

// ---- Kernels modulo p and rational reconstruction ---------------------------

namespace {

NmodMatrix& fill_nmod(NmodMatrix& out, const ModularMatrix& matrix, std::uint64_t prime, const char* where) {
  for (std::size_t r = 0; r < matrix.rows(); ++r)
    for (std::size_t c = 0; c < matrix.cols(); ++c) {
      if (matrix(r, c) >= prime) throw usage_error(std::string(where) + ": entry is not a residue");
      nmod_mat_entry(out.get(), static_cast<slong>(r), static_cast<slong>(c)) = matrix(r, c);
    }
  return out;
}

// Rows eliminated together, and columns per FLINT multiplication: small
// enough that each FLINT call ends within a fraction of a second (the stop
// request is polled between calls), large enough for FLINT's fast products.
constexpr slong block_rows = 512;
constexpr slong panel_columns = 512;

using WindowGuard = std::unique_ptr<nmod_mat_struct, void (*)(nmod_mat_struct*)>;

// target -= left * right, one panel of columns at a time, polling the stop
// request before each panel (a FLINT call cannot be interrupted).
void subtract_product_in_panels(nmod_mat_struct* target, const nmod_mat_struct* left, const nmod_mat_struct* right) {
  const slong rows = nmod_mat_nrows(target), cols = nmod_mat_ncols(right);
  if (rows == 0 || nmod_mat_ncols(left) == 0) return;
  for (slong c = 0; c < cols; c += panel_columns) {
    poll_stop();
    const slong end = std::min(cols, c + panel_columns);
    nmod_mat_t target_panel, right_panel;
    nmod_mat_window_init(target_panel, target, 0, c, rows, end);
    nmod_mat_window_init(right_panel, right, 0, c, nmod_mat_nrows(right), end);
    nmod_mat_submul(target_panel, target_panel, left, right_panel);
    nmod_mat_window_clear(target_panel);
    nmod_mat_window_clear(right_panel);
  }
}

// The reduced row-echelon form of a matrix mod p: its nonzero rows, sorted
// by pivot column, and those pivots.
struct ReducedEchelon {
  std::unique_ptr<NmodMatrix> rows;  // rank x cols
  std::vector<std::size_t> pivots;
  std::size_t rank() const { return pivots.size(); }
};

// nmod_mat_rref's nonzero rows, computed by blocks of rows so that a stop
// request acts between FLINT calls (Stopped is thrown; every temporary is
// owned, nothing leaks). The basis so far is kept as the ModularRowBasis
// keeps it: row i is 1 at pivots[i], 0 at the other pivots, so only its
// entries at the free columns are stored. Each block is reduced by it on the
// free columns only (it becomes zero at the pivots), brought to echelon form,
// and its new rows clear their pivot columns from the basis; the products
// shrink as the rank grows. Why this is the RREF: a new pivot is the leftmost
// nonzero column of a row-space vector that is zero left of it, so the
// pivots are the row space's greedy (leftmost) columns, and a basis that is
// the identity at those columns is unique; sorted by pivot, it is the
// reduced row-echelon form.
ReducedEchelon reduced_echelon_by_blocks(NmodMatrix& matrix, std::uint64_t prime) {
  const nmod_mat_struct* source = matrix.get();
  const slong rows = nmod_mat_nrows(source), cols = nmod_mat_ncols(source);
  std::vector<slong> pivots, free_columns(static_cast<std::size_t>(cols));
  for (slong c = 0; c < cols; ++c) free_columns[static_cast<std::size_t>(c)] = c;
  auto basis_free = std::make_unique<NmodMatrix>(0, static_cast<std::size_t>(cols), prime);  // rank x free
  for (slong start = 0; start < rows && !free_columns.empty(); start += block_rows) {
    poll_stop();
    const slong height = std::min(rows, start + block_rows) - start;
    const auto rank = static_cast<slong>(pivots.size());
    const auto free_count = static_cast<slong>(free_columns.size());
    NmodMatrix block(static_cast<std::size_t>(height), static_cast<std::size_t>(free_count), prime);
    for (slong r = 0; r < height; ++r)
      for (slong q = 0; q < free_count; ++q)
        nmod_mat_entry(block.get(), r, q) = nmod_mat_entry(source, start + r, free_columns[static_cast<std::size_t>(q)]);
    if (rank > 0) {  // block -= (block at the pivots) x basis: zero at the pivots
      NmodMatrix at_pivots(static_cast<std::size_t>(height), static_cast<std::size_t>(rank), prime);
      for (slong r = 0; r < height; ++r)
        for (slong i = 0; i < rank; ++i)
          nmod_mat_entry(at_pivots.get(), r, i) = nmod_mat_entry(source, start + r, pivots[static_cast<std::size_t>(i)]);
      subtract_product_in_panels(block.get(), at_pivots.get(), basis_free->get());
    }
    poll_stop();
    const slong added = nmod_mat_rref(block.get());  // block_rows x free columns: quick
    if (added == 0) continue;
    std::vector<slong> new_pivots;  // positions among the free columns, increasing
    for (slong r = 0; r < added; ++r) {
      slong q = 0;
      while (nmod_mat_entry(block.get(), r, q) == 0) ++q;
      new_pivots.push_back(q);
    }
    nmod_mat_t fresh;
    nmod_mat_window_init(fresh, block.get(), 0, 0, added, free_count);
    const WindowGuard fresh_guard(fresh, nmod_mat_window_clear);
    if (rank > 0) {  // basis -= (basis at the new pivots) x fresh rows
      NmodMatrix at_new_pivots(static_cast<std::size_t>(rank), static_cast<std::size_t>(added), prime);
      for (slong i = 0; i < rank; ++i)
        for (slong j = 0; j < added; ++j)
          nmod_mat_entry(at_new_pivots.get(), i, j) =
              nmod_mat_entry(basis_free->get(), i, new_pivots[static_cast<std::size_t>(j)]);
      subtract_product_in_panels(basis_free->get(), at_new_pivots.get(), fresh);
    }
    // The new basis: old rows then fresh rows, without the new pivot columns.
    std::vector<bool> is_new_pivot(static_cast<std::size_t>(free_count), false);
    for (slong q : new_pivots) is_new_pivot[static_cast<std::size_t>(q)] = true;
    std::vector<slong> kept_positions, remaining;
    for (slong q = 0; q < free_count; ++q)
      if (!is_new_pivot[static_cast<std::size_t>(q)]) {
        kept_positions.push_back(q);
        remaining.push_back(free_columns[static_cast<std::size_t>(q)]);
      }
    auto next = std::make_unique<NmodMatrix>(static_cast<std::size_t>(rank + added), remaining.size(), prime);
    for (slong i = 0; i < rank + added; ++i) {
      const mp_limb_t* from = i < rank ? nmod_mat_entry_ptr(basis_free->get(), i, 0)
                                       : nmod_mat_entry_ptr(block.get(), i - rank, 0);
      mp_limb_t* to = remaining.empty() ? nullptr : nmod_mat_entry_ptr(next->get(), i, 0);
      for (std::size_t k = 0; k < kept_positions.size(); ++k) to[k] = from[kept_positions[k]];
    }
    for (slong q : new_pivots) pivots.push_back(free_columns[static_cast<std::size_t>(q)]);
    free_columns = std::move(remaining);
    basis_free = std::move(next);
  }
  std::vector<std::size_t> order(pivots.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return pivots[a] < pivots[b]; });
  ReducedEchelon out{std::make_unique<NmodMatrix>(order.size(), static_cast<std::size_t>(cols), prime), {}};
  for (std::size_t i = 0; i < order.size(); ++i) {
    const auto from = static_cast<slong>(order[i]), to = static_cast<slong>(i);
    nmod_mat_entry(out.rows->get(), to, pivots[order[i]]) = 1;
    for (std::size_t q = 0; q < free_columns.size(); ++q)
      nmod_mat_entry(out.rows->get(), to, free_columns[q]) = nmod_mat_entry(basis_free->get(), from, static_cast<slong>(q));
    out.pivots.push_back(static_cast<std::size_t>(pivots[order[i]]));
  }
  return out;
}

// The rows of a reduced echelon form as a ModularMatrix.
ModularMatrix leading_rows(const ReducedEchelon& reduced, std::size_t cols) {
  ModularMatrix out(reduced.rank(), cols);
  for (std::size_t r = 0; r < reduced.rank(); ++r)
    for (std::size_t c = 0; c < cols; ++c)
      out(r, c) = nmod_mat_entry(reduced.rows->get(), static_cast<slong>(r), static_cast<slong>(c));
  return out;
}

}  // namespace

ModularMatrix row_space_basis_modulo(const ModularMatrix& matrix, std::uint64_t prime) {
  check_prime_range(prime, "row_space_basis_modulo");
  if (matrix.rows() == 0 || matrix.cols() == 0) return ModularMatrix(0, matrix.cols());
  NmodMatrix work(matrix.rows(), matrix.cols(), prime);
  fill_nmod(work, matrix, prime, "row_space_basis_modulo");
  return leading_rows(reduced_echelon_by_blocks(work, prime), matrix.cols());
}

ModularMatrix kernel_basis_modulo(const ModularMatrix& matrix, std::uint64_t prime) {
  check_prime_range(prime, "kernel_basis_modulo");
  const std::size_t cols = matrix.cols();
  // Eliminate with the columns in reverse order. Each kernel vector read off
  // that echelon form (1 at a free column f, minus column f at the pivots,
  // which all lie right of f in the original order, since a reduced row is
  // zero before its pivot) has its leading 1 at f and 0 at every other free
  // column: the set is already the canonical (reduced row-echelon) basis,
  // with no second elimination.
  std::optional<ReducedEchelon> reduced;
  if (matrix.rows() > 0 && cols > 0) {
    NmodMatrix reversed(matrix.rows(), cols, prime);
    for (std::size_t r = 0; r < matrix.rows(); ++r)
      for (std::size_t c = 0; c < cols; ++c) {
        if (matrix(r, c) >= prime) throw usage_error("kernel_basis_modulo: entry is not a residue");
        nmod_mat_entry(reversed.get(), static_cast<slong>(r), static_cast<slong>(cols - 1 - c)) = matrix(r, c);
      }
    reduced = reduced_echelon_by_blocks(reversed, prime);
  }
  const std::size_t rank = reduced ? reduced->rank() : 0;
  static const std::vector<std::size_t> none;
  const std::vector<std::size_t>& pivots = reduced ? reduced->pivots : none;  // reversed indices
  std::vector<bool> is_pivot(cols, false);
  for (std::size_t c : pivots) is_pivot[c] = true;
  ModularMatrix kernel(cols - rank, cols);
  std::size_t row = 0;
  for (std::size_t f = 0; f < cols; ++f) {  // original order: leading columns increase
    poll_stop();  // thousands of dense rows when the kernel is large
    const std::size_t reversed = cols - 1 - f;
    if (is_pivot[reversed]) continue;
    kernel(row, f) = 1;
    for (std::size_t i = 0; i < rank; ++i) {
      const std::uint64_t value =
          nmod_mat_entry(reduced->rows->get(), static_cast<slong>(i), static_cast<slong>(reversed));
      if (value != 0) kernel(row, cols - 1 - pivots[i]) = prime - value;
    }
    ++row;
  }
  return kernel;
}

namespace {

// The current thread's stop request when one is installed and asks to stop
// (FLINT temporaries are cleared before Stopped is thrown).
const StopRequest* requested_stop() {
  const StopRequest* request = current_stop_request();
  return request != nullptr && request->is_requested() ? request : nullptr;
}

}  // namespace

struct RationalReconstruction::State {
  std::vector<fmpz> residues;  // row-major, each the CRT value in [0, modulus)
  fmpz_t modulus;
};

RationalReconstruction::RationalReconstruction(std::size_t rows, std::size_t cols)
    : rows_(rows), cols_(cols), state_(new State) {
  state_->residues.resize(rows * cols);
  for (fmpz& value : state_->residues) fmpz_init(&value);
  fmpz_init_set_ui(state_->modulus, 1);
}

RationalReconstruction::~RationalReconstruction() {
  for (fmpz& value : state_->residues) fmpz_clear(&value);
  fmpz_clear(state_->modulus);
  delete state_;
}

void RationalReconstruction::add_image(const ModularMatrix& image, std::uint64_t prime) {
  check_prime_range(prime, "RationalReconstruction::add_image");
  if (image.rows() != rows_ || image.cols() != cols_)
    throw usage_error("RationalReconstruction::add_image: the image's shape differs");
  if (primes_ == 0) {
    for (std::size_t r = 0; r < rows_; ++r)
      for (std::size_t c = 0; c < cols_; ++c) fmpz_set_ui(&state_->residues[r * cols_ + c], image(r, c));
  } else {
    fmpz_t combined;
    fmpz_init(combined);
    for (std::size_t r = 0; r < rows_; ++r) {
      if (const StopRequest* stop = requested_stop()) {
        fmpz_clear(combined);
        throw Stopped(stop->reason());
      }
      for (std::size_t c = 0; c < cols_; ++c) {
        fmpz* value = &state_->residues[r * cols_ + c];
        // Zero modulo everything so far and modulo this prime: stays zero.
        if (fmpz_is_zero(value) && image(r, c) == 0) continue;
        fmpz_CRT_ui(combined, value, state_->modulus, image(r, c), prime, 0);
        fmpz_swap(value, combined);
      }
    }
    fmpz_clear(combined);
  }
  fmpz_mul_ui(state_->modulus, state_->modulus, prime);
  ++primes_;
}

std::optional<RationalMatrix> RationalReconstruction::reconstruct() const {
  if (primes_ == 0) return std::nullopt;
  // Built row by row, polling the stop request between rows: millions of
  // entries when the kernel is large.
  RationalMatrix out(0, cols_);
  out.reserve_rows(rows_);
  fmpq_t value;
  fmpq_init(value);
  bool ok = true;
  for (std::size_t r = 0; r < rows_ && ok; ++r) {
    if (const StopRequest* stop = requested_stop()) {
      fmpq_clear(value);
      throw Stopped(stop->reason());
    }
    std::vector<Rational> row(cols_);
    for (std::size_t c = 0; c < cols_ && ok; ++c) {
      const fmpz* residue = &state_->residues[r * cols_ + c];
      if (fmpz_is_zero(residue)) continue;
      ok = fmpq_reconstruct_fmpz(value, residue, state_->modulus) != 0;
      if (ok) fmpq_get_mpq(row[c].get_mpq_t(), value);
    }
    out.append_row(std::move(row));
  }
  fmpq_clear(value);
  if (!ok) return std::nullopt;
  return out;
}

std::uint64_t prime_sequence(std::size_t index) {
  static std::mutex mutex;
  static std::vector<std::uint64_t> primes;
  const std::lock_guard lock(mutex);
  while (primes.size() <= index) primes.push_back(n_nextprime(primes.empty() ? primary_prime() : primes.back(), 1));
  return primes[index];
}

// ---- Incremental modular row basis ------------------------------------------

namespace {

__extension__ typedef unsigned __int128 Wide;  // GCC/Clang: exact 64 x 64 -> 128 products

// factor * value mod p by Shoup's method, given precomputed =
// floor(factor * 2^64 / p); valid for p < 2^63. Branch-free: the operands are
// random residues, so a branch would be mispredicted half the time.
inline std::uint64_t multiply_shoup(std::uint64_t factor, std::uint64_t value, std::uint64_t precomputed,
                                    std::uint64_t prime) {
  const auto quotient = static_cast<std::uint64_t>((static_cast<Wide>(precomputed) * value) >> 64);
  const std::uint64_t result = factor * value - quotient * prime;  // in [0, 2p)
  return result - (prime & (0 - static_cast<std::uint64_t>(result >= prime)));
}

// target -= factor * source (mod p), entrywise.
void subtract_multiple(ModularVector& target, const ModularVector& source, std::uint64_t factor,
                       std::uint64_t prime) {
  const std::uint64_t precomputed = n_mulmod_precomp_shoup(factor, prime);
  for (std::size_t j = 0; j < target.size(); ++j) {
    const std::uint64_t product = multiply_shoup(factor, source[j], precomputed, prime);
    const std::uint64_t difference = target[j] - product;
    target[j] = difference + (prime & (0 - static_cast<std::uint64_t>(target[j] < product)));
  }
}

void scale(ModularVector& target, std::uint64_t factor, std::uint64_t prime) {
  const std::uint64_t precomputed = n_mulmod_precomp_shoup(factor, prime);
  for (std::uint64_t& value : target) value = multiply_shoup(factor, value, precomputed, prime);
}

}  // namespace

ModularRowBasis::ModularRowBasis(std::uint64_t prime, std::size_t columns)
    : prime_(prime), prime_inverse_(0), columns_(columns) {
  check_prime_range(prime, "ModularRowBasis");
  prime_inverse_ = n_preinvert_limb(prime);
  free_columns_.resize(columns);
  for (std::size_t c = 0; c < columns; ++c) free_columns_[c] = c;
}

void ModularRowBasis::check_row(const ModularVector& row, const char* where) const {
  if (row.size() != columns_)
    throw usage_error(std::string(where) + ": the row has " + std::to_string(row.size()) +
                      " entries, the basis " + std::to_string(columns_) + " columns");
  for (std::uint64_t value : row)
    if (value >= prime_) throw usage_error(std::string(where) + ": entry is not a residue");
}

ModularVector ModularRowBasis::residual(const ModularVector& row) const {
  // sum_i row[pivot_i] * (kept row i) on the free columns, accumulated
  // exactly in 192 bits (a 128-bit sum and a count of its wrap-arounds) and
  // reduced once at the end. Kept row i is 1 at its own pivot and 0 at the
  // others, so subtracting this sum from row clears every pivot entry at once.
  const std::size_t free_count = free_columns_.size();
  std::vector<Wide> sums(free_count, 0);
  std::vector<std::uint64_t> wraps(free_count, 0);
  for (std::size_t i = 0; i < pivot_columns_.size(); ++i) {
    const std::uint64_t factor = row[pivot_columns_[i]];
    if (factor == 0) continue;
    const std::uint64_t* part = free_parts_[i].data();
    for (std::size_t q = 0; q < free_count; ++q) {
      const Wide product = static_cast<Wide>(factor) * part[q];
      const Wide sum = sums[q] + product;
      wraps[q] += static_cast<std::uint64_t>(sum < product);
      sums[q] = sum;
    }
  }
  ModularVector result(free_count);
  for (std::size_t q = 0; q < free_count; ++q) {
    const std::uint64_t value = row[free_columns_[q]];
    // n_lll_mod_preinv wants the top word reduced mod p: wraps <= rank, and
    // it is nonzero only when rank * (p-1)^2 >= 2^128, i.e. p >> rank.
    const std::uint64_t subtrahend =
        n_lll_mod_preinv(wraps[q], static_cast<std::uint64_t>(sums[q] >> 64), static_cast<std::uint64_t>(sums[q]),
                         prime_, prime_inverse_);
    result[q] = value >= subtrahend ? value - subtrahend : value + (prime_ - subtrahend);
  }
  return result;
}

bool ModularRowBasis::add_row(const ModularVector& row) {
  check_row(row, "ModularRowBasis::add_row");
  if (free_columns_.empty()) return false;
  ModularVector reduced = residual(row);
  const auto nonzero = std::find_if(reduced.begin(), reduced.end(), [](std::uint64_t v) { return v != 0; });
  if (nonzero == reduced.end()) return false;
  const auto q = static_cast<std::size_t>(nonzero - reduced.begin());
  scale(reduced, n_invmod(reduced[q], prime_), prime_);
  // Clear the new pivot column from the kept rows, then drop it from the
  // free columns of every stored row.
  const auto position = static_cast<std::ptrdiff_t>(q);
  for (ModularVector& part : free_parts_) {
    if (part[q] != 0) subtract_multiple(part, reduced, part[q], prime_);
    part.erase(part.begin() + position);
  }
  reduced.erase(reduced.begin() + position);
  pivot_columns_.push_back(free_columns_[q]);
  free_columns_.erase(free_columns_.begin() + position);
  free_parts_.push_back(std::move(reduced));
  return true;
}

ModularMatrix ModularRowBasis::rows() const {
  ModularMatrix out(pivot_columns_.size(), columns_);
  for (std::size_t i = 0; i < pivot_columns_.size(); ++i) {
    out(i, pivot_columns_[i]) = 1;
    for (std::size_t q = 0; q < free_columns_.size(); ++q) out(i, free_columns_[q]) = free_parts_[i][q];
  }
  return out;
}

bool ModularRowBasis::contains(const ModularVector& row) const {
  check_row(row, "ModularRowBasis::contains");
  const ModularVector reduced = residual(row);
  return std::all_of(reduced.begin(), reduced.end(), [](std::uint64_t v) { return v == 0; });
}

}  // namespace pleat
