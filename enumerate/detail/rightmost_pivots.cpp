#include "enumerate/detail/rightmost_pivots.hpp"

#include "core/detail/flint_matrix.hpp"
#include "core/stop.hpp"

#include <flint/perm.h>

#include <algorithm>

namespace pleat::detail {
namespace {

// A window onto rows [r0, r1) and columns [c0, c1) of a FLINT matrix (its
// own row pointers: a row swap in the window leaves the parent's order).
class NmodWindow {
 public:
  NmodWindow(nmod_mat_struct* parent, std::size_t r0, std::size_t c0, std::size_t r1, std::size_t c1) {
    nmod_mat_window_init(value_, parent, static_cast<slong>(r0), static_cast<slong>(c0), static_cast<slong>(r1),
                         static_cast<slong>(c1));
  }
  ~NmodWindow() { nmod_mat_window_clear(value_); }
  NmodWindow(const NmodWindow&) = delete;
  NmodWindow& operator=(const NmodWindow&) = delete;
  nmod_mat_struct* get() { return value_; }

 private:
  nmod_mat_t value_;
};

mp_limb_t& at(nmod_mat_struct* matrix, std::size_t r, std::size_t c) {
  return nmod_mat_entry(matrix, static_cast<slong>(r), static_cast<slong>(c));
}

}  // namespace

// Gaussian elimination by column blocks on the reversed columns. Rows
// [0, done_rows) of `work` are the pivot rows found so far; rows after them
// hold the Schur complement of those pivots in the columns not yet done (a
// column is a pivot exactly when it is one of its block's complement: the
// complement is the rows' projection along the earlier pivot columns). A
// block's pivots and pivot rows come from FLINT's LU of its complement (U in
// row echelon form, so its pivot columns are the block's rank profile); the
// other rows' later columns then lose M times the pivot rows', M =
// (their entries at the pivot columns) (the pivot rows' there)^-1.
std::vector<std::size_t> rightmost_pivots(const std::vector<std::vector<Integer>>& rows, std::uint64_t prime,
                                          const PivotProgress& on_block) {
  if (rows.empty() || rows[0].empty()) return {};
  const std::size_t height = rows.size(), columns = rows[0].size();
  NmodMatrix work(height, columns, prime);
  for (std::size_t i = 0; i < height; ++i) {
    if (i % 64 == 0) poll_stop();
    for (std::size_t c = 0; c < columns; ++c) at(work.get(), i, columns - 1 - c) = mpz_fdiv_ui(rows[i][c].get_mpz_t(), prime);
  }
  std::vector<std::size_t> pivots;
  std::size_t done_rows = 0;
  for (std::size_t first = 0; first < columns && done_rows < height; first += pivot_column_block) {
    if (on_block) on_block(first, columns);
    poll_stop();
    const std::size_t end = std::min(columns, first + pivot_column_block), left = height - done_rows;
    NmodMatrix block(left, end - first, prime);
    for (std::size_t i = 0; i < left; ++i)
      std::copy_n(&at(work.get(), done_rows + i, first), end - first, &at(block.get(), i, 0));
    std::vector<slong> order(left);
    const auto rank = static_cast<std::size_t>(nmod_mat_lu(order.data(), block.get(), 0));
    if (rank == 0) continue;
    std::vector<std::size_t> at_block;  // the pivot columns, from first
    for (std::size_t i = 0; i < rank; ++i) {
      std::size_t c = i;  // U's row i starts at column i (L is stored left of it)
      while (at(block.get(), i, c) == 0) ++c;
      at_block.push_back(c);
      pivots.push_back(columns - 1 - (first + c));
    }
    // The rows in the LU's order: its first `rank` rows are the pivot rows.
    const std::vector<mp_limb_t*> before(work.get()->rows + done_rows, work.get()->rows + height);
    for (std::size_t i = 0; i < left; ++i) work.get()->rows[done_rows + i] = before[static_cast<std::size_t>(order[i])];
    const std::size_t others = left - rank;
    if (others > 0 && end < columns) {
      NmodMatrix square(rank, rank, prime), multiplier(others, rank, prime), inverse(rank, rank, prime);
      for (std::size_t i = 0; i < rank; ++i)
        for (std::size_t j = 0; j < rank; ++j) at(square.get(), i, j) = at(work.get(), done_rows + i, first + at_block[j]);
      for (std::size_t i = 0; i < others; ++i)
        for (std::size_t j = 0; j < rank; ++j)
          at(multiplier.get(), i, j) = at(work.get(), done_rows + rank + i, first + at_block[j]);
      nmod_mat_inv(inverse.get(), square.get());  // nonsingular: the LU's pivots
      NmodMatrix factor(others, rank, prime);
      nmod_mat_mul(factor.get(), multiplier.get(), inverse.get());
      for (std::size_t from = end; from < columns; from += pivot_column_block) {
        poll_stop();
        const std::size_t to = std::min(columns, from + pivot_column_block);
        NmodWindow pivot_rows(work.get(), done_rows, from, done_rows + rank, to);
        NmodWindow other_rows(work.get(), done_rows + rank, from, height, to);
        nmod_mat_submul(other_rows.get(), other_rows.get(), factor.get(), pivot_rows.get());
      }
    }
    done_rows += rank;
  }
  return pivots;
}

}  // namespace pleat::detail
