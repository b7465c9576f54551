// A cell's constraints as integer rows (each row times the least common
// multiple of its denominators: the same half-space), and the exact null
// vector of a few such rows by minors. Used by the exact steps that must not
// pay a gcd per operation (lp/detail/oracle_line.cpp, oracle_support.cpp).
// Every result here is exact.
#pragma once

#include "core/rational.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <vector>

namespace pleat::lp::detail {

// a . x + c > 0 with integer a and c: a positive multiple of a rational row.
struct IntegerRow {
  std::vector<Integer> normal;
  Integer offset;
  Integer scale = 1;  // this row is scale times the caller's row (scale > 0)
};

IntegerRow integer_row(const Constraint& constraint);
std::vector<IntegerRow> integer_rows(const Polyhedron& cell);

// One cell's integer rows, computed on first use and kept for the cell's other
// exact queries (a region's facet classification asks up to one per constraint).
// The cell must outlive this value and not change.
class LazyIntegerRows {
 public:
  explicit LazyIntegerRows(const Polyhedron& cell) : cell_(&cell) {}
  const std::vector<IntegerRow>& get() {
    if (!rows_) rows_ = integer_rows(*cell_);
    return *rows_;
  }

 private:
  const Polyhedron* cell_;
  std::optional<std::vector<IntegerRow>> rows_;
};

// The null space of the d x n integer matrix whose columns are `columns`
// (each of length d), when it is small enough to decide by minors
// (n <= d + 1 <= 4): one spanning vector when it is a line (entries are
// signed (n-1) x (n-1) minors), none when it is {0}. `undecided` when the null
// space has dimension 2 or more, or the sizes are out of range: callers then
// use general elimination.
struct SmallNullSpace {
  enum class Kind { line, none, undecided } kind = Kind::undecided;
  std::vector<Integer> vector;  // kind == line: nonzero, M vector = 0
};
SmallNullSpace small_null_space(const std::vector<const std::vector<Integer>*>& columns);

}  // namespace pleat::lp::detail
