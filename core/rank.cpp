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
#include <flint/nmod_vec.h>
#include <flint/ulong_extras.h>

#include <algorithm>
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
  static const std::uint64_t prime = n_nextprime(std::uint64_t{1} << 62, 1);
  return prime;
}

std::uint64_t screening_prime() {
  static const std::uint64_t prime = n_nextprime(std::uint64_t{1} << 61, 1);
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

ModularRowBasis::ModularRowBasis(std::uint64_t prime, std::size_t columns)
    : prime_(prime), prime_inverse_(0), prime_norm_(0), columns_(columns) {
  check_prime_range(prime, "ModularRowBasis");
  nmod_t modulus;
  nmod_init(&modulus, prime);
  prime_inverse_ = modulus.ninv;
  prime_norm_ = static_cast<unsigned>(modulus.norm);
}

std::size_t ModularRowBasis::reduce(ModularVector& row) const {
  const nmod_t modulus{prime_, prime_inverse_, prime_norm_};
  const auto length = static_cast<slong>(columns_);
  for (std::size_t k = 0; k < rows_.size(); ++k) {
    const std::uint64_t factor = row[pivot_columns_[k]];
    if (factor == 0) continue;
    // row -= factor * kept row; the kept row is 1 at its pivot, so this
    // clears the pivot, and it is 0 at every earlier pivot, so those stay 0.
    _nmod_vec_scalar_addmul_nmod(row.data(), rows_[k].data(), length, prime_ - factor, modulus);
  }
  const auto first = std::find_if(row.begin(), row.end(), [](std::uint64_t v) { return v != 0; });
  return static_cast<std::size_t>(first - row.begin());
}

bool ModularRowBasis::add_row(const ModularVector& row) {
  if (row.size() != columns_) throw usage_error("ModularRowBasis::add_row: wrong row length");
  if (rank() == columns_) return false;
  ModularVector work = row;
  for (std::uint64_t& value : work)
    if (value >= prime_) throw usage_error("ModularRowBasis::add_row: entry is not a residue");
  const std::size_t pivot = reduce(work);
  if (pivot == columns_) return false;
  const std::uint64_t inverse = n_invmod(work[pivot], prime_);
  const nmod_t modulus{prime_, prime_inverse_, prime_norm_};
  _nmod_vec_scalar_mul_nmod(work.data(), work.data(), static_cast<slong>(columns_), inverse, modulus);
  rows_.push_back(std::move(work));
  pivot_columns_.push_back(pivot);
  return true;
}

bool ModularRowBasis::contains(const ModularVector& row) const {
  if (row.size() != columns_) throw usage_error("ModularRowBasis::contains: wrong row length");
  ModularVector work = row;
  for (std::uint64_t value : work)
    if (value >= prime_) throw usage_error("ModularRowBasis::contains: entry is not a residue");
  return reduce(work) == columns_;
}

}  // namespace pleat
