// The plane's fast path (lp/plane_cell.hpp): every answer is checked through
// lp/checker.hpp on the same constraints in rational form (witnesses, not
// claims): the interior point, each facet point, each non-facet's Motzkin
// multipliers, and the facet set of hand-drawn cells (values worked by hand).
#include "lp/checker.hpp"
#include "lp/plane_cell.hpp"

#include <gtest/gtest.h>

namespace pleat::lp {
namespace {

Polyhedron rational_cell(const std::vector<PlaneRow>& rows) {
  Polyhedron cell{2, {}};
  for (const PlaneRow& row : rows) cell.constraints.push_back(Constraint{{Rational(row.a0), Rational(row.a1)}, Rational(row.c)});
  return cell;
}

// Checks every verdict of describe_plane_cell through the checker; returns
// the facet groups' representatives.
std::vector<std::size_t> checked_facets(const std::vector<PlaneRow>& rows) {
  const std::optional<PlaneCell> plane = describe_plane_cell(rows);
  EXPECT_TRUE(plane.has_value());
  if (!plane) return {};
  const Polyhedron cell = rational_cell(rows);
  EXPECT_TRUE(check_interior_point(cell, InteriorPoint{plane->interior}));
  FacetClassification classification;
  std::vector<std::size_t> facets;
  for (const PlaneGroup& group : plane->groups) {
    if (group.is_facet) {
      facets.push_back(group.rows.front());
      classification.groups.push_back(FacetGroup{group.rows, FacetPoint{group.point}});
      continue;
    }
    std::optional<NonFacetCertificate> certificate =
        plane_redundancy_certificate(cell, group.rows.front(), group.support[0], group.support[1]);
    EXPECT_TRUE(certificate.has_value()) << "row " << group.rows.front();
    if (certificate) classification.groups.push_back(FacetGroup{group.rows, std::move(*certificate)});
  }
  EXPECT_TRUE(check_facet_classification(cell, classification));
  return facets;
}

TEST(PlaneCell, UnitSquareWithRedundantAndRepeatedRows) {
  // 0 < x < 1, 0 < y < 1 (rows 0-3); x + y + 5 > 0 is redundant (row 4);
  // 2x > 0 repeats row 0 (row 5); 3 - x - y > 0 misses the closed square
  // (x + y <= 2 < 3 there), redundant (row 6).
  const std::vector<PlaneRow> rows{{1, 0, 0}, {0, 1, 0}, {-1, 0, 1}, {0, -1, 1}, {1, 1, 5}, {2, 0, 0}, {-1, -1, 3}};
  EXPECT_EQ(checked_facets(rows), (std::vector<std::size_t>{0, 1, 2, 3}));
  const std::optional<PlaneCell> plane = describe_plane_cell(rows);
  ASSERT_TRUE(plane);
  EXPECT_EQ(plane->groups.front().rows, (std::vector<std::size_t>{0, 5}));  // positive multiples share one group
  EXPECT_EQ(is_plane_cell_bounded(rows), std::optional<bool>(true));
  EXPECT_EQ(plane->bounded, std::optional<bool>(true));  // proved from the polygon's edges
}

TEST(PlaneCell, RowThroughACornerIsNoFacet) {
  // The square and 2 - x - y > 0, which touches the closed square only at (1, 1).
  const std::vector<PlaneRow> rows{{1, 0, 0}, {0, 1, 0}, {-1, 0, 1}, {0, -1, 1}, {-1, -1, 2}};
  EXPECT_EQ(checked_facets(rows), (std::vector<std::size_t>{0, 1, 2, 3}));
}

TEST(PlaneCell, UnboundedWedgeStripAndHalfPlane) {
  // The wedge y > x, y > -x + 3 (apex (3/2, 3/2)) with a redundant y + 10 > 0.
  const std::vector<PlaneRow> wedge{{-1, 1, 0}, {1, 1, -3}, {0, 1, 10}};
  EXPECT_EQ(checked_facets(wedge), (std::vector<std::size_t>{0, 1}));
  EXPECT_EQ(is_plane_cell_bounded(wedge), std::optional<bool>(false));
  EXPECT_FALSE(describe_plane_cell(wedge)->bounded.has_value());  // reaches the box: no claim
  // The strip 5 < x < 7 (no vertex) with the redundant 3x - 1 > 0 (a multiple of row 0's normal).
  const std::vector<PlaneRow> strip{{1, 0, -5}, {-1, 0, 7}, {3, 0, -1}};
  EXPECT_EQ(checked_facets(strip), (std::vector<std::size_t>{0, 1}));
  EXPECT_EQ(is_plane_cell_bounded(strip), std::optional<bool>(false));
  // A half-plane far from the origin: 1000 x - 999 y - 123456 > 0.
  const std::vector<PlaneRow> half{{1000, -999, -123456}};
  EXPECT_EQ(checked_facets(half), (std::vector<std::size_t>{0}));
}

// The boundedness proved from the polygon (PlaneCell::bounded) agrees with
// is_plane_cell_bounded's own proof on random cells: lines with integer
// coefficients in [-50, 50], each oriented so that (0, 0) is inside
// (c > 0), 3 to 12 of them. When set it is true, and only on bounded cells;
// it is set on most bounded ones (the path is taken).
TEST(PlaneCell, BoundednessFromThePolygonAgreesWithTheNormals) {
  std::uint64_t state = 12345;
  const auto next = [&](int range) {
    state = state * 6364136223846793005ull + 1442695040888963407ull;
    return static_cast<int>((state >> 33) % static_cast<std::uint64_t>(2 * range + 1)) - range;
  };
  std::size_t bounded = 0, proved = 0;
  for (int sample = 0; sample < 2000; ++sample) {
    std::vector<PlaneRow> rows;
    const int count = 3 + (sample % 10);
    while (static_cast<int>(rows.size()) < count) {
      const int a0 = next(50), a1 = next(50), c = 1 + (next(50) + 50);
      if (a0 == 0 && a1 == 0) continue;
      rows.push_back(PlaneRow{a0, a1, c});
    }
    const std::optional<PlaneCell> plane = describe_plane_cell(rows);
    ASSERT_TRUE(plane) << "sample " << sample;
    const std::optional<bool> truth = is_plane_cell_bounded(rows);
    ASSERT_TRUE(truth) << "sample " << sample;
    bounded += *truth;
    if (plane->bounded) {
      ++proved;
      EXPECT_TRUE(*plane->bounded);
      EXPECT_TRUE(*truth) << "sample " << sample;
    }
  }
  EXPECT_GT(bounded, 200u);
  EXPECT_GT(proved, bounded * 9 / 10);
}

TEST(PlaneCell, EmptyCellIsNotDescribed) {
  // x > 1 and x < 0: no interior; the fast path must not claim one.
  EXPECT_FALSE(describe_plane_cell({{1, 0, -1}, {-1, 0, 0}, {0, 1, 0}}).has_value());
}

}  // namespace
}  // namespace pleat::lp
