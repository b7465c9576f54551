// The fast path for cells of R^3 given by integer rows
//   a0 x0 + a1 x1 + a2 x2 + c > 0,
// the plane path's (lp/plane_cell.hpp) counterpart one dimension up. Double
// proposes: a large box is clipped by each row as a convex polytope whose
// vertices are kept with the three planes that meet there (each vertex
// computed from its three original planes, so errors do not accumulate).
// Exact proves every verdict: filtered signs and determinants
// (core/filtered_sign.hpp), integer arithmetic where the filter cannot decide.
// No LP, no rational row.
//
// Each answer is exact; a proposal that cannot be proved gives nullopt (so do
// degenerate cells: a plane through a vertex, several planes on one edge),
// and the caller asks the general lp::Oracle instead.
#pragma once

#include "lp/polyhedron.hpp"

#include <array>
#include <cstddef>
#include <optional>
#include <vector>

namespace pleat::lp {

// a . x + c > 0 with integer coefficients, a != 0.
struct SpaceRow {
  std::array<Integer, 3> a;
  Integer c;
};

// One class of positive multiples (same closed half-space) and its verdict.
struct SpaceGroup {
  std::vector<std::size_t> rows;  // ascending; the first is the representative
  bool is_facet = false;
  // Facet: a point where the group's rows are 0 and every other row is > 0 (exact).
  RationalVector point;
  // Not a facet: 1 to 3 representatives s of other groups with
  //   a_j = sum y_s a_s,  y >= 0,  sum y_s c_s <= c_j   (proved exactly),
  // so row j is >= 0 wherever they are (space_redundancy_certificate turns
  // them into the Motzkin multipliers).
  std::vector<std::size_t> support;
};

struct SpaceCell {
  RationalVector interior;         // every row > 0 there (exact); short denominators
  std::vector<SpaceGroup> groups;  // ordered by representative index
  // Whether the closure of {rows [0, bounded_rows) > 0} is bounded (proved
  // exactly: 2 x 3 vertex optimality certificates whose multipliers add up to
  // Stiemke multipliers, or a recession direction); nullopt when not proved.
  std::optional<bool> bounded;
};

// Precondition: rows non-empty, none with a = 0 (usage_error); bounded_rows
// <= rows.size() (0: `bounded` is left empty).
// The interior point is the average of the vertices of the cell clipped by
// the box [-r, r]^3 (r = 1 + 2 max |vertex|, or the planes' feet when the
// cell has no vertex; no clipping when the cell is bounded), rounded to short
// denominators; each facet point is the average of its face's vertices, moved
// onto its plane exactly. nullopt: the cell is empty, degenerate, or the
// double proposal could not be proved.
[[nodiscard]] std::optional<SpaceCell> describe_space_cell(const std::vector<SpaceRow>& rows, std::size_t bounded_rows);

// The Motzkin certificate (equality multiplier -1) of a non-facet row j from
// support rows of the same constraints in rational form (positive multiples
// of the integer rows, in the same order): a_j = sum y_s a_s with y >= 0 and
// sum y_s c_s <= c_j, solved exactly. nullopt when it does not hold. Any
// dimension.
[[nodiscard]] std::optional<NonFacetCertificate> space_redundancy_certificate(const Polyhedron& cell, std::size_t j,
                                                                              const std::vector<std::size_t>& support);

}  // namespace pleat::lp
