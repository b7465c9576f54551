// Row generation for the filter LPs: a GLPK LP over a working subset of the
// cell's constraints. After each solve the constraints outside the subset are
// evaluated in double at the optimum and the most violated are added, until
// none is; the subset LP's optimum is then optimal for the LP over all rows.
// Most constraints of a region are far from it, so the working subset stays
// near the facet count and every solve stays small. Proposals only.
#pragma once

#include "lp/detail/double_rows.hpp"
#include "lp/detail/glpk_lp.hpp"

#include <cstddef>
#include <functional>
#include <vector>

namespace pleat::lp::detail {

class WorkingRows {
 public:
  // LP rows [0, fixed_rows) are the caller's; constraint i enters as the row
  //   â_i . x + radius_coefficient * t >= -ĉ_i
  // over columns x (dim of them) and, when radius_coefficient != 0, t (column dim).
  // is_homogeneous drops the offsets (rows a_i . x >= 0, for recession cones).
  WorkingRows(const DoubleRows& rows, std::size_t fixed_rows, bool has_radius, bool is_maximise,
              bool is_homogeneous = false);

  GlpkLP& lp() { return lp_; }
  const GlpkLP& lp() const { return lp_; }
  bool contains(std::size_t constraint) const { return lp_row_[constraint] != kAbsent; }
  std::size_t lp_row(std::size_t constraint) const { return lp_row_[constraint]; }
  void add(std::size_t constraint);
  // Adds the `count` constraints with the smallest double slack at point.
  void add_nearest(const std::vector<double>& point, std::size_t count);
  void add_all();
  const std::vector<std::size_t>& constraints() const { return constraint_; }

  // Solves, adding violated constraints (never those is_excluded) until the
  // optimum satisfies all of them. Leaves excluded constraints' rows alone.
  DoubleStatus solve(const std::function<bool(std::size_t)>& is_excluded);

  double column_value(std::size_t column) const { return lp_.column_value(column); }
  // Constraints whose rows are nonbasic at their bound: the dual's support.
  std::vector<std::size_t> active_constraints() const;

  static constexpr std::size_t kAbsent = static_cast<std::size_t>(-1);

 private:
  double offset(std::size_t constraint) const { return is_homogeneous_ ? 0.0 : rows_.offsets[constraint]; }

  const DoubleRows& rows_;
  bool has_radius_;
  bool is_homogeneous_;
  GlpkLP lp_;
  std::vector<std::size_t> lp_row_;      // per constraint, or kAbsent
  std::vector<std::size_t> constraint_;  // per LP row beyond the fixed ones
  std::size_t fixed_rows_;
};

}  // namespace pleat::lp::detail
