// RAII owners of FLINT matrices and the word-prime range check shared by
// core/rank.cpp, core/modular_kernel.cpp and core/modular_basis.cpp (not
// installed: an implementation detail of core/rank.hpp).
#pragma once

#include "core/errors.hpp"
#include "core/thread_caches.hpp"

#include <gmp.h>
// FLINT after GMP so that its mpz conversion functions are declared.
#include <flint/flint.h>
#include <flint/fmpq_mat.h>
#include <flint/fmpz_mat.h>
#include <flint/nmod_mat.h>

#include <cstddef>
#include <cstdint>
#include <string>

namespace pleat::detail {

inline constexpr std::uint64_t largest_supported_prime_bound = std::uint64_t{1} << 63;

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

inline void check_prime_range(std::uint64_t prime, const char* where) {
  if (prime < 2 || prime >= largest_supported_prime_bound)
    throw usage_error(std::string(where) + ": prime must lie in [2, 2^63)");
}

}  // namespace pleat::detail
