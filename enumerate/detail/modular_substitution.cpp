#include "enumerate/detail/modular_substitution.hpp"

#include <flint/nmod_vec.h>

#include <algorithm>

namespace pleat::detail {
namespace {

__extension__ typedef unsigned __int128 Wide;

// Sums of word products, one per column of a block of W columns: high 2^128
// + low, high counting the carries out of low (at most one per product, so
// high < n < p, as NMOD_RED3 needs).
template <std::size_t W>
struct Sums {
  Wide low[W];
  std::uint64_t high[W];

  void clear() {
    for (std::size_t c = 0; c < W; ++c) {
      low[c] = 0;
      high[c] = 0;
    }
  }
  // += factor times the row's W entries.
  void add(std::uint64_t factor, const std::uint64_t* row) {
    for (std::size_t c = 0; c < W; ++c) {
      const Wide product = static_cast<Wide>(factor) * row[c];
      low[c] += product;
      high[c] += low[c] < product ? 1 : 0;
    }
  }
  std::uint64_t reduced(std::size_t c, nmod_t mod) const {
    std::uint64_t r;
    NMOD_RED3(r, high[c], static_cast<std::uint64_t>(low[c] >> 64), static_cast<std::uint64_t>(low[c]), mod);
    return r;
  }
};

// Columns [first, first + W) of x.
template <std::size_t W>
void solve_block(const nmod_mat_struct* triangles, const std::uint64_t* inverse_diagonal, std::uint64_t* x,
                 std::size_t n, std::size_t m, std::size_t first) {
  const nmod_t mod = triangles->mod;
  Sums<W> sums;
  // L y = x: y_i = x_i - sum over j < i of L_ij y_j.
  for (std::size_t i = 0; i < n; ++i) {
    const mp_limb_t* row = triangles->rows[i];
    sums.clear();
    for (std::size_t j = 0; j < i; ++j) sums.add(row[j], x + j * m + first);
    std::uint64_t* out = x + i * m + first;
    for (std::size_t c = 0; c < W; ++c) out[c] = nmod_sub(out[c], sums.reduced(c, mod), mod);
  }
  // U' x = D^-1 y: x_i = D_ii^-1 y_i - sum over j > i of U'_ij x_j.
  for (std::size_t i = n; i-- > 0;) {
    const mp_limb_t* row = triangles->rows[i];
    sums.clear();
    for (std::size_t j = i + 1; j < n; ++j) sums.add(row[j], x + j * m + first);
    std::uint64_t* out = x + i * m + first;
    for (std::size_t c = 0; c < W; ++c)
      out[c] = nmod_sub(nmod_mul(out[c], inverse_diagonal[i], mod), sums.reduced(c, mod), mod);
  }
}

}  // namespace

void solve_triangles_modulo(const nmod_mat_struct* triangles, const std::uint64_t* inverse_diagonal,
                            std::uint64_t* x, std::size_t n, std::size_t m) {
  // Blocks of up to four columns, their sums in registers.
  for (std::size_t first = 0; first < m;) {
    switch (std::min<std::size_t>(m - first, 4)) {
      case 4: solve_block<4>(triangles, inverse_diagonal, x, n, m, first); first += 4; break;
      case 3: solve_block<3>(triangles, inverse_diagonal, x, n, m, first); first += 3; break;
      case 2: solve_block<2>(triangles, inverse_diagonal, x, n, m, first); first += 2; break;
      default: solve_block<1>(triangles, inverse_diagonal, x, n, m, first); first += 1; break;
    }
  }
}

}  // namespace pleat::detail
