#include "enumerate/detail/span_proof.hpp"

#include "core/detail/flint_matrix.hpp"
#include "core/stop.hpp"
#include "enumerate/detail/padic_solve.hpp"

#include <algorithm>

namespace pleat::detail {
namespace {

// The columns of K_P transposed: A with A Y^T = R_P^T is K_P^T.
void set_transposed_square(FmpzMatrix& square, const std::vector<IntegerRow>& kept,
                           const std::vector<std::size_t>& pivots) {
  for (std::size_t i = 0; i < kept.size(); ++i)
    for (std::size_t j = 0; j < pivots.size(); ++j)
      fmpz_set_mpz(square.entry(j, i), kept[i][pivots[j]].get_mpz_t());
}

// The solved coefficients as integers: column j of the solution times the
// lcm d_j of its denominators, transposed (row j: the combination of the
// kept rows that gives d_j others[first + j]).
void set_integer_combinations(const RationalMatrix& solution, FmpzMatrix& combination, std::vector<Integer>& dens) {
  for (std::size_t j = 0; j < solution.cols(); ++j) {
    Integer den = 1;
    for (std::size_t i = 0; i < solution.rows(); ++i)
      mpz_lcm(den.get_mpz_t(), den.get_mpz_t(), solution(i, j).get_den_mpz_t());
    Integer scaled;
    for (std::size_t i = 0; i < solution.rows(); ++i) {
      mpz_divexact(scaled.get_mpz_t(), den.get_mpz_t(), solution(i, j).get_den_mpz_t());
      scaled *= solution(i, j).get_num();
      fmpz_set_mpz(combination.entry(j, i), scaled.get_mpz_t());
    }
    dens.push_back(std::move(den));
  }
}

// Whether d_j others[first + j] = combination row j times K on every
// column, for the chunk's rows: integer products of 256 columns of K at a
// time, polling the stop between them (the whole product took 0.5 s on
// 2,30,30,30,1 with 300 points: 32 x 589 times 589 x 1981).
bool chunk_in_span(FmpzMatrix& kept_matrix, FmpzMatrix& combination, const std::vector<Integer>& dens,
                   const std::vector<IntegerRow>& others, std::size_t first) {
  const slong rank = fmpz_mat_nrows(kept_matrix.get()), columns = fmpz_mat_ncols(kept_matrix.get());
  constexpr slong block = 256;
  Integer expected;
  FmpzValue value;
  for (slong begin = 0; begin < columns; begin += block) {
    poll_stop();
    const slong end = std::min(columns, begin + block);
    fmpz_mat_t window;
    fmpz_mat_window_init(window, kept_matrix.get(), 0, begin, rank, end);
    FmpzMatrix product(dens.size(), static_cast<std::size_t>(end - begin));
    fmpz_mat_mul(product.get(), combination.get(), window);
    fmpz_mat_window_clear(window);
    for (std::size_t j = 0; j < dens.size(); ++j)
      for (slong c = begin; c < end; ++c) {
        expected = others[first + j][static_cast<std::size_t>(c)] * dens[j];
        fmpz_set_mpz(value.get(), expected.get_mpz_t());
        if (!fmpz_equal(value.get(), product.entry(j, static_cast<std::size_t>(c - begin)))) return false;
      }
  }
  return true;
}

}  // namespace

SpanProof::SpanProof(const std::vector<IntegerRow>& kept, const std::vector<std::size_t>& pivots,
                     SquareSolver* kernel)
    : kept_(kept), pivots_(pivots), square_(kept.size(), kept.size()), solver_(square_.get(), kernel) {
  set_transposed_square(square_, kept, pivots);
}

std::optional<std::size_t> SpanProof::probe_digits(const IntegerRow& row, std::size_t most_digits) {
  if (kept_.empty()) return 0;
  FmpzMatrix right(kept_.size(), 1);
  for (std::size_t p = 0; p < kept_.size(); ++p) fmpz_set_mpz(right.entry(p, 0), row[pivots_[p]].get_mpz_t());
  (void)solver_.solve(right.get(), most_digits);
  if (solver_.ran_out()) return std::nullopt;
  return solver_.digits();
}

bool SpanProof::prove(const std::vector<IntegerRow>& others, const SpanProgress& on_chunk, std::size_t chunk) {
  const std::vector<IntegerRow>& kept = kept_;
  const std::vector<std::size_t>& pivots = pivots_;
  if (others.empty()) return true;
  if (kept.empty()) return std::all_of(others.begin(), others.end(), [](const IntegerRow& row) {
      return std::all_of(row.begin(), row.end(), [](const Integer& value) { return sgn(value) == 0; });
    });
  const std::size_t rank = kept.size();
  const std::size_t columns = kept[0].size();
  FmpzMatrix kept_matrix(rank, columns);
  for (std::size_t i = 0; i < rank; ++i)
    for (std::size_t c = 0; c < columns; ++c) fmpz_set_mpz(kept_matrix.entry(i, c), kept[i][c].get_mpz_t());
  chunk = std::max<std::size_t>(chunk, 1);
  for (std::size_t first = 0; first < others.size(); first += chunk) {
    if (on_chunk && !on_chunk(first, others.size())) return false;
    poll_stop();
    const std::size_t width = std::min(chunk, others.size() - first);
    FmpzMatrix right(rank, width);
    for (std::size_t j = 0; j < width; ++j)
      for (std::size_t p = 0; p < rank; ++p)
        fmpz_set_mpz(right.entry(p, j), others[first + j][pivots[p]].get_mpz_t());
    const std::optional<RationalMatrix> solution = solver_.solve(right.get());  // one LU for every chunk
    if (!solution) return false;
    FmpzMatrix combination(width, rank);
    std::vector<Integer> dens;
    set_integer_combinations(*solution, combination, dens);
    // d_j others = combination K with d_j = 0 would prove nothing.
    if (std::any_of(dens.begin(), dens.end(), [](const Integer& den) { return sgn(den) == 0; })) return false;
    if (!chunk_in_span(kept_matrix, combination, dens, others, first)) return false;
  }
  return true;
}

bool rows_in_span(const std::vector<IntegerRow>& kept, const std::vector<std::size_t>& pivots,
                  const std::vector<IntegerRow>& others, const SpanProgress& on_chunk, std::size_t chunk) {
  return SpanProof(kept, pivots).prove(others, on_chunk, chunk);
}

}  // namespace pleat::detail
