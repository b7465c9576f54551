#pragma once

// A sum of products of two 64-bit words, exact in 192 bits: a 128-bit sum and
// a count of its wrap-arounds (n products of words below 2^64 stay below
// 2^192 for any n below 2^64). Used where a long dot product is reduced once
// (ModularRowBasis) or carried on exactly (the p-adic solve).

#include <flint/ulong_extras.h>

#include <cstdint>

namespace pleat::detail {

struct WideSum {
  __extension__ typedef unsigned __int128 Word128;  // GCC/Clang: exact 64 x 64 -> 128 products

  Word128 low = 0;
  std::uint64_t high = 0;  // wrap-arounds of low

  void add(std::uint64_t a, std::uint64_t b) {
    const Word128 product = static_cast<Word128>(a) * b;
    low += product;
    high += static_cast<std::uint64_t>(low < product);
  }
  // The sum modulo prime. Precondition: high < prime (fewer than prime
  // products added); prime_inverse from n_preinvert_limb(prime).
  std::uint64_t reduce(std::uint64_t prime, std::uint64_t prime_inverse) const {
    return n_lll_mod_preinv(high, static_cast<std::uint64_t>(low >> 64), static_cast<std::uint64_t>(low), prime,
                            prime_inverse);
  }
};

}  // namespace pleat::detail
