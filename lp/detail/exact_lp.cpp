#include "lp/detail/exact_lp.hpp"

#include "lp/detail/cdd_handles.hpp"

#include <mutex>
#include <stdexcept>
#include <string>

namespace pleat::lp::detail {

std::mutex& cdd_mutex() {
  static std::mutex mutex;
  return mutex;
}

void ensure_cdd_constants() {
  static std::once_flag once;
  std::call_once(once, [] { dd_set_global_constants(); });
}

ExactSolution maximise_exact(std::size_t dim, const std::vector<ExactRow>& rows,
                             const RationalVector& objective) {
  if (rows.empty()) throw std::runtime_error("maximise_exact: no rows");
  const CddSession session;
  // cddlib's H-representation: row i is [b_i, A_i] meaning b_i + A_i x >= 0.
  CddMatrix matrix = make_cdd_matrix(rows.size(), dim + 1);
  matrix->representation = dd_Inequality;
  matrix->objective = dd_LPmax;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    mpq_set(matrix->matrix[i][0], rows[i].offset.get_mpq_t());
    for (std::size_t k = 0; k < dim; ++k)
      mpq_set(matrix->matrix[i][k + 1], rows[i].normal[k].get_mpq_t());
    if (rows[i].is_equality) set_addelem(matrix->linset, static_cast<long>(i + 1));
  }
  mpq_set_si(matrix->rowvec[0], 0, 1);
  for (std::size_t k = 0; k < dim; ++k) mpq_set(matrix->rowvec[k + 1], objective[k].get_mpq_t());

  dd_ErrorType error = dd_NoError;
  const CddLp lp(dd_Matrix2LP(matrix.get(), &error));
  matrix.reset();
  if (error != dd_NoError || lp == nullptr)
    throw std::runtime_error("cddlib: could not build the LP (error " + std::to_string(error) + ")");
  dd_LPSolve(lp.get(), dd_DualSimplex, &error);
  if (error != dd_NoError)
    throw std::runtime_error("cddlib: LP solve failed (error " + std::to_string(error) + ")");
  ExactSolution solution;
  switch (lp->LPS) {
    case dd_Optimal: {
      solution.status = ExactStatus::optimal;
      solution.value = Rational(lp->optvalue);
      solution.point.resize(dim);
      // sol[0] is the homogenising coordinate (1); x_k is sol[k + 1].
      for (std::size_t k = 0; k < dim; ++k) solution.point[k] = Rational(lp->sol[k + 1]);
      break;
    }
    case dd_Inconsistent:
    case dd_StrucInconsistent: solution.status = ExactStatus::infeasible; break;
    case dd_DualInconsistent:
    case dd_StrucDualInconsistent:
    case dd_Unbounded: solution.status = ExactStatus::unbounded; break;
    default: throw std::runtime_error("cddlib: LP left undecided");
  }
  return solution;
}

}  // namespace pleat::lp::detail
