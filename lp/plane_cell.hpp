// The plane's fast path: a cell of R^2 given by integer rows
//   a0 x0 + a1 x1 + c > 0,
// clipped as a polygon in double (each vertex computed from the two original
// lines that meet there, so errors do not accumulate), every verdict then
// proved exactly: filtered signs (core/filtered_sign.hpp) and integer
// arithmetic where the filter cannot decide. No LP, no rational row.
//
// Each answer is exact; a proposal that cannot be proved gives nullopt, and
// the caller asks the general lp::Oracle instead (so the fast path never
// decides anything it has not proved).
#pragma once

#include "lp/polyhedron.hpp"

#include <array>
#include <cstddef>
#include <optional>
#include <span>
#include <vector>

namespace pleat::lp {

// a0 x0 + a1 x1 + c > 0 with integer coefficients, (a0, a1) != (0, 0).
struct PlaneRow {
  Integer a0, a1, c;
};

// One class of positive multiples (same closed half-plane) and its verdict.
struct PlaneGroup {
  std::vector<std::size_t> rows;  // ascending; the first is the representative
  bool is_facet = false;
  // Facet: a point where the group's rows are 0 and every other row is > 0 (exact).
  RationalVector point;
  // Not a facet: representatives s1, s2 (s1 == s2 when one suffices) with
  //   a_j = y1 a_s1 + y2 a_s2,  y >= 0,  y1 c_s1 + y2 c_s2 <= c_j   (proved exactly),
  // so row j is >= 0 wherever s1 and s2 are (plane_redundancy_certificate
  // turns them into the Motzkin multipliers).
  std::array<std::size_t, 2> support{};
};

struct PlaneCell {
  RationalVector interior;          // every row > 0 there (exact); short denominators
  std::vector<PlaneGroup> groups;   // ordered by representative index
  // true when the closure of {every row > 0} is proved bounded on the way
  // (the polygon's edge normals turn counter-clockwise by less than pi from
  // each to the next, all the way round: exact determinant signs); nullopt
  // otherwise (an unbounded or huge cell, or no proof: ask
  // is_plane_cell_bounded).
  std::optional<bool> bounded;
};

// Precondition: rows non-empty, none with (a0, a1) = (0, 0) (usage_error).
// The interior point is the average of the vertices of the cell clipped by
// the box [-r, r]^2 (r = 1 + 2 max |vertex|, or the lines' feet when the cell
// has no vertex; no clipping when the cell is bounded), rounded to short
// denominators: a function of the rows alone. nullopt: the cell is empty or
// the double proposal could not be proved (slivers, huge coefficients).
[[nodiscard]] std::optional<PlaneCell> describe_plane_cell(const std::vector<PlaneRow>& rows);

// Whether the closure of {every row > 0} is bounded, proved exactly (normals
// sorted by angle propose a recession direction or three normals with
// positive Stiemke multipliers). Precondition: the open cell is non-empty;
// rows non-empty. nullopt when the proposal fails.
[[nodiscard]] std::optional<bool> is_plane_cell_bounded(std::span<const PlaneRow> rows);

// The Motzkin certificate (equality multiplier -1) of a PlaneGroup's support
// on the same constraints in rational form (positive multiples of the integer
// rows, in the same order). Exact; nullopt when it does not hold.
[[nodiscard]] std::optional<NonFacetCertificate> plane_redundancy_certificate(const Polyhedron& cell, std::size_t j,
                                                                              std::size_t s1, std::size_t s2);

}  // namespace pleat::lp
