// A square integer matrix's entries in words, for the p-adic solve's
// residuals (padic_solve.cpp): A x for a vector x of words, modulo
// 2^(64 size), without multi-precision calls. Internal to enumerate/ (not
// installed).
#pragma once

#include "core/detail/wide_sum.hpp"

#include <flint/fmpz.h>
#include <flint/fmpz_mat.h>

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <vector>

namespace pleat::detail {

// A's nonzero entries row by row, the positive ones first, each as its
// column and the `limbs` words of its absolute value (least significant
// first): A x is then two sums of word products per row and word.
class WordMatrix {
  __extension__ typedef unsigned __int128 Wide;

 public:
  explicit WordMatrix(const fmpz_mat_struct* a) {
    const auto n = fmpz_mat_nrows(a);
    const auto columns = fmpz_mat_ncols(a);
    std::size_t largest = 1;
    for (slong i = 0; i < n; ++i)
      for (slong j = 0; j < columns; ++j) largest = std::max(largest, limb_count(fmpz_mat_entry(a, i, j)));
    limbs_ = largest;
    first_.push_back(0);
    for (slong i = 0; i < n; ++i) {
      for (int sign : {1, -1}) {
        for (slong j = 0; j < columns; ++j) {
          const fmpz* entry = fmpz_mat_entry(a, i, j);
          if (sign_of(entry) != sign) continue;
          columns_.push_back(static_cast<std::size_t>(j));
          for (std::size_t l = 0; l < limbs_; ++l) words_.push_back(magnitude_limb(entry, l));
        }
        first_.push_back(columns_.size());
      }
    }
    // The same entries as two's complement words modulo 2^128, either sign,
    // when each fits in two words (as |A| must for residuals modulo 2^128)
    // and A is small (their 24 bytes per entry).
    if (limbs_ <= 2 && n <= 256) {
      wrapped_first_.push_back(0);
      for (slong i = 0; i < n; ++i) {
        for (slong j = 0; j < columns; ++j) {
          const fmpz* entry = fmpz_mat_entry(a, i, j);
          const int sign = sign_of(entry);
          if (sign == 0) continue;
          Wide value = (static_cast<Wide>(magnitude_limb(entry, 1)) << 64) | magnitude_limb(entry, 0);
          if (sign < 0) value = -value;
          wrapped_columns_.push_back(static_cast<std::size_t>(j));
          wrapped_words_.push_back(static_cast<std::uint64_t>(value));
          wrapped_words_.push_back(static_cast<std::uint64_t>(value >> 64));
        }
        wrapped_first_.push_back(wrapped_columns_.size());
      }
    }
  }

  // t -= row i of A times x (x's entries words), modulo 2^(64 size): t is
  // `size` words, least significant first (two's complement).
  void subtract_row_times(std::size_t i, const std::uint64_t* x, std::uint64_t* t, std::size_t size) const {
    if (size <= 2 && !wrapped_first_.empty()) {
      // Modulo 2^128, where a two-word entry times a word is its low word's
      // full product plus its high word's low product shifted: two products
      // an entry, one sum, no carries run out (on 2,15,15,15,15,1 seed 1
      // the residuals are two words and A's entries two).
      Wide low = 0;
      std::uint64_t high = 0;
      for (std::size_t e = wrapped_first_[i]; e < wrapped_first_[i + 1]; ++e) {
        const std::uint64_t value = x[wrapped_columns_[e]];
        low += static_cast<Wide>(wrapped_words_[2 * e]) * value;
        high += wrapped_words_[2 * e + 1] * value;
      }
      const Wide product = low + (static_cast<Wide>(high) << 64);
      if (size == 1) {
        t[0] -= static_cast<std::uint64_t>(product);
        return;
      }
      const Wide difference = ((static_cast<Wide>(t[1]) << 64) | t[0]) - product;
      t[0] = static_cast<std::uint64_t>(difference);
      t[1] = static_cast<std::uint64_t>(difference >> 64);
      return;
    }
    std::vector<std::uint64_t>& total = scratch_words();
    sum_words(first_[2 * i], first_[2 * i + 1], x, total);
    add_words(t, size, total, true);
    sum_words(first_[2 * i + 1], first_[2 * i + 2], x, total);
    add_words(t, size, total, false);
  }

