// The extra directions modulo the walk's prime, read off its row basis, and
// the exact test of their echelon shape (declared in kernel_lift.hpp).
#include "enumerate/detail/kernel_lift.hpp"

#include "core/detail/flint_matrix.hpp"
#include "enumerate/detail/parallel_for.hpp"

#include <flint/nmod_mat.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <vector>

namespace pleat::detail {
namespace {

// out = left right, the rows of left split among up to `threads` threads
// (FLINT's product runs on one): each block's product is written to its own
// rows of out, the same for any thread count.
void multiply_by_row_blocks(NmodMatrix& out, NmodMatrix& left, NmodMatrix& right, unsigned threads) {
  const auto rows = static_cast<std::size_t>(nmod_mat_nrows(left.get()));
  const std::size_t blocks = std::clamp<std::size_t>(rows / 16, 1, std::max(1u, threads));
  parallel_for(blocks, threads, [&](std::size_t b) {
    const auto first = static_cast<slong>(rows * b / blocks), last = static_cast<slong>(rows * (b + 1) / blocks);
    nmod_mat_t left_rows, out_rows;
    nmod_mat_window_init(left_rows, left.get(), first, 0, last, nmod_mat_ncols(left.get()));
    nmod_mat_window_init(out_rows, out.get(), first, 0, last, nmod_mat_ncols(out.get()));
    nmod_mat_mul(out_rows, left_rows, right.get());
    nmod_mat_window_clear(out_rows);
    nmod_mat_window_clear(left_rows);
  });
}

}  // namespace

std::vector<std::size_t> echelon_shape(const ModularMatrix& echelon) {
  std::vector<std::size_t> leads;
  for (std::size_t r = 0; r < echelon.rows(); ++r) {
    std::size_t c = 0;
    while (c < echelon.cols() && echelon(r, c) == 0) ++c;
    leads.push_back(c);
  }
  return leads;
}

ModularMatrix extra_directions_of_rows(const ModularMatrix& rows, const std::vector<std::size_t>& scaling_pivots,
                                       std::uint64_t prime) {
  std::vector<bool> is_scaling_pivot(rows.cols(), false);
  for (std::size_t c : scaling_pivots) is_scaling_pivot[c] = true;
  std::vector<std::size_t> columns;  // the columns outside Q, increasing
  for (std::size_t c = 0; c < rows.cols(); ++c)
    if (!is_scaling_pivot[c]) columns.push_back(c);
  ModularMatrix restricted(rows.rows(), columns.size());
  for (std::size_t r = 0; r < rows.rows(); ++r)
    for (std::size_t q = 0; q < columns.size(); ++q) restricted(r, q) = rows(r, columns[q]);
  const ModularMatrix kernel = kernel_basis_modulo(restricted, prime);
  ModularMatrix extra(kernel.rows(), rows.cols());
  for (std::size_t r = 0; r < kernel.rows(); ++r)
    for (std::size_t q = 0; q < columns.size(); ++q) extra(r, columns[q]) = kernel(r, q);
  return extra;
}

ModularMatrix extra_directions_of_basis(const ModularRowBasis& basis, const std::vector<std::size_t>& scaling_pivots,
                                        unsigned threads) {
  const std::vector<std::size_t>& pivots = basis.pivot_columns();
  const std::vector<std::size_t>& free = basis.free_columns();
  const std::size_t columns = basis.columns(), rank = pivots.size();
  const std::uint64_t prime = basis.prime();
  std::vector<char> is_scaling(columns, 0), is_pivot(columns, 0);
  for (std::size_t c : scaling_pivots) is_scaling[c] = 1;
  for (std::size_t c : pivots) is_pivot[c] = 1;
  // Kept row i is 1 at pivot_i, 0 at the other pivots and free_part(i) at
  // the free columns (read there, never written out as rank x D).
  std::vector<std::size_t> position(columns, 0);  // of a free column in free
  for (std::size_t q = 0; q < free.size(); ++q) position[free[q]] = q;
  auto entry = [&](std::size_t i, std::size_t f) { return basis.free_part(i)[position[f]]; };
  // The kernel read off the basis: a vector is free on the other columns F,
  // and at pivot_i it is minus row i times its F part. E is the part that
  // vanishes on Q. A column f of F no kept row touches gives e_f: outside Q
  // a row of E as it stands (most extra directions of a random network: a
  // parameter no region depends on), and every other vector of E is 0
  // there, so those are set aside. The other free columns outside Q (T)
  // carry the rest, W: the vectors whose T part c meets the conditions of
  // the pivots in Q (row i times c is 0), a small kernel; W is then c on T
  // and -R c at the pivots, and its reduced echelon form is E's other rows.
  std::vector<char> touched_at(free.size(), 0);
  for (std::size_t i = 0; i < rank; ++i) {
    const ModularVector& part = basis.free_part(i);
    for (std::size_t q = 0; q < free.size(); ++q) touched_at[q] |= part[q] != 0 ? 1 : 0;
  }
  std::vector<std::size_t> touched, untouched;  // T; e_f as it stands
  for (std::size_t f = 0; f < columns; ++f)
    if (!is_pivot[f] && !is_scaling[f]) (touched_at[position[f]] ? touched : untouched).push_back(f);
  std::vector<std::size_t> conditions;  // the basis rows whose pivot is in Q
  for (std::size_t i = 0; i < rank; ++i)
    if (is_scaling[pivots[i]]) conditions.push_back(i);
  poll_stop();
  ModularMatrix combinations;  // the T parts c of W's basis, one per row
  if (conditions.empty()) {
    combinations = ModularMatrix(touched.size(), touched.size());
    for (std::size_t t = 0; t < touched.size(); ++t) combinations(t, t) = 1;
  } else if (!touched.empty()) {
    ModularMatrix condition_rows(conditions.size(), touched.size());
    for (std::size_t q = 0; q < conditions.size(); ++q)
      for (std::size_t t = 0; t < touched.size(); ++t) condition_rows(q, t) = entry(conditions[q], touched[t]);
    combinations = kernel_basis_modulo(condition_rows, prime);
  }
  const std::size_t dimension = combinations.rows();
  // W is 0 at Q (at a pivot in Q by its condition) and at the untouched
  // columns: it is carried on T and the other pivots only, in column order
  // (the same echelon form with the zero columns left out).
  std::vector<std::size_t> carried;
  for (std::size_t c = 0; c < columns; ++c)
    if (!is_scaling[c] && (is_pivot[c] || touched_at[position[c]])) carried.push_back(c);
  std::vector<std::size_t> place(columns, 0);  // of a carried column
  for (std::size_t q = 0; q < carried.size(); ++q) place[carried[q]] = q;
  // W at the pivots: -(R_T c) for each c. c is in reduced row-echelon form
  // (kernel_basis_modulo): 1 at its own leading column, 0 at the others', so
  // R_T c is R at c's leading column plus R at the other columns D times c
  // there: one product (dimension x |D| by |D| x rank), smaller than over
  // all of T when the conditions are few.
  ModularMatrix spanning(dimension, carried.size());
  if (dimension > 0) {
    const std::vector<std::size_t> leads = echelon_shape(combinations);
    std::vector<char> is_lead(touched.size(), 0);
    for (std::size_t l : leads) is_lead[l] = 1;
    std::vector<std::size_t> others;  // D: positions in T
    for (std::size_t t = 0; t < touched.size(); ++t)
      if (!is_lead[t]) others.push_back(t);
    NmodMatrix at_pivots(dimension, rank, prime);
    if (!others.empty()) {
      NmodMatrix left(dimension, others.size(), prime), right(others.size(), rank, prime);
      for (std::size_t a = 0; a < dimension; ++a)
        for (std::size_t d = 0; d < others.size(); ++d)
          nmod_mat_entry(left.get(), static_cast<slong>(a), static_cast<slong>(d)) = combinations(a, others[d]);
      for (std::size_t i = 0; i < rank; ++i)
        for (std::size_t d = 0; d < others.size(); ++d)
          nmod_mat_entry(right.get(), static_cast<slong>(d), static_cast<slong>(i)) = entry(i, touched[others[d]]);
      poll_stop();
      multiply_by_row_blocks(at_pivots, left, right, threads);
    }
    for (std::size_t a = 0; a < dimension; ++a) {
      for (std::size_t t = 0; t < touched.size(); ++t) spanning(a, place[touched[t]]) = combinations(a, t);
      const std::size_t lead = touched[leads[a]];
      for (std::size_t i = 0; i < rank; ++i) {
        if (is_scaling[pivots[i]]) continue;
        const std::uint64_t value =
            n_addmod(nmod_mat_entry(at_pivots.get(), static_cast<slong>(a), static_cast<slong>(i)), entry(i, lead), prime);
        spanning(a, place[pivots[i]]) = value == 0 ? 0 : prime - value;
      }
    }
  }
  // W's canonical basis, merged by leading column with the unit rows (W is
  // 0 at their columns, they are 0 elsewhere).
  const ModularMatrix carried_echelon =
      dimension > 0 ? row_space_basis_modulo(spanning, prime) : ModularMatrix(0, carried.size());
  ModularMatrix echelon(carried_echelon.rows(), columns);
  for (std::size_t r = 0; r < echelon.rows(); ++r)
    for (std::size_t q = 0; q < carried.size(); ++q) echelon(r, carried[q]) = carried_echelon(r, q);
  const std::vector<std::size_t> leads = echelon_shape(echelon);
  ModularMatrix extra(echelon.rows() + untouched.size(), columns);
  std::size_t next_unit = 0, out = 0;
  for (std::size_t r = 0; r <= echelon.rows(); ++r) {
    const std::size_t lead = r < echelon.rows() ? leads[r] : columns;
    for (; next_unit < untouched.size() && untouched[next_unit] < lead; ++next_unit) extra(out++, untouched[next_unit]) = 1;
    if (r == echelon.rows()) break;
    for (std::size_t c = 0; c < columns; ++c) extra(out, c) = echelon(r, c);
    ++out;
  }
  return extra;
}

bool is_echelon_off(const SparseRationalRows& extra, const std::vector<std::size_t>& columns) {
  std::vector<char> is_excluded(extra.cols, 0), is_lead(extra.cols, 0);
  for (std::size_t c : columns) is_excluded[c] = 1;
  // Leading 1s at increasing columns, none of them excluded.
  for (std::size_t r = 0; r < extra.rows.size(); ++r) {
    poll_stop();
    const SparseRationalRows::Row& row = extra.rows[r];
    if (row.empty() || row.front().second != 1) return false;
    const std::size_t lead = row.front().first;
    if (lead >= extra.cols || (r > 0 && lead <= extra.rows[r - 1].front().first)) return false;
    is_lead[lead] = 1;
  }
  // Each row 0 at the other rows' leads and at the excluded columns (its
  // entries are its nonzeros, increasing: the first is its own lead).
  for (const SparseRationalRows::Row& row : extra.rows)
    for (std::size_t e = 0; e < row.size(); ++e) {
      const std::size_t c = row[e].first;
      if (c >= extra.cols || is_excluded[c] || (e > 0 && (is_lead[c] || c <= row[e - 1].first))) return false;
      if (sgn(row[e].second) == 0) return false;
    }
  return true;
}

}  // namespace pleat::detail
