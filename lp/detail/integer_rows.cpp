// Integer rows of a cell and small null spaces by minors (integer_rows.hpp).
#include "lp/detail/integer_rows.hpp"

namespace pleat::lp::detail {

IntegerRow integer_row(const Constraint& constraint) {
  IntegerRow row;
  Integer& scale = row.scale;
  scale = constraint.offset.get_den();
  for (const Rational& value : constraint.normal) mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), value.get_den_mpz_t());
  row.normal.resize(constraint.normal.size());
  for (std::size_t k = 0; k < constraint.normal.size(); ++k)
    row.normal[k] = constraint.normal[k].get_num() * (scale / constraint.normal[k].get_den());
  row.offset = constraint.offset.get_num() * (scale / constraint.offset.get_den());
  return row;
}

std::vector<IntegerRow> integer_rows(const Polyhedron& cell) {
  std::vector<IntegerRow> rows;
  rows.reserve(cell.constraints.size());
  for (const Constraint& constraint : cell.constraints) rows.push_back(integer_row(constraint));
  return rows;
}

namespace {

// The determinant of the square matrix M[rows, cols] (size 0 to 3), M given by columns.
Integer minor(const std::vector<const std::vector<Integer>*>& columns, const std::vector<std::size_t>& rows,
              const std::vector<std::size_t>& cols) {
  const auto at = [&](std::size_t r, std::size_t c) -> const Integer& { return (*columns[cols[c]])[rows[r]]; };
  switch (rows.size()) {
    case 0:
      return Integer(1);
    case 1:
      return at(0, 0);
    case 2:
      return at(0, 0) * at(1, 1) - at(0, 1) * at(1, 0);
    default:
      return at(0, 0) * (at(1, 1) * at(2, 2) - at(1, 2) * at(2, 1)) -
             at(0, 1) * (at(1, 0) * at(2, 2) - at(1, 2) * at(2, 0)) +
             at(0, 2) * (at(1, 0) * at(2, 1) - at(1, 1) * at(2, 0));
  }
}

// Every subset of {0..d-1} of size k, ascending, in lexicographic order.
std::vector<std::vector<std::size_t>> subsets(std::size_t d, std::size_t k) {
  std::vector<std::vector<std::size_t>> all;
  std::vector<std::size_t> current;
  const auto extend = [&](auto&& self, std::size_t from) -> void {
    if (current.size() == k) {
      all.push_back(current);
      return;
    }
    for (std::size_t i = from; i < d; ++i) {
      current.push_back(i);
      self(self, i + 1);
      current.pop_back();
    }
  };
  extend(extend, 0);
  return all;
}

}  // namespace

SmallNullSpace small_null_space(const std::vector<const std::vector<Integer>*>& columns) {
  const std::size_t n = columns.size();
  if (n == 0) return {};
  const std::size_t d = columns[0]->size();
  if (n > d + 1 || d > 3) return {};
  // If some n-1 rows of M are independent, the null space of those rows is the
  // line spanned by the signed minors (Cramer); M's null space lies inside it,
  // so it is that line when the vector solves the other rows too, else {0}.
  // If no n-1 rows are independent, rank M < n - 1: the null space is a plane or more.
  Integer term;
  for (const std::vector<std::size_t>& rows : subsets(d, n - 1)) {
    std::vector<Integer> vector(n);
    bool is_zero = true;
    for (std::size_t c = 0; c < n; ++c) {
      std::vector<std::size_t> others;
      for (std::size_t o = 0; o < n; ++o)
        if (o != c) others.push_back(o);
      vector[c] = minor(columns, rows, others);
      if (c % 2 == 1) vector[c] = -vector[c];
      if (sgn(vector[c]) != 0) is_zero = false;
    }
    if (is_zero) continue;
    for (std::size_t r = 0; r < d; ++r) {
      Integer sum = 0;
      for (std::size_t c = 0; c < n; ++c) {
        mpz_mul(term.get_mpz_t(), (*columns[c])[r].get_mpz_t(), vector[c].get_mpz_t());
        sum += term;
      }
      if (sgn(sum) != 0) return SmallNullSpace{SmallNullSpace::Kind::none, {}};
    }
    return SmallNullSpace{SmallNullSpace::Kind::line, std::move(vector)};
  }
  return {};
}

}  // namespace pleat::lp::detail