 private:
  // An entry's sign, its magnitude's limb count and l-th limb, read in
  // place: a FLINT call (fmpz_sgn, fmpz_abs, fmpz_size) per entry and pass
  // was most of this set-up (about 0.08 ms on 2,15,15,15,15,1 seed 1).
  static int sign_of(const fmpz* value) {
    if (!COEFF_IS_MPZ(*value)) return *value > 0 ? 1 : (*value < 0 ? -1 : 0);
    const int size = COEFF_TO_PTR(*value)->_mp_size;
    return size > 0 ? 1 : (size < 0 ? -1 : 0);
  }
  static std::size_t limb_count(const fmpz* value) {
    if (!COEFF_IS_MPZ(*value)) return *value != 0 ? 1 : 0;
    return static_cast<std::size_t>(std::abs(COEFF_TO_PTR(*value)->_mp_size));
  }
  static std::uint64_t magnitude_limb(const fmpz* value, std::size_t l) {
    if (!COEFF_IS_MPZ(*value)) {
      if (l != 0) return 0;
      const slong small = *value;
      return small < 0 ? static_cast<std::uint64_t>(-small) : static_cast<std::uint64_t>(small);
    }
    const __mpz_struct* big = COEFF_TO_PTR(*value);
    return l < static_cast<std::size_t>(std::abs(big->_mp_size)) ? big->_mp_d[l] : 0;
  }

  // t += total (or t -= total) modulo 2^(64 size).
  static void add_words(std::uint64_t* t, std::size_t size, const std::vector<std::uint64_t>& total, bool subtract) {
    std::uint64_t carry = 0;
    for (std::size_t w = 0; w < size; ++w) {
      const std::uint64_t v = w < total.size() ? total[w] : 0;
      if (subtract) {
        const Wide d = static_cast<Wide>(t[w]) - v - carry;
        t[w] = static_cast<std::uint64_t>(d);
        carry = static_cast<std::uint64_t>(d >> 64) != 0 ? 1 : 0;
      } else {
        const Wide d = static_cast<Wide>(t[w]) + v + carry;
        t[w] = static_cast<std::uint64_t>(d);
        carry = static_cast<std::uint64_t>(d >> 64);
      }
    }
  }

  // The entries [begin, end) (magnitudes) times x at their columns, as
  // limbs_ + 3 words.
  void sum_words(std::size_t begin, std::size_t end, const std::uint64_t* x, std::vector<std::uint64_t>& total) const {
    total.assign(limbs_ + 3, 0);
    for (std::size_t l = 0; l < limbs_; ++l) {
      WideSum part;
      for (std::size_t e = begin; e < end; ++e) part.add(words_[e * limbs_ + l], x[columns_[e]]);
      // total += part * 2^(64 l), with the carry run out.
      const std::uint64_t words[3] = {static_cast<std::uint64_t>(part.low), static_cast<std::uint64_t>(part.low >> 64),
                                      part.high};
      std::uint64_t carry = 0;
      for (std::size_t w = 0; w < 3 || carry; ++w) {
        const Wide added = static_cast<Wide>(total[l + w]) + (w < 3 ? words[w] : 0) + carry;
        total[l + w] = static_cast<std::uint64_t>(added);
        carry = static_cast<std::uint64_t>(added >> 64);
      }
    }
  }

  static std::vector<std::uint64_t>& scratch_words() {
    thread_local std::vector<std::uint64_t> words;
    return words;
  }

  std::size_t limbs_ = 1;
  std::vector<std::size_t> first_;    // row i's positives [2i, 2i+1), negatives [2i+1, 2i+2)
  std::vector<std::size_t> columns_;  // of each entry
  std::vector<std::uint64_t> words_;  // limbs_ per entry
  // Row i's entries [wrapped_first_[i], wrapped_first_[i + 1]) modulo 2^128:
  // column, then two words each (empty when not kept).
  std::vector<std::size_t> wrapped_first_, wrapped_columns_;
  std::vector<std::uint64_t> wrapped_words_;
};

}  // namespace pleat::detail
