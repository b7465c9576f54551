// The queries: GLPK proposes on the double image of the cell (detail/double_rows),
// exact arithmetic verifies each proposal (a point: every constraint evaluated
// exactly; multipliers: solved exactly on the support GLPK proposes, then signs
// and the offset inequality checked), and cddlib's exact LP decides whenever a
// proposal fails. Each LP the code builds is written out above it.
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

// Open cell via the filter; nullopt when the proposal does not verify. Then
// `active` holds the rows active at GLPK's optimum, if it found one: on a cell
// thinner than its tolerances, the rows that pinch it, likely facets, which the
// exact step tries first.
std::optional<CellVerdict> decide_open_cell_filtered(const Polyhedron& cell, const DoubleRows& rows,
                                                     double cap, double positive_slack,
                                                     std::vector<std::size_t>& active) {
  const std::size_t n = cell.dim;
  // LP0 (GLPK, rows scaled to 1-norm 1 as in DoubleRows), variables (x, t):
  //   maximise t  subject to  â_i . x - t >= -ĉ_i  (every i),  t <= cap,  x free.
  // t* > 0 is the radius of a max-norm ball inside the cell; t* <= 0 means
  // empty, and the rows active at the optimum carry the Gordan multipliers.
  // Solved by row generation (detail/working_rows.hpp), starting from the
  // rows nearest the origin.
  WorkingRows working(rows, 0, true, true);
  GlpkLP& lp = working.lp();
  lp.set_column_upper(n, cap);
  lp.set_objective(n, 1.0);
  working.add_nearest(std::vector<double>(n, 0.0), 2 * n + 2);
  if (working.solve([](std::size_t) { return false; }) != DoubleStatus::optimal) return std::nullopt;
  const double radius = lp.objective();
  std::vector<double> centre(n);
  for (std::size_t k = 0; k < n; ++k) centre[k] = lp.column_value(k);
  if (radius > positive_slack) {
    // A max-norm move below t*/16 keeps every scaled slack above 15 t*/16 and
    // the point well centred; tighter, then the double's own value, if GLPK's
    // tolerances ate the margin.
    for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
      RationalVector point = round_point(centre, radius * shrink);
      if (is_interior(cell, point)) return InteriorPoint{std::move(point)};
    }
    active = working.active_constraints();
    return std::nullopt;
  }
  active = working.active_constraints();
  if (std::optional<EmptinessCertificate> certificate = emptiness_on_support(cell, active))
    return std::move(*certificate);
  return std::nullopt;
}

// rows: the cell's double image (to_double_rows), built by the caller.
CellVerdict decide_open_cell_counted(const Polyhedron& cell, const DoubleRows& rows, const Rational& cap,
                                     const FilterTolerances& tolerances, QueryCounts& counts) {
  ++counts.lp_queries;
  if (cell.constraints.empty()) {
    ++counts.filter_settled;
    return InteriorPoint{RationalVector(cell.dim, Rational(0))};
  }
  const double cap_double = std::min(to_double(cap), 1e100);
  std::vector<std::size_t> active;
  if (rows.is_finite && !tolerances.exact_only) {
    if (std::optional<CellVerdict> verdict =
            decide_open_cell_filtered(cell, rows, cap_double, tolerances.positive_slack, active)) {
      ++counts.filter_settled;
      return *verdict;
    }
  }
  ++counts.exact_fallbacks;
  return decide_open_cell_exactly(cell, cap, active);
}

}  // namespace

QueryCounts& QueryCounts::operator+=(const QueryCounts& other) {
  lp_queries += other.lp_queries;
  filter_settled += other.filter_settled;
  exact_fallbacks += other.exact_fallbacks;
  return *this;
}

Oracle::Oracle(FilterTolerances tolerances) : state_(std::make_unique<State>()) {
  state_->tolerances = tolerances;
}
Oracle::~Oracle() = default;
Oracle::Oracle(Oracle&&) noexcept = default;
Oracle& Oracle::operator=(Oracle&&) noexcept = default;

const QueryCounts& Oracle::counts() const { return state_->counts; }

CellVerdict Oracle::decide_open_cell(const Polyhedron& cell) {
  return find_centre(cell, Rational(1));
}

CellVerdict Oracle::find_centre(const Polyhedron& cell, const Rational& radius_cap) {
  detail::require_well_formed(cell, "find_centre");
  if (sgn(radius_cap) <= 0) throw usage_error("find_centre: radius_cap must be > 0");
  const Representatives reduced = reduce_to_representatives(cell);
  CellVerdict verdict =
      decide_open_cell_counted(reduced.cell(), reduced.rows, radius_cap, state_->tolerances, state_->counts);
  if (!reduced.has_duplicates) return verdict;
  return expand(std::move(verdict), reduced, cell.constraints.size());
}

}  // namespace pleat::lp
