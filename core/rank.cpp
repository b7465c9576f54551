#include "core/rank.hpp"

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
#include <string>
#include <utility>

namespace pleat {
namespace {

constexpr std::uint64_t largest_supported_prime_bound = std::uint64_t{1} << 63;

// RAII owners of FLINT matrices.
class FmpzMatrix {
 public:
  FmpzMatrix(std::size_t rows, std::size_t cols) {
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
  return static_cast<std::size_t>(fmpz_mat_rank(integer_rows.get()));
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

RationalMatrix kernel_basis_exact(const RationalMatrix& matrix) {
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

bool ModularRowBasis::contains(const ModularVector& row) const {
  check_row(row, "ModularRowBasis::contains");
  const ModularVector reduced = residual(row);
  return std::all_of(reduced.begin(), reduced.end(), [](std::uint64_t v) { return v == 0; });
}

}  // namespace pleat
