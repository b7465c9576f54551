// The fast path for cells of R^3 (lp/space_cell.hpp): every answer is
// checked through lp/checker.hpp on the same constraints in rational form
// (witnesses, not claims): the interior point, each facet point, each
// non-facet's Motzkin multipliers; the facet sets and boundedness of
// hand-drawn cells are worked by hand.
#include "lp/checker.hpp"
#include "lp/space_cell.hpp"

#include <gtest/gtest.h>

namespace pleat::lp {
namespace {

SpaceRow row(long a0, long a1, long a2, long c) { return SpaceRow{{Integer(a0), Integer(a1), Integer(a2)}, Integer(c)}; }

Polyhedron rational_cell(const std::vector<SpaceRow>& rows) {
  Polyhedron cell{3, {}};
  for (const SpaceRow& r : rows)
    cell.constraints.push_back(Constraint{{Rational(r.a[0]), Rational(r.a[1]), Rational(r.a[2])}, Rational(r.c)});
  return cell;
}

// Checks every verdict of describe_space_cell through the checker; returns
// the facet groups' representatives.
std::vector<std::size_t> checked_facets(const std::optional<SpaceCell>& space, const std::vector<SpaceRow>& rows) {
  EXPECT_TRUE(space.has_value());
  if (!space) return {};
  const Polyhedron cell = rational_cell(rows);
  EXPECT_TRUE(check_interior_point(cell, InteriorPoint{space->interior}));
  FacetClassification classification;
  std::vector<std::size_t> facets;
  for (const SpaceGroup& group : space->groups) {
    if (group.is_facet) {
      facets.push_back(group.rows.front());
      classification.groups.push_back(FacetGroup{group.rows, FacetPoint{group.point}});
      continue;
    }
    std::optional<NonFacetCertificate> certificate =
        space_redundancy_certificate(cell, group.rows.front(), group.support);
    EXPECT_TRUE(certificate.has_value()) << "row " << group.rows.front();
    if (certificate) classification.groups.push_back(FacetGroup{group.rows, std::move(*certificate)});
  }
  EXPECT_TRUE(check_facet_classification(cell, classification));
  return facets;
}

TEST(SpaceCell, UnitCubeWithRedundantAndRepeatedRows) {
  // 0 < x, y, z < 1 (rows 0-5); x + y + z + 5 > 0 is redundant (row 6); 2x > 0
  // repeats row 0 (row 7); 4 - x - y - z > 0 misses the closed cube
  // (x + y + z <= 3 there), redundant (row 8).
  const std::vector<SpaceRow> rows{row(1, 0, 0, 0),  row(0, 1, 0, 0), row(0, 0, 1, 0),
                                   row(-1, 0, 0, 1), row(0, -1, 0, 1), row(0, 0, -1, 1),
                                   row(1, 1, 1, 5),  row(2, 0, 0, 0), row(-1, -1, -1, 4)};
  const std::optional<SpaceCell> space = describe_space_cell(rows, rows.size());
  EXPECT_EQ(checked_facets(space, rows), (std::vector<std::size_t>{0, 1, 2, 3, 4, 5}));
  ASSERT_TRUE(space);
  EXPECT_EQ(space->groups.front().rows, (std::vector<std::size_t>{0, 7}));  // positive multiples share one group
  EXPECT_EQ(space->bounded, std::optional<bool>(true));
}

TEST(SpaceCell, OctantIsUnboundedUntilTheDomainCutsIt) {
  // x, y, z > 0 (rows 0-2) and the redundant x + y + z + 1 > 0 (row 3): three
  // facets, unbounded (direction (1, 1, 1)).
  const std::vector<SpaceRow> octant{row(1, 0, 0, 0), row(0, 1, 0, 0), row(0, 0, 1, 0), row(1, 1, 1, 1)};
  const std::optional<SpaceCell> space = describe_space_cell(octant, octant.size());
  EXPECT_EQ(checked_facets(space, octant), (std::vector<std::size_t>{0, 1, 2}));
  ASSERT_TRUE(space);
  EXPECT_EQ(space->bounded, std::optional<bool>(false));
  // With the sides x, y, z < 2 after it (a domain): six facets, the row
  // x + y + z + 1 still redundant, and the first four rows still unbounded.
  std::vector<SpaceRow> boxed = octant;
  for (const SpaceRow& side : {row(-1, 0, 0, 2), row(0, -1, 0, 2), row(0, 0, -1, 2)}) boxed.push_back(side);
  const std::optional<SpaceCell> clipped = describe_space_cell(boxed, octant.size());
  EXPECT_EQ(checked_facets(clipped, boxed), (std::vector<std::size_t>{0, 1, 2, 4, 5, 6}));
  ASSERT_TRUE(clipped);
  EXPECT_EQ(clipped->bounded, std::optional<bool>(false));
}

TEST(SpaceCell, PrismWithoutVerticesAndAHalfSpace) {
  // 0 < x < 1, 0 < y < 1, z free: no vertex; x + y + 1 > 0 redundant
  // (= row 0 + row 1, offsets 0 + 0 <= 1).
  const std::vector<SpaceRow> prism{row(1, 0, 0, 0), row(0, 1, 0, 0), row(-1, 0, 0, 1), row(0, -1, 0, 1),
                                    row(1, 1, 0, 1)};
  const std::optional<SpaceCell> space = describe_space_cell(prism, prism.size());
  EXPECT_EQ(checked_facets(space, prism), (std::vector<std::size_t>{0, 1, 2, 3}));
  ASSERT_TRUE(space);
  EXPECT_EQ(space->bounded, std::optional<bool>(false));
  const std::vector<SpaceRow> half{row(1, 2, 3, -4)};
  const std::optional<SpaceCell> half_space = describe_space_cell(half, 1);
  EXPECT_EQ(checked_facets(half_space, half), (std::vector<std::size_t>{0}));
  ASSERT_TRUE(half_space);
  EXPECT_EQ(half_space->bounded, std::optional<bool>(false));
}

TEST(SpaceCell, TiltedTetrahedron) {
  // x > 0, y > 0, z > 0, 6 - x - 2y - 3z > 0: a tetrahedron with vertices 0,
  // (6,0,0), (0,3,0), (0,0,2); 7 - x - 2y - 3z > 0 is redundant, and so is
  // x + y + z + 1/2 > 0 (written 2x + 2y + 2z + 1).
  const std::vector<SpaceRow> rows{row(1, 0, 0, 0),    row(0, 1, 0, 0),    row(0, 0, 1, 0),
                                   row(-1, -2, -3, 6), row(-1, -2, -3, 7), row(2, 2, 2, 1)};
  const std::optional<SpaceCell> space = describe_space_cell(rows, rows.size());
  EXPECT_EQ(checked_facets(space, rows), (std::vector<std::size_t>{0, 1, 2, 3}));
  ASSERT_TRUE(space);
  EXPECT_EQ(space->bounded, std::optional<bool>(true));
}

TEST(SpaceCell, DegenerateOrEmptyCellsAreLeftToTheOracle) {
  // The cube and 3 - x - y - z > 0, which touches the closed cube only at
  // (1, 1, 1): a plane through a vertex. Declined, or answered correctly.
  const std::vector<SpaceRow> corner{row(1, 0, 0, 0),  row(0, 1, 0, 0),  row(0, 0, 1, 0),
                                     row(-1, 0, 0, 1), row(0, -1, 0, 1), row(0, 0, -1, 1), row(-1, -1, -1, 3)};
  if (const std::optional<SpaceCell> space = describe_space_cell(corner, corner.size())) {
    EXPECT_EQ(checked_facets(space, corner), (std::vector<std::size_t>{0, 1, 2, 3, 4, 5}));
  }
  // x > 0 and -x - 1 > 0: empty.
  EXPECT_FALSE(describe_space_cell({row(1, 0, 0, 0), row(-1, 0, 0, -1)}, 2).has_value());
  EXPECT_THROW((void)describe_space_cell({row(0, 0, 0, 1)}, 1), usage_error);
}

TEST(SpaceCell, RedundancyCertificateRejectsWrongSupports) {
  const Polyhedron cube = rational_cell({row(1, 0, 0, 0), row(0, 1, 0, 0), row(0, 0, 1, 0), row(1, 1, 1, 5),
                                         row(1, 1, 1, -1)});
  // Row 3 = rows 0 + 1 + 2 with offsets 0 <= 5.
  const auto certificate = space_redundancy_certificate(cube, 3, {0, 1, 2});
  ASSERT_TRUE(certificate);
  EXPECT_EQ(certificate->multipliers, (RationalVector{1, 1, 1, 0, 0}));
  // Row 4 has the same normal but offset -1 < 0: not implied.
  EXPECT_FALSE(space_redundancy_certificate(cube, 4, {0, 1, 2}));
  // Row 3 is not in the span of rows 0 and 1.
  EXPECT_FALSE(space_redundancy_certificate(cube, 3, {0, 1}));
}

}  // namespace
}  // namespace pleat::lp
