#include "lp/detail/exact_linear.hpp"

#include <utility>

namespace pleat::lp::detail {
namespace {

// Reduces m (and rhs, when given) to reduced row echelon form in place;
// returns the pivot column of each pivot row, in row order.
std::vector<std::size_t> reduce(RationalMatrix& m, RationalVector* rhs) {
  std::vector<std::size_t> pivots;
  std::size_t row = 0;
  Rational factor;
  for (std::size_t col = 0; col < m.cols() && row < m.rows(); ++col) {
    std::size_t found = row;
    while (found < m.rows() && sgn(m(found, col)) == 0) ++found;
    if (found == m.rows()) continue;
    if (found != row) {
      for (std::size_t c = col; c < m.cols(); ++c) std::swap(m(found, c), m(row, c));
      if (rhs) std::swap((*rhs)[found], (*rhs)[row]);
    }
    const Rational inverse = 1 / m(row, col);
    for (std::size_t c = col; c < m.cols(); ++c) m(row, c) *= inverse;
    if (rhs) (*rhs)[row] *= inverse;
    for (std::size_t r = 0; r < m.rows(); ++r) {
      if (r == row || sgn(m(r, col)) == 0) continue;
      factor = m(r, col);
      for (std::size_t c = col; c < m.cols(); ++c) m(r, c) -= factor * m(row, c);
      if (rhs) (*rhs)[r] -= factor * (*rhs)[row];
    }
    pivots.push_back(col);
    ++row;
  }
  return pivots;
}

}  // namespace

std::optional<RationalVector> solve_exact(RationalMatrix m, RationalVector rhs) {
  if (rhs.size() != m.rows()) throw usage_error("solve_exact: dimension mismatch");
  const std::vector<std::size_t> pivots = reduce(m, &rhs);
  for (std::size_t r = pivots.size(); r < m.rows(); ++r)
    if (sgn(rhs[r]) != 0) return std::nullopt;
  RationalVector solution(m.cols(), Rational(0));
  for (std::size_t r = 0; r < pivots.size(); ++r) solution[pivots[r]] = rhs[r];
  return solution;
}

std::optional<RationalVector> solve_unique(RationalMatrix m, RationalVector rhs) {
  if (rhs.size() != m.rows()) throw usage_error("solve_unique: dimension mismatch");
  const std::vector<std::size_t> pivots = reduce(m, &rhs);
  if (pivots.size() != m.cols()) return std::nullopt;
  for (std::size_t r = pivots.size(); r < m.rows(); ++r)
    if (sgn(rhs[r]) != 0) return std::nullopt;
  RationalVector solution(m.cols(), Rational(0));
  for (std::size_t r = 0; r < pivots.size(); ++r) solution[pivots[r]] = rhs[r];
  return solution;
}

std::size_t exact_rank(RationalMatrix m) { return reduce(m, nullptr).size(); }

std::optional<RationalVector> null_vector(RationalMatrix m) {
  const std::vector<std::size_t> pivots = reduce(m, nullptr);
  std::vector<bool> is_pivot(m.cols(), false);
  for (std::size_t p : pivots) is_pivot[p] = true;
  for (std::size_t free = 0; free < m.cols(); ++free) {
    if (is_pivot[free]) continue;
    // Set the free unknown to 1, the other free ones to 0, read off the pivots.
    RationalVector z(m.cols(), Rational(0));
    z[free] = 1;
    for (std::size_t r = 0; r < pivots.size(); ++r) z[pivots[r]] = -m(r, free);
    return z;
  }
  return std::nullopt;
}

}  // namespace pleat::lp::detail
