// Row spaces and kernels modulo a word prime (core/rank.hpp), eliminated by
// blocks of rows so that a stop request acts between FLINT calls.
#include "core/rank.hpp"
#include "core/detail/flint_matrix.hpp"
#include "core/stop.hpp"

#include <flint/fmpq.h>
#include <flint/fmpz.h>
#include <flint/nmod.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <memory>
#include <mutex>
#include <utility>
#include <vector>

namespace pleat {
using namespace detail;

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


}  // namespace pleat
