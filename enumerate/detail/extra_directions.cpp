// The extra directions modulo the walk's prime, read off its row basis, and
// the exact test of their echelon shape (declared in kernel_lift.hpp).
#include "enumerate/detail/kernel_lift.hpp"

#include "core/stop.hpp"

#include <flint/nmod.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <cstdint>
#include <utility>
#include <vector>

namespace pleat::detail {
namespace {

// The kept rows' free parts by their nonzero entries, column by column:
// column q of F (a position in free_columns) holds entries [first[q],
// first[q + 1]), each (kept row, value), rows increasing. A sparse kept
// row is read at its listed nonzero positions (ModularRowBasis keeps them),
// a dense one in one sequential pass over its words; the read-off then
// reads only these (on 2,15,15,15,15,1 seed 1, about 2 800 of the 495 x 286
// words), where reading the touched columns row by row missed the cache at
// every entry.
struct FreeColumns {
  std::vector<std::size_t> first;
  std::vector<std::pair<std::size_t, std::uint64_t>> entries;
  bool is_touched(std::size_t q) const { return first[q] != first[q + 1]; }
};

// Calls visit(q, value) at each nonzero entry of kept row i's free part.
template <class Visit>
void for_each_free_nonzero(const ModularRowBasis& basis, std::size_t i, Visit&& visit) {
  const std::uint64_t* part = basis.free_part(i).data();
  // A sparse row's nonzero positions are listed (all of them): only those
  // are read, not its whole free part (cold after the walk).
  if (const std::vector<std::size_t>* listed = basis.nonzero_positions(i)) {
    for (std::size_t q : *listed)
      if (part[q] != 0) visit(q, part[q]);
    return;
  }
  const std::size_t width = basis.free_columns().size();
  constexpr std::size_t block = 8;  // words tested at once: almost all are 0 (2% above)
  std::size_t q = 0;
  for (; q + block <= width; q += block) {
    std::uint64_t any = 0;
    for (std::size_t b = 0; b < block; ++b) any |= part[q + b];
    if (any == 0) continue;
    for (std::size_t b = q; b < q + block; ++b)
      if (part[b] != 0) visit(b, part[b]);
  }
  for (; q < width; ++q)
    if (part[q] != 0) visit(q, part[q]);
}

// Two passes over the rows, a count per column and then the entries in
// place, with no list of the nonzeros between: that list and its regrowth
// were fresh heap after the walk (on 2,15,15,15,15,1 seed 1 about 100 KB,
// some 25 first-touched pages, each a page fault, against the rows read
// again, which the first pass left in cache).
FreeColumns free_columns_by_nonzeros(const ModularRowBasis& basis) {
  const std::size_t rank = basis.rank(), width = basis.free_columns().size();
  FreeColumns out;
  out.first.assign(width + 1, 0);
  for (std::size_t i = 0; i < rank; ++i)
    for_each_free_nonzero(basis, i, [&](std::size_t q, std::uint64_t) { ++out.first[q + 1]; });
  for (std::size_t q = 0; q < width; ++q) out.first[q + 1] += out.first[q];
  out.entries.resize(out.first[width]);
  std::vector<std::size_t> next(out.first.begin(), out.first.end() - 1);
  for (std::size_t i = 0; i < rank; ++i)
    for_each_free_nonzero(basis, i, [&](std::size_t q, std::uint64_t value) { out.entries[next[q]++] = {i, value}; });
  return out;
}

// R_T c for each row c of `combinations` (positions in T, the free columns
// `touched`), by the nonzero entries only: per c the sum of c_t times R's
// column at t, each product's nonzeros (kept row, value). Both are mostly zero on random networks (2,15,15,15,1 seed
// 1: 43 nonzeros in the 40 x 79 combinations, 1299 of R_T's 374 x 79
// entries). One rank-long accumulator, cleared at the rows it touched.
std::vector<std::vector<std::pair<std::size_t, std::uint64_t>>> sparse_row_products(
    const ModularMatrix& combinations, std::size_t rank, const FreeColumns& columns,
    const std::vector<std::size_t>& touched, std::uint64_t prime) {
  nmod_t mod;
  nmod_init(&mod, prime);
  std::vector<std::vector<std::pair<std::size_t, std::uint64_t>>> products(combinations.rows());
  ModularVector sum(rank, 0);
  std::vector<char> is_hit(rank, 0);
  std::vector<std::size_t> hit;
  for (std::size_t a = 0; a < combinations.rows(); ++a) {
    poll_stop();
    hit.clear();
    for (std::size_t t = 0; t < combinations.cols(); ++t)
      if (const std::uint64_t c = combinations(a, t); c != 0)
        for (std::size_t e = columns.first[touched[t]]; e < columns.first[touched[t] + 1]; ++e) {
          const auto [i, value] = columns.entries[e];
          if (!is_hit[i]) {
            is_hit[i] = 1;
            hit.push_back(i);
          }
          sum[i] = nmod_add(sum[i], nmod_mul(c, value, mod), mod);
        }
    for (std::size_t i : hit) {
      if (sum[i] != 0) products[a].emplace_back(i, sum[i]);
      sum[i] = 0;
      is_hit[i] = 0;
    }
  }
  return products;
}

// Gauss-Jordan elimination of `rows` in place: its first (returned) rank
// rows become the reduced row-echelon form, the rest zero. A pivot row is
// read at its nonzero entries only and rows zero at its column are
// skipped. In place, one dense matrix: the read-off's copies of it (rows as
// separate vectors, then the echelon form copied out) were fresh heap after
// the walk, about 40 page faults on 2,15,15,15,15,1 seed 1, each costing
// more than the whole elimination's arithmetic on a virtual machine.
std::size_t reduce_to_echelon_in_place(ModularMatrix& rows, std::uint64_t prime) {
  nmod_t mod;
  nmod_init(&mod, prime);
  const std::size_t cols = rows.cols(), count = rows.rows();
  std::size_t rank = 0;
  std::vector<std::size_t> support;  // of the pivot row from its leading column on
  for (std::size_t c = 0; c < cols && rank < count; ++c) {
    std::size_t r = rank;
    while (r < count && rows(r, c) == 0) ++r;
    if (r == count) continue;
    poll_stop();
    if (r != rank) std::swap_ranges(&rows(rank, 0), &rows(rank, 0) + cols, &rows(r, 0));
    std::uint64_t* pivot = &rows(rank, 0);
    const std::uint64_t inverse = n_invmod(pivot[c], prime);
    support.clear();
    for (std::size_t q = c; q < cols; ++q)
      if (pivot[q] != 0) {
        pivot[q] = nmod_mul(pivot[q], inverse, mod);
        support.push_back(q);
      }
    for (std::size_t other = 0; other < count; ++other) {
      std::uint64_t* row = &rows(other, 0);
      if (other == rank || row[c] == 0) continue;
      const std::uint64_t factor = row[c];
      for (std::size_t q : support) row[q] = nmod_sub(row[q], nmod_mul(factor, pivot[q], mod), mod);
    }
    ++rank;
  }
  return rank;
}

// The leading column of each of the first `rank` rows of an echelon matrix.
std::vector<std::size_t> leading_columns(const ModularMatrix& echelon, std::size_t rank) {
  std::vector<std::size_t> leads;
  for (std::size_t r = 0; r < rank; ++r) {
    std::size_t c = 0;
    while (c < echelon.cols() && echelon(r, c) == 0) ++c;
    leads.push_back(c);
  }
  return leads;
}

// The reduced row-echelon form modulo prime of sparse rows (nonzero
// entries, columns increasing), by Gauss-Jordan elimination on those
// entries: the same rows, in order, as the dense form's nonzero rows (it is
// unique). For W in the read-off: 631 nonzeros of its 64 x 264 carried
// columns, 678 in its echelon form, on 2,15,15,15,15,1 seed 1, where the
// dense matrix was 135 KB of heap first touched after the walk.
std::vector<SparseModularRows::Row> reduced_echelon_of_entries(std::vector<SparseModularRows::Row> rows,
                                                               std::uint64_t prime) {
  nmod_t mod;
  nmod_init(&mod, prime);
  using Row = SparseModularRows::Row;
  const auto at = [](const Row& row, std::size_t c) {
    const auto it =
        std::lower_bound(row.begin(), row.end(), c, [](const auto& e, std::size_t col) { return e.first < col; });
    return it != row.end() && it->first == c ? it->second : std::uint64_t{0};
  };
  Row combined;
  std::size_t rank = 0;
  // Rows from `rank` on are 0 left of the next column that can lead (every
  // column before was a pivot, eliminated, or 0 in all of them): the
  // smallest leading column among them is the next pivot's.
  while (rank < rows.size()) {
    std::size_t best = rows.size();
    for (std::size_t r = rank; r < rows.size(); ++r)
      if (!rows[r].empty() && (best == rows.size() || rows[r].front().first < rows[best].front().first)) best = r;
    if (best == rows.size()) break;
    poll_stop();
    std::swap(rows[rank], rows[best]);
    Row& pivot = rows[rank];
    const std::size_t c = pivot.front().first;
    const std::uint64_t inverse = n_invmod(pivot.front().second, prime);
    for (auto& entry : pivot) entry.second = nmod_mul(entry.second, inverse, mod);
    for (std::size_t other = 0; other < rows.size(); ++other) {
      if (other == rank) continue;
      const std::uint64_t factor = at(rows[other], c);
      if (factor == 0) continue;
      // other - factor pivot, merged by column; zeros dropped
      const Row& row = rows[other];
      combined.clear();
      std::size_t i = 0, j = 0;
      while (i < row.size() || j < pivot.size()) {
        if (j == pivot.size() || (i < row.size() && row[i].first < pivot[j].first)) {
          combined.push_back(row[i++]);
          continue;
        }
        const std::uint64_t subtracted = nmod_mul(factor, pivot[j].second, mod);
        const bool both = i < row.size() && row[i].first == pivot[j].first;
        const std::uint64_t value = nmod_sub(both ? row[i].second : 0, subtracted, mod);
        if (value != 0) combined.emplace_back(pivot[j].first, value);
        if (both) ++i;
        ++j;
      }
      rows[other].swap(combined);
    }
    ++rank;
  }
  rows.resize(rank);
  return rows;
}

// The canonical basis of the kernel of rows R from `reversed`, R with its
// columns reversed (reduced in place): as kernel_basis_modulo does, each
// vector read off (1 at a free column f, minus column f at the pivots, all
// right of f in the original order) is then already the canonical basis.
ModularMatrix kernel_of_reversed_rows(ModularMatrix& reversed, std::uint64_t prime) {
  const std::size_t cols = reversed.cols();
  const std::size_t rank = reduce_to_echelon_in_place(reversed, prime);
  const std::vector<std::size_t> pivots = leading_columns(reversed, rank);  // reversed indices
  std::vector<char> is_pivot(cols, 0);
  for (std::size_t c : pivots) is_pivot[c] = 1;
  ModularMatrix kernel(cols - pivots.size(), cols);
  for (std::size_t f = 0, row = 0; f < cols; ++f) {
    const std::size_t at = cols - 1 - f;
    if (is_pivot[at]) continue;
    kernel(row, f) = 1;
    for (std::size_t i = 0; i < pivots.size(); ++i)
      if (const std::uint64_t value = reversed(i, at); value != 0) kernel(row, cols - 1 - pivots[i]) = prime - value;
    ++row;
  }
  return kernel;
}

}  // namespace

ModularMatrix reduced_echelon_of_sparse_rows(std::vector<ModularVector> rows, std::size_t cols, std::uint64_t prime) {
  std::vector<SparseModularRows::Row> entries(rows.size());
  for (std::size_t r = 0; r < rows.size(); ++r) {
    for (std::size_t c = 0; c < cols; ++c)
      if (rows[r][c] != 0) entries[r].emplace_back(c, rows[r][c]);
    ModularVector().swap(rows[r]);
  }
  entries = reduced_echelon_of_entries(std::move(entries), prime);
  ModularMatrix echelon(entries.size(), cols);
  for (std::size_t r = 0; r < entries.size(); ++r)
    for (const auto& [c, value] : entries[r]) echelon(r, c) = value;
  return echelon;
}

ModularMatrix kernel_of_sparse_rows(const std::vector<ModularVector>& rows, std::size_t cols, std::uint64_t prime) {
  ModularMatrix reversed(rows.size(), cols);
  for (std::size_t r = 0; r < rows.size(); ++r)
    for (std::size_t c = 0; c < cols; ++c) reversed(r, cols - 1 - c) = rows[r][c];
  return kernel_of_reversed_rows(reversed, prime);
}

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

SparseModularRows extra_directions_of_basis(const ModularRowBasis& basis,
                                            const std::vector<std::size_t>& scaling_pivots) {
  const std::vector<std::size_t>& pivots = basis.pivot_columns();
  const std::vector<std::size_t>& free = basis.free_columns();
  const std::size_t columns = basis.columns(), rank = pivots.size();
  const std::uint64_t prime = basis.prime();
  std::vector<char> is_scaling(columns, 0), is_pivot(columns, 0);
  for (std::size_t c : scaling_pivots) is_scaling[c] = 1;
  for (std::size_t c : pivots) is_pivot[c] = 1;
  // Kept row i is 1 at pivot_i, 0 at the other pivots and free_part(i) at
  // the free columns (read there by nonzero entries, never written out as
  // rank x D).
  std::vector<std::size_t> position(columns, 0);  // of a free column in free
  for (std::size_t q = 0; q < free.size(); ++q) position[free[q]] = q;
  const FreeColumns free_parts = free_columns_by_nonzeros(basis);
  // The kernel read off the basis: a vector is free on the other columns F,
  // and at pivot_i it is minus row i times its F part. E is the part that
  // vanishes on Q. A column f of F no kept row touches gives e_f: outside Q
  // a row of E as it stands (most extra directions of a random network: a
  // parameter no region depends on), and every other vector of E is 0
  // there, so those are set aside. The other free columns outside Q (T)
  // carry the rest, W: the vectors whose T part c meets the conditions of
  // the pivots in Q (row i times c is 0), a small kernel; W is then c on T
  // and -R c at the pivots, and its reduced echelon form is E's other rows.
  std::vector<std::size_t> touched, untouched;  // T (as positions in F); e_f as it stands
  for (std::size_t f = 0; f < columns; ++f)
    if (!is_pivot[f] && !is_scaling[f]) {
      if (free_parts.is_touched(position[f]))
        touched.push_back(position[f]);
      else
        untouched.push_back(f);
    }
  std::vector<std::size_t> condition_of(rank, rank);  // each basis row's place among the conditions, else rank
  std::size_t conditions = 0;  // the basis rows whose pivot is in Q
  for (std::size_t i = 0; i < rank; ++i)
    if (is_scaling[pivots[i]]) condition_of[i] = conditions++;
  poll_stop();
  ModularMatrix combinations;  // the T parts c of W's basis, one per row
  if (conditions == 0) {
    combinations = ModularMatrix(touched.size(), touched.size());
    for (std::size_t t = 0; t < touched.size(); ++t) combinations(t, t) = 1;
  } else if (!touched.empty()) {
    // The conditions with their columns reversed (kernel_of_reversed_rows).
    ModularMatrix reversed_conditions(conditions, touched.size());
    for (std::size_t t = 0; t < touched.size(); ++t)
      for (std::size_t e = free_parts.first[touched[t]]; e < free_parts.first[touched[t] + 1]; ++e)
        if (const auto [i, value] = free_parts.entries[e]; condition_of[i] < rank)
          reversed_conditions(condition_of[i], touched.size() - 1 - t) = value;
    combinations = kernel_of_reversed_rows(reversed_conditions, prime);
  }
  const std::size_t dimension = combinations.rows();
  // W at the pivots: -(R_T c) for each c (sparse_row_products); 0 at Q (at
  // a pivot in Q by its condition) and at the untouched columns.
  const std::vector<std::vector<std::pair<std::size_t, std::uint64_t>>> at_pivots =
      sparse_row_products(combinations, rank, free_parts, touched, prime);
  // W's rows by their nonzero entries (columns increasing): c on T, -(R_T c)
  // at the pivots outside Q.
  std::vector<SparseModularRows::Row> spanning(dimension);
  for (std::size_t a = 0; a < dimension; ++a) {
    SparseModularRows::Row& row = spanning[a];
    for (std::size_t t = 0; t < touched.size(); ++t)
      if (combinations(a, t) != 0) row.emplace_back(free[touched[t]], combinations(a, t));
    for (const auto& [i, value] : at_pivots[a])
      if (!is_scaling[pivots[i]]) row.emplace_back(pivots[i], prime - value);
    std::sort(row.begin(), row.end());
  }
  // W's canonical basis, merged by leading column with the unit rows (W is
  // 0 at their columns, they are 0 elsewhere).
  std::vector<SparseModularRows::Row> echelon = reduced_echelon_of_entries(std::move(spanning), prime);
  SparseModularRows extra{columns, {}};
  extra.rows.reserve(echelon.size() + untouched.size());
  std::size_t next_unit = 0;
  for (std::size_t r = 0; r <= echelon.size(); ++r) {
    const std::size_t lead = r < echelon.size() ? echelon[r].front().first : columns;
    for (; next_unit < untouched.size() && untouched[next_unit] < lead; ++next_unit)
      extra.rows.push_back({{untouched[next_unit], 1}});
    if (r == echelon.size()) break;
    extra.rows.push_back(std::move(echelon[r]));
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
