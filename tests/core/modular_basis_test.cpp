// ModularRowBasis on sparse rows, as a walk's are (most entries zero, the
// kept rows too): its sparse paths (clearing kept rows at the new row's
// nonzeros only, residuals summing only the kept rows' nonzero products,
// and the lists of nonzero positions both keep up to date) against a plain
// dense elimination written out here.
#include "core/rank.hpp"

#include <flint/ulong_extras.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <random>
#include <vector>

namespace pleat {
namespace {

__extension__ typedef unsigned __int128 Wide;

// The basis add_row keeps, by the book: full-width rows in reduced echelon
// form, each new row reduced against every kept row, its pivot the smallest
// nonzero column, then cleared from the kept rows; every product reduced
// with %.
struct PlainBasis {
  std::uint64_t prime;
  std::size_t columns;
  std::vector<ModularVector> rows;
  std::vector<std::size_t> pivots;

  std::uint64_t multiply(std::uint64_t a, std::uint64_t b) const {
    return static_cast<std::uint64_t>(static_cast<Wide>(a) * b % prime);
  }
  void subtract(ModularVector& target, const ModularVector& source, std::uint64_t factor) const {
    for (std::size_t c = 0; c < columns; ++c)
      target[c] = (target[c] + prime - multiply(factor, source[c])) % prime;
  }
  ModularVector reduce(ModularVector row) const {
    for (std::size_t i = 0; i < rows.size(); ++i)
      if (const std::uint64_t factor = row[pivots[i]]; factor != 0) subtract(row, rows[i], factor);
    return row;
  }
  bool add(const ModularVector& input) {
    ModularVector row = reduce(input);
    std::size_t pivot = 0;
    while (pivot < columns && row[pivot] == 0) ++pivot;
    if (pivot == columns) return false;
    const std::uint64_t inverse = n_invmod(row[pivot], prime);
    for (std::uint64_t& value : row) value = multiply(value, inverse);
    for (ModularVector& kept : rows)
      if (const std::uint64_t factor = kept[pivot]; factor != 0) subtract(kept, row, factor);
    rows.push_back(row);
    pivots.push_back(pivot);
    return true;
  }
  ModularMatrix matrix() const {
    ModularMatrix out(rows.size(), columns);
    for (std::size_t i = 0; i < rows.size(); ++i)
      for (std::size_t c = 0; c < columns; ++c) out(i, c) = rows[i][c];
    return out;
  }
};

// Rows over `groups` groups of `width` columns, each row nonzero in one group
// or two (so the echelon rows stay sparse: a few groups' columns at most),
// about half of those entries nonzero and a quarter of them p - 1 (the
// largest products); every third row a combination of two earlier rows (in
// the span, unless a group is full). With `dense`, rows count / 3 and
// 2 count / 3 are dense instead (every entry nonzero): such a row is kept
// unlisted, and so is a kept row it fills in, among listed sparse ones.
std::vector<ModularVector> sparse_rows(std::mt19937_64& random, std::uint64_t prime, std::size_t count,
                                       std::size_t groups, std::size_t width, bool dense) {
  const std::size_t columns = groups * width;
  std::vector<ModularVector> rows;
  const auto residue = [&] { return random() % 4 == 0 ? prime - 1 : 1 + random() % (prime - 1); };
  while (rows.size() < count) {
    ModularVector row(columns, 0);
    if (dense && (rows.size() == count / 3 || rows.size() == 2 * count / 3)) {
      for (std::uint64_t& value : row) value = residue();
    } else if (rows.size() >= 2 && rows.size() % 3 == 2) {
      const ModularVector& a = rows[random() % rows.size()];
      const ModularVector& b = rows[random() % rows.size()];
      const std::uint64_t s = residue(), t = residue();
      for (std::size_t c = 0; c < columns; ++c)
        row[c] = static_cast<std::uint64_t>((static_cast<Wide>(s) * a[c] + static_cast<Wide>(t) * b[c]) % prime);
    } else {
      const std::size_t first = random() % groups, second = random() % 4 == 0 ? random() % groups : first;
      for (std::size_t g : {first, second})
        for (std::size_t c = g * width; c < (g + 1) * width; ++c)
          if (random() % 2 == 0) row[c] = residue();
    }
    rows.push_back(std::move(row));
  }
  return rows;
}

// After every add (one row at a time, or a batch through add_rows; with a
// couple of dense rows among the sparse ones, or none): the
// same answer, pivots and echelon rows as the plain elimination, and a
// screen and contains that stop exactly the span. A residual that skipped a
// nonzero product (a stale list of nonzero positions) or a kept row left
// uncleared at a nonzero of the new row would differ from it.
// Each listed kept row's nonzero_positions (the read-off reads only those:
// enumerate/detail/extra_directions.cpp) are exactly its free part's
// nonzero entries, once each. Returns how many rows were listed.
std::size_t expect_exact_nonzero_lists(const ModularRowBasis& basis, std::size_t after) {
  std::size_t listed = 0;
  for (std::size_t i = 0; i < basis.rank(); ++i) {
    const std::vector<std::size_t>* positions = basis.nonzero_positions(i);
    if (positions == nullptr) continue;
    ++listed;
    const ModularVector& part = basis.free_part(i);
    std::vector<std::size_t> nonzero;
    for (std::size_t q = 0; q < part.size(); ++q)
      if (part[q] != 0) nonzero.push_back(q);
    std::vector<std::size_t> sorted = *positions;
    std::sort(sorted.begin(), sorted.end());
    EXPECT_EQ(sorted, nonzero) << "kept row " << i << " after row " << after;
  }
  return listed;
}

TEST(ModularRowBasis, SparseRowsGiveThePlainEliminationsBasis) {
  std::mt19937_64 random(83);
  std::size_t listed = 0;  // kept rows seen listed, over every step
  for (std::uint64_t prime : {primary_prime(), screening_prime(), std::uint64_t{1000003}}) {
    for (int trial = 0; trial < 4; ++trial) {
      const std::size_t groups = 10 + random() % 6, width = 6 + random() % 6;
      const std::vector<ModularVector> rows =
          sparse_rows(random, prime, 3 * groups * width / 2, groups, width, trial >= 2);
      ModularRowBasis basis(prime, groups * width);
      PlainBasis plain{prime, groups * width, {}, {}};
      std::size_t r = 0;
      while (r < rows.size()) {
        if (trial % 2 == 1 && r % 40 == 20) {  // a batch now and then, as certify's points add theirs
          const std::size_t count = std::min<std::size_t>(rows.size() - r, 1 + random() % 60);
          const std::vector<ModularVector> batch(rows.begin() + static_cast<std::ptrdiff_t>(r),
                                                 rows.begin() + static_cast<std::ptrdiff_t>(r + count));
          std::vector<bool> kept;
          ASSERT_EQ(basis.add_rows(batch, groups * width, kept), count);
          for (std::size_t k = 0; k < count; ++k) EXPECT_EQ(kept[k], plain.add(rows[r + k])) << "row " << r + k;
          r += count;
        } else {
          const bool outside = !basis.contains(rows[r]);
          EXPECT_EQ(basis.passes_screen(rows[r]), outside) << "row " << r;
          const bool rose = plain.add(rows[r]);
          EXPECT_EQ(outside, rose) << "row " << r;
          EXPECT_EQ(basis.add_row(rows[r]), rose) << "row " << r;
          ++r;
        }
        ASSERT_EQ(basis.pivot_columns(), plain.pivots) << "after row " << r;
        ASSERT_EQ(basis.rows(), plain.matrix()) << "after row " << r;
        listed += expect_exact_nonzero_lists(basis, r);
      }
      EXPECT_GT(basis.rank(), groups * width / 2);
      for (const ModularVector& row : rows) {
        EXPECT_TRUE(basis.contains(row));
        EXPECT_FALSE(basis.passes_screen(row));
      }
      // A row outside the span: 1 at a free column.
      if (basis.rank() < basis.columns()) {
        ModularVector unit(basis.columns(), 0);
        unit[basis.free_columns().front()] = 1;
        EXPECT_FALSE(basis.contains(unit));
        EXPECT_TRUE(basis.passes_screen(unit));
      }
    }
  }
  EXPECT_GT(listed, 0u);  // the lists were compared
}

}  // namespace
}  // namespace pleat
