// The exact fallback of the lift of certify's extra directions (declared in
// kernel_lift.hpp): the kept rows over Q and every row of E from one exact
// solve of their square system.
#include "enumerate/detail/kernel_lift.hpp"

#include "core/detail/flint_matrix.hpp"
#include "core/jacobian.hpp"
#include "enumerate/detail/padic_solve.hpp"
#include "enumerate/detail/parallel_for.hpp"

#include <flint/fmpz.h>

#include <optional>
#include <vector>

namespace pleat::detail {
namespace {

// Row r of `rows` at the given columns as a primitive integer vector
// (primitive_integers).
void primitive_integer_row(const RationalMatrix& rows, std::size_t r, const std::vector<std::size_t>& columns,
                           std::vector<Integer>& out) {
  primitive_integers(columns.size(), [&](std::size_t q) -> const Rational& { return rows(r, columns[q]); }, out);
}

// The system sum_m K[chosen_i, unknowns_m] x_m = -K[chosen_i, target] over Q
// (one scale per row for both sides), or nullopt when it is singular:
// solve_square_exactly (padic_solve.hpp).
std::optional<std::vector<RationalVector>> solve_square(const RationalMatrix& rows,
                                                        const std::vector<std::size_t>& chosen,
                                                        const std::vector<std::size_t>& unknowns,
                                                        const std::vector<std::size_t>& targets) {
  const std::size_t n = unknowns.size();
  std::vector<std::size_t> columns = unknowns;
  columns.insert(columns.end(), targets.begin(), targets.end());
  FmpzMatrix square(n, n), right(n, targets.size());
  std::vector<Integer> integer_row;
  for (std::size_t i = 0; i < n; ++i) {
    poll_stop();
    primitive_integer_row(rows, chosen[i], columns, integer_row);
    for (std::size_t m = 0; m < n; ++m) fmpz_set_mpz(square.entry(i, m), integer_row[m].get_mpz_t());
    for (std::size_t t = 0; t < targets.size(); ++t) {
      fmpz_set_mpz(right.entry(i, t), integer_row[n + t].get_mpz_t());
      fmpz_neg(right.entry(i, t), right.entry(i, t));
    }
  }
  poll_stop();
  const std::optional<RationalMatrix> solution = solve_square_exactly(square.get(), right.get());
  if (!solution) return std::nullopt;
  std::vector<RationalVector> out(targets.size(), RationalVector(n));
  for (std::size_t m = 0; m < n; ++m)
    for (std::size_t t = 0; t < targets.size(); ++t) out[t][m] = (*solution)(m, t);
  return out;
}

}  // namespace

RationalMatrix exact_kept_rows(const Network& network, const std::vector<KeptRows>& kept, std::size_t rank,
                               unsigned threads) {
  std::vector<RationalMatrix> blocks(kept.size());
  parallel_for(kept.size(), threads, [&](std::size_t i) {
    poll_stop();
    blocks[i] = coefficient_blocks(network, kept[i].pattern);
  });
  RationalMatrix rows(rank, network.parametric_dimension());
  std::size_t r = 0;
  for (std::size_t i = 0; i < kept.size(); ++i)
    for (std::size_t row : kept[i].rows) rows.set_row(r++, blocks[i].row(row));
  return rows;
}

std::optional<RationalMatrix> solve_extra_directions(const RationalMatrix& rows,
                                                     const std::vector<std::size_t>& scaling_pivots,
                                                     const std::vector<std::size_t>& leading,
                                                     const std::vector<std::size_t>& wanted) {
  const std::size_t columns = rows.cols(), rank = rows.rows();
  std::vector<char> is_fixed(columns, 0);  // Q and L
  for (std::size_t c : scaling_pivots) is_fixed[c] = 1;
  for (std::size_t c : leading) is_fixed[c] = 1;
  std::vector<std::size_t> others;  // N
  for (std::size_t c = 0; c < columns; ++c)
    if (!is_fixed[c]) others.push_back(c);
  if (others.size() != rank) return std::nullopt;  // the shapes disagree: bounds only
  RationalMatrix extra(wanted.size(), columns);
  for (std::size_t w = 0; w < wanted.size(); ++w) extra(w, leading[wanted[w]]) = 1;
  // A zero right-hand side (a parameter no kept row depends on) has the
  // solution 0; the others are solved together.
  std::vector<std::size_t> solved, targets;  // positions in wanted, their columns
  for (std::size_t w = 0; w < wanted.size(); ++w)
    for (std::size_t r = 0; r < rank; ++r)
      if (rows(r, leading[wanted[w]]) != 0) {
        solved.push_back(w);
        targets.push_back(leading[wanted[w]]);
        break;
      }
  if (solved.empty()) return extra;
  std::vector<std::size_t> all_rows(rank);
  for (std::size_t r = 0; r < rank; ++r) all_rows[r] = r;
  const auto solution = solve_square(rows, all_rows, others, targets);
  if (!solution) return std::nullopt;
  for (std::size_t s = 0; s < solved.size(); ++s)
    for (std::size_t m = 0; m < rank; ++m) extra(solved[s], others[m]) = (*solution)[s][m];
  return extra;
}

}  // namespace pleat::detail
