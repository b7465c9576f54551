// The working tolerances of lp/'s double arithmetic, all in one place. They
// never decide anything: every double proposal they shape (a point, a
// support, a grouping, a direction) is proved exactly or dropped, and then the
// exact path answers. A tolerance can only cost speed (a proposal dropped, an
// exact comparison more), never a wrong verdict.
#pragma once

namespace pleat::lp {

struct FilterTolerances {
  // ---- per Oracle (lp::Oracle's constructor takes them) ----
  double positive_slack = 1e-9;  // a double LP value above this is "clearly > 0"
  // Skip every double proposal and let the exact solver answer each query (for
  // tests: the fast path must never be the only one tested). Same verdicts
  // (facets, emptiness, boundedness); points and multipliers may differ.
  bool exact_only = false;

  // ---- fixed, the same for every caller ----
  // Rows are scaled to 1-norm 1 first unless said otherwise, so these are
  // relative to the rows' size. Double's unit roundoff is 1.1e-16.

  // Screens for rows that are positive multiples of one another (the same
  // half-space; exact arithmetic decides): scaled normals of such rows agree
  // up to a few roundoffs, so a screen far wider than that misses no pair
  // (a missed pair would be two groups for one half-space), and a wider one
  // costs only exact comparisons. The Oracle's rows (rationals rounded once to
  // double, lp/detail/oracle_support.cpp) are screened wider than the fast
  // paths' rows (integers whose images are exact or within one roundoff,
  // lp/plane_cell.cpp, lp/space_cell.cpp), which are compared in a tight loop.
  static constexpr double oracle_multiple_screen = 1e-6;
  static constexpr double fast_path_multiple_screen = 1e-9;

  // Two lines of the plane's fast path whose normals' determinant (the sine of
  // their angle) is at most this are taken as parallel: their meeting point
  // would lie about 1e14 times farther than their offsets, where its rounding
  // error is no longer small; the clip gives up and the Oracle decides.
  static constexpr double plane_parallel_determinant = 1e-14;
  // The same for three planes of the 3-input fast path (their normals' triple
  // product): a looser bound, as the cross products round twice.
  static constexpr double space_parallel_determinant = 1e-12;
  // A polygon edge of the plane's fast path shorter than this times
  // (1 + |its first vertex|) is a vertex within rounding: no facet point is
  // proposed at its middle (the other polygon's edge may prove the facet;
  // else the fast path gives up and the Oracle decides).
  static constexpr double plane_short_edge = 1e-12;
  // A vertex of the 3-input fast path whose slack on a cutting plane is at
  // most this times (1 + |vertex|) lies on the plane within the rounding of
  // three plane intersections: the clipped polytope would not be simple in
  // double, so the fast path gives up.
  static constexpr double space_vertex_on_plane = 1e-11;

  // The Oracle's 2-D facet proposals (lp/oracle_facets.cpp): a constraint
  // whose only edge of the clipped polygon is shorter than this (absolute,
  // coordinates relative to the interior point) gets no midpoint proposal;
  // the general filter decides it.
  static constexpr double oracle_short_edge = 1e-9;
  // Lineality in double (lp/oracle_boundedness.cpp): a row whose Gram-Schmidt
  // residual against the earlier unit rows is below this counts as dependent.
  // The proposed direction is then a null vector of the independent rows,
  // computed and checked on every row exactly.
  static constexpr double dependent_residual = 1e-9;
  // Boundedness of a plane cell from its normals' angles
  // (lp/detail/double_rows.cpp): a gap between consecutive normals within this
  // (radians) of a half-turn counts as a half-turn; the proposal (a recession
  // direction, or three normals with positive multipliers) is checked exactly.
  static constexpr double half_turn_margin = 1e-9;
  // The cutting-plane loop of the double LPs (lp/detail/working_rows.cpp): a
  // constraint counts as violated by GLPK's point below this slack. GLPK's own
  // primal tolerance is 1e-7 relative; the point is re-checked exactly anyway.
  static constexpr double violated_slack = 1e-9;
};

}  // namespace pleat::lp
