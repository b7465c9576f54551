// Query 3: boundedness (lp/oracle.hpp): in 2-D from the normals' angular gaps,
// else LP3's basis proposes a recession direction or Stiemke multipliers, proved exactly.
#include "lp/oracle.hpp"

#include "core/errors.hpp"
#include "core/filtered_sign.hpp"
#include "core/stop.hpp"
#include "lp/checker.hpp"
#include "lp/detail/double_rows.hpp"
#include "lp/detail/exact_linear.hpp"
#include "lp/detail/exact_lp.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/detail/glpk_lp.hpp"
#include "lp/detail/oracle_parts.hpp"
#include "lp/detail/working_rows.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <optional>
#include <stdexcept>
#include <string>

namespace pleat::lp {
namespace {

using namespace detail;

// Boundedness of a plane cell without an LP. The closure is bounded iff its
// normals leave no angular gap of pi or more. Proposal (double): sort the
// normals by angle; a gap >= pi before normal b proposes the recession
// direction d = (-b_1, b_0) (b turned counter-clockwise by a right angle:
// a_i . d >= 0 for every normal within pi counter-clockwise of b); otherwise three normals around the circle, each within pi of the next,
// propose Stiemke multipliers y = (det(a2,a3), det(a3,a1), det(a1,a2)). Both
// are checked exactly (filtered signs, exact where undecided); nullopt when
// the proposal fails (the LP path decides then).
std::optional<BoundednessVerdict> decide_boundedness_in_plane(const Polyhedron& cell) {
  const std::size_t m = cell.constraints.size();
  if (m == 0) return std::nullopt;
  const CellImages images(cell);
  std::vector<std::pair<double, std::size_t>> angles;
  angles.reserve(m);
  for (std::size_t i = 0; i < m; ++i) {
    const double* a = images.row(i);
    const double angle = std::atan2(a[1], a[0]);
    if (!std::isfinite(angle)) return std::nullopt;
    angles.emplace_back(angle, i);
  }
  const auto proposal = detail::propose_plane_boundedness(std::move(angles));
  if (!proposal) return std::nullopt;
  if (proposal->after_gap) {
    // All normals lie within pi counter-clockwise of the normal b after the
    // gap, so d = b turned counter-clockwise by a right angle has b_i . d >= 0.
    const Constraint& after_gap = cell.constraints[*proposal->after_gap];
    RecessionDirection direction{RationalVector{-after_gap.normal[1], after_gap.normal[0]}};
    const double d[2] = {filter_image(direction.direction[0]), filter_image(direction.direction[1])};
    for (std::size_t i = 0; i < m; ++i) {
      std::optional<int> sign = filtered_affine_sign(images.row(i), d, 2, 0.0);
      if (!sign) sign = sgn(cell.constraints[i].normal[0] * direction.direction[0] +
                            cell.constraints[i].normal[1] * direction.direction[1]);
      if (*sign < 0) return std::nullopt;
    }
    return BoundednessVerdict{std::move(direction)};
  }
  const std::array<std::size_t, 3>& rows = proposal->around;
  const auto det = [&](std::size_t p, std::size_t q) {
    const RationalVector& a = cell.constraints[p].normal;
    const RationalVector& b = cell.constraints[q].normal;
    return Rational(a[0] * b[1] - a[1] * b[0]);
  };
  // y_1 a_1 + y_2 a_2 + y_3 a_3 = 0 for y = (det(a2,a3), det(a3,a1), det(a1,a2)) (Cramer).
  BoundednessCertificate certificate{RationalVector(m)};
  std::array<Rational, 3> y{det(rows[1], rows[2]), det(rows[2], rows[0]), det(rows[0], rows[1])};
  for (std::size_t k = 0; k < 3; ++k) {
    if (sgn(y[k]) <= 0) return std::nullopt;  // counter-clockwise order: all > 0
    certificate.multipliers[rows[k]] = std::move(y[k]);
  }
  return BoundednessVerdict{std::move(certificate)};
}

// Recession direction from LP3's optimal basis: the active rows (a_i . d = 0)
// and the columns at a bound (d_k = +-1) determine d; solve exactly.
std::optional<RecessionDirection> direction_from_basis(const Polyhedron& cell, const WorkingRows& working) {
  const std::size_t n = cell.dim;
  RationalMatrix system(n, n);
  RationalVector rhs(n, Rational(0));
  std::size_t equations = 0;
  for (std::size_t i : working.active_constraints()) {
    if (equations == n) break;
    system.set_row(equations++, cell.constraints[i].normal);
  }
  for (std::size_t k = 0; k < n && equations < n; ++k) {
    const BasisStatus status = working.lp().column_status(k);
    if (status != BasisStatus::at_lower && status != BasisStatus::at_upper) continue;
    system(equations, k) = 1;
    rhs[equations++] = status == BasisStatus::at_upper ? 1 : -1;
  }
  if (equations != n) return std::nullopt;
  std::optional<RationalVector> d = detail::solve_unique(std::move(system), std::move(rhs));
  if (!d) return std::nullopt;
  RecessionDirection direction{std::move(*d)};
  if (!check_recession_direction(cell, direction)) return std::nullopt;
  return direction;
}

// Stiemke multipliers from LP3's dual at d = 0: sum_i (1 + y_i) â_i = 0, y >= 0
// on the n active rows S. Exactly: with exact weights u_i ~ the scaling of row
// i, solve sum_{s in S} z_s a_s = -sum_i u_i a_i (a_S square, nonsingular),
// then w = u + z must be > 0 everywhere; rank(a_S) = n comes with the solve.
std::optional<BoundednessCertificate> stiemke_from_basis(const Polyhedron& cell, const DoubleRows& rows,
                                                         const WorkingRows& working) {
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  const std::vector<std::size_t> support = working.active_constraints();
  if (support.size() != n) return std::nullopt;
  RationalVector weights(m);
  for (std::size_t i = 0; i < m; ++i) weights[i] = rows.exact_weight(i);
  RationalVector rhs = detail::weighted_normal_sum(cell, weights);
  for (Rational& value : rhs) value = -value;
  RationalMatrix system(n, n);
  for (std::size_t s = 0; s < n; ++s)
    for (std::size_t k = 0; k < n; ++k) system(k, s) = cell.constraints[support[s]].normal[k];
  const std::optional<RationalVector> z = detail::solve_unique(std::move(system), std::move(rhs));
  if (!z) return std::nullopt;
  for (std::size_t s = 0; s < n; ++s) {
    weights[support[s]] += (*z)[s];
    if (sgn(weights[support[s]]) <= 0) return std::nullopt;
  }
  return BoundednessCertificate{std::move(weights)};
}

// A lineality direction proposed in double (row space of rank < n by Gram-Schmidt),
// made exact as a null vector of the independent rows and checked on all rows.
std::optional<std::optional<RecessionDirection>> lineality_filtered(const Polyhedron& cell, const DoubleRows& rows) {
  const std::size_t n = cell.dim;
  std::vector<std::vector<double>> basis;
  std::vector<std::size_t> independent;
  for (std::size_t i = 0; i < cell.constraints.size() && basis.size() < n; ++i) {
    std::vector<double> residual(rows.normal(i), rows.normal(i) + n);
    for (int pass = 0; pass < 2; ++pass)
      for (const std::vector<double>& b : basis) {
        double dot = 0.0;
        for (std::size_t k = 0; k < n; ++k) dot += residual[k] * b[k];
        for (std::size_t k = 0; k < n; ++k) residual[k] -= dot * b[k];
      }
    double norm = 0.0;
    for (double value : residual) norm += value * value;
    norm = std::sqrt(norm);
    if (norm < FilterTolerances::dependent_residual) continue;
    for (double& value : residual) value /= norm;
    basis.push_back(std::move(residual));
    independent.push_back(i);
  }
  if (independent.size() == n) return std::optional<RecessionDirection>();  // full rank: no lineality
  RationalMatrix system(independent.size(), n);
  for (std::size_t s = 0; s < independent.size(); ++s) system.set_row(s, cell.constraints[independent[s]].normal);
  std::optional<RationalVector> d = detail::null_vector(std::move(system));
  if (!d) return std::nullopt;
  RecessionDirection direction{std::move(*d)};
  if (!check_recession_direction(cell, direction)) return std::nullopt;  // wrong proposal
  return std::optional<RecessionDirection>(std::move(direction));
}

std::optional<BoundednessVerdict> decide_boundedness_filtered(const Polyhedron& cell, const DoubleRows& rows,
                                                              double positive_slack) {
  const std::size_t n = cell.dim;
  const std::size_t m = cell.constraints.size();
  const std::optional<std::optional<RecessionDirection>> lineality = lineality_filtered(cell, rows);
  if (!lineality) return std::nullopt;
  if (*lineality) return BoundednessVerdict{**lineality};
  // LP3 (GLPK), variables d:
  //   maximise g . d, g = sum_i â_i,  subject to  â_i . d >= 0 (every i, by row
  //   generation, starting from the rows most opposed to g),  -1 <= d_k <= 1.
  // With rank n, a positive optimum gives a recession direction; a zero
  // optimum at d = 0 has the dual sum_i (1 + y_i) â_i = 0, y >= 0: Stiemke
  // multipliers all >= 1.
  std::vector<double> objective(n, 0.0);
  for (std::size_t i = 0; i < m; ++i)
    for (std::size_t k = 0; k < n; ++k) objective[k] += rows.normal(i)[k];
  WorkingRows working(rows, 0, false, true, true);
  GlpkLP& lp = working.lp();
  for (std::size_t k = 0; k < n; ++k) {
    lp.set_column_bounds(k, -1.0, 1.0);
    lp.set_objective(k, objective[k]);
  }
  // Rows with the smallest slack at the point g: those most opposed to g.
  working.add_nearest(objective, 2 * n + 2);
  if (working.solve([](std::size_t) { return false; }) != DoubleStatus::optimal) return std::nullopt;
  if (lp.objective() > positive_slack) {
    if (std::optional<RecessionDirection> direction = direction_from_basis(cell, working)) return *direction;
    return std::nullopt;
  }
  if (std::optional<BoundednessCertificate> certificate = stiemke_from_basis(cell, rows, working))
    return std::move(*certificate);
  return std::nullopt;
}

}  // namespace

BoundednessVerdict Oracle::decide_boundedness(const Polyhedron& cell) {
  detail::require_well_formed(cell, "decide_boundedness");
  if (cell.dim == 2 && !state_->tolerances.exact_only) {
    // No LP in the plane: the normals' angles propose, filtered signs prove.
    if (std::optional<BoundednessVerdict> verdict = decide_boundedness_in_plane(cell)) {
      ++state_->counts.lp_queries;
      ++state_->counts.filter_settled;
      return std::move(*verdict);
    }
  }
  const Representatives reduced = reduce_to_representatives(cell);
  if (!reduced.has_duplicates) return decide_boundedness_of_distinct_rows(cell, reduced.rows);
  BoundednessVerdict verdict = decide_boundedness_of_distinct_rows(reduced.cell(), reduced.rows);
  if (auto* bounded = std::get_if<BoundednessCertificate>(&verdict))
    bounded->multipliers = expand_multipliers(bounded->multipliers, reduced, cell.constraints.size());
  return verdict;
}

BoundednessVerdict Oracle::decide_boundedness_of_distinct_rows(const Polyhedron& cell, const DoubleRows& rows) {
  ++state_->counts.lp_queries;
  if (cell.dim == 0) {
    ++state_->counts.filter_settled;
    return BoundednessCertificate{RationalVector(cell.constraints.size(), Rational(0))};
  }
  if (cell.constraints.empty()) {
    ++state_->counts.filter_settled;
    RationalVector direction(cell.dim, Rational(0));
    direction[0] = 1;
    return RecessionDirection{std::move(direction)};
  }
  if (!state_->tolerances.exact_only) {
    if (std::optional<BoundednessVerdict> verdict =
            decide_boundedness_filtered(cell, rows, state_->tolerances.positive_slack)) {
      ++state_->counts.filter_settled;
      return *verdict;
    }
  }
  ++state_->counts.exact_fallbacks;
  return decide_boundedness_exactly(cell);
}

}  // namespace pleat::lp
