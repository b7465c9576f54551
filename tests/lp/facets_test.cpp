// Query 2 (facet classification): known facets of squares and simplices,
// redundant, touching and multiple constraints, random cells, a 200-bit cell
// the double filter misjudges, and tampered certificates.
#include "lp/checker.hpp"
#include "lp/oracle.hpp"
#include "lp_test_support.hpp"

#include <gtest/gtest.h>

#include <random>
#include <set>

namespace pleat::lp {
namespace {

using testing::box;
using testing::constraint;
using testing::power_of_two;
using testing::random_cell_around;
using testing::random_point;

std::set<std::size_t> facet_representatives(const FacetClassification& classification) {
  std::set<std::size_t> result;
  for (const FacetGroup& group : classification.groups)
    if (group.is_facet()) result.insert(group.constraints[0]);
  return result;
}

const FacetGroup& group_of(const FacetClassification& classification, std::size_t index) {
  for (const FacetGroup& group : classification.groups)
    for (std::size_t member : group.constraints)
      if (member == index) return group;
  throw std::logic_error("constraint in no group");
}

TEST(Facets, SquareWithRedundantTouchingAndMultipleConstraints) {
  // [0,1]^2 (rows 0..3: x, 1-x, y, 1-y), then
  //   4: x + y + 5 > 0   far away, redundant
  //   5: x + y > 0       touches the closed square only at the vertex (0,0)
  //   6: 2x > 0          a positive multiple of row 0: same group
  //   7: 3 - 3x > 0      a positive multiple of row 1
  //   8: x - 1/2 + 1/2 > 0 written as 4x + 0 > 0 again: multiple of row 0
  Polyhedron cell = box(2, 0, 1);
  cell.constraints.push_back(constraint({1, 1}, 5));
  cell.constraints.push_back(constraint({1, 1}, 0));
  cell.constraints.push_back(constraint({2, 0}, 0));
  cell.constraints.push_back(constraint({-3, 0}, 3));
  cell.constraints.push_back(constraint({4, 0}, 0));
  Oracle oracle;
  const FacetClassification result =
      oracle.classify_facets(cell, InteriorPoint{{Rational(1, 2), Rational(1, 3)}});
  EXPECT_TRUE(check_facet_classification(cell, result));
  EXPECT_EQ(result.groups.size(), 6u);
  EXPECT_EQ(facet_representatives(result), (std::set<std::size_t>{0, 1, 2, 3}));
  EXPECT_EQ(group_of(result, 6).constraints, (std::vector<std::size_t>{0, 6, 8}));
  EXPECT_EQ(group_of(result, 7).constraints, (std::vector<std::size_t>{1, 7}));
  EXPECT_FALSE(group_of(result, 4).is_facet());
  EXPECT_FALSE(group_of(result, 5).is_facet());
  // Each facet point lies on its own edge, strictly inside it.
  const RationalVector& on_left = std::get<FacetPoint>(group_of(result, 0).verdict).point;
  EXPECT_EQ(on_left[0], 0);
  EXPECT_GT(on_left[1], 0);
  EXPECT_LT(on_left[1], 1);
  EXPECT_EQ(oracle.counts().lp_queries, 6u);
}

TEST(Facets, InteriorPreconditionIsChecked) {
  Oracle oracle;
  const Polyhedron square = box(2, 0, 1);
  EXPECT_THROW((void)oracle.classify_facets(square, InteriorPoint{{Rational(0), Rational(1, 2)}}), usage_error);
  EXPECT_THROW((void)oracle.classify_facets(square, InteriorPoint{{Rational(1, 2)}}), usage_error);
}

TEST(Facets, SimplexHasEveryConstraintAsFacet) {
  // x_k > 0 for all k and 1 - sum x_k > 0: n + 1 facets, in 2..6 dimensions.
  Oracle oracle;
  for (std::size_t dim = 2; dim <= 6; ++dim) {
    Polyhedron simplex{dim, {}};
    for (std::size_t k = 0; k < dim; ++k) {
      Constraint c{RationalVector(dim, Rational(0)), Rational(0)};
      c.normal[k] = 1;
      simplex.constraints.push_back(c);
    }
    simplex.constraints.push_back(Constraint{RationalVector(dim, Rational(-1)), Rational(1)});
    const RationalVector inside(dim, Rational(1, static_cast<long>(2 * dim)));
    const FacetClassification result = oracle.classify_facets(simplex, InteriorPoint{inside});
    EXPECT_TRUE(check_facet_classification(simplex, result));
    EXPECT_EQ(facet_representatives(result).size(), dim + 1);
  }
}

TEST(Facets, RandomGenericCellsAreFullyCertified) {
  std::mt19937 random(21);
  Oracle oracle;
  for (int trial = 0; trial < 30; ++trial) {
    const std::size_t dim = 2 + static_cast<std::size_t>(trial % 5);
    const RationalVector inside = random_point(random, dim);
    const Polyhedron cell = random_cell_around(random, dim, 10 + 7 * static_cast<std::size_t>(trial % 5), inside);
    const FacetClassification result = oracle.classify_facets(cell, InteriorPoint{inside});
    ASSERT_TRUE(check_facet_classification(cell, result)) << "trial " << trial;
    // A bounded or not, a non-empty cell with constraints has at least one facet.
    EXPECT_FALSE(facet_representatives(result).empty());
  }
  EXPECT_EQ(oracle.counts().filter_settled + oracle.counts().exact_fallbacks, oracle.counts().lp_queries);
}

TEST(Facets, LineThroughAVertexAndCoincidentHyperplanes) {
  // Triangle x > 0, y > 0, 1 - x - y > 0; row 3: y - x > -1 passes through the
  // vertex (1,0) only (a lower-dimensional face: not a facet); row 4 is row 2
  // again, exactly; row 5: x - y + 1 > 0 passes through (0,1) only.
  Polyhedron cell{2, {constraint({1, 0}, 0), constraint({0, 1}, 0), constraint({-1, -1}, 1),
                      constraint({-1, 1}, 1), constraint({-1, -1}, 1), constraint({1, -1}, 1)}};
  Oracle oracle;
  const FacetClassification result =
      oracle.classify_facets(cell, InteriorPoint{{Rational(1, 4), Rational(1, 4)}});
  EXPECT_TRUE(check_facet_classification(cell, result));
  EXPECT_EQ(facet_representatives(result), (std::set<std::size_t>{0, 1, 2}));
  EXPECT_EQ(group_of(result, 4).constraints, (std::vector<std::size_t>{2, 4}));
}

// 200-bit coefficients: the unit square plus row 4: 2^201 y - 2 x + 1 > 0,
// i.e. y > 2^-200 (x - 1/2). Exactly, row 4 cuts a sliver of height 2^-201
// off the corner (1,0): it is a facet, and so is y > 0 (for x < 1/2). In
// double the sliver has no width, so the filter's proposal ("not a facet")
// fails exact verification and the exact path decides.
TEST(Facets, TwoHundredBitSliverFacetNeedsTheExactPath) {
  Polyhedron cell = box(2, 0, 1);
  cell.constraints.push_back(Constraint{{Rational(-2), power_of_two(201)}, Rational(1)});
  Oracle oracle;
  const FacetClassification result =
      oracle.classify_facets(cell, InteriorPoint{{Rational(1, 2), Rational(1, 2)}});
  EXPECT_TRUE(check_facet_classification(cell, result));
  EXPECT_EQ(facet_representatives(result), (std::set<std::size_t>{0, 1, 2, 3, 4}));
  EXPECT_GE(oracle.counts().exact_fallbacks, 1u);
  // The facet point of row 4 lies beyond x = 1/2, where y = 2^-200 (x - 1/2) > 0.
  const RationalVector& sliver = std::get<FacetPoint>(group_of(result, 4).verdict).point;
  EXPECT_GT(sliver[0], Rational(1, 2));
}

TEST(Checker, TamperedFacetCertificatesFail) {
  const Polyhedron square = box(2, 0, 1);  // rows: x, 1-x, y, 1-y
  const std::vector<std::size_t> left{0};
  EXPECT_TRUE(check_facet_point(square, left, FacetPoint{{Rational(0), Rational(1, 2)}}));
  EXPECT_FALSE(check_facet_point(square, left, FacetPoint{{Rational(0), Rational(0)}}));     // a vertex
  EXPECT_FALSE(check_facet_point(square, left, FacetPoint{{Rational(1, 9), Rational(1, 2)}}));  // off the line
  EXPECT_FALSE(check_facet_point(square, {0, 1}, FacetPoint{{Rational(0), Rational(1, 2)}}));  // not multiples
  // Redundant x + 5 > 0 is x > 0 plus 5: a_4 = 1 * a_0, c: 0 <= 5.
  Polyhedron padded = square;
  padded.constraints.push_back(constraint({1, 0}, 5));
  const std::vector<std::size_t> far{4};
  const NonFacetCertificate good{Rational(-1), {Rational(1), Rational(0), Rational(0), Rational(0), Rational(0)}};
  EXPECT_TRUE(check_non_facet(padded, far, good));
  NonFacetCertificate tampered = good;
  tampered.multipliers[0] = 2;  // breaks sum = 0
  EXPECT_FALSE(check_non_facet(padded, far, tampered));
  tampered = good;
  tampered.multipliers[4] = 1;  // weight on the group itself
  EXPECT_FALSE(check_non_facet(padded, far, tampered));
  // The left edge is a facet: no certificate can claim otherwise. (x = 0 with
  // multiplier +1 against 1 - x: -a_0 ... ) try mu = 1, y_1 = 1: a_0 + a_1 = 0,
  // c: 0 + 1 > 0, fails.
  EXPECT_FALSE(check_non_facet(square, left, NonFacetCertificate{Rational(1), {Rational(0), Rational(1), Rational(0), Rational(0)}}));
  // A classification that leaves a constraint out, or splits a class, fails.
  Oracle oracle;
  FacetClassification result = oracle.classify_facets(padded, InteriorPoint{{Rational(1, 2), Rational(1, 2)}});
  ASSERT_TRUE(check_facet_classification(padded, result));
  FacetClassification missing = result;
  missing.groups.pop_back();
  EXPECT_FALSE(check_facet_classification(padded, missing));
  Polyhedron doubled = square;
  doubled.constraints.push_back(constraint({2, 0}, 0));
  FacetClassification split = oracle.classify_facets(doubled, InteriorPoint{{Rational(1, 2), Rational(1, 2)}});
  ASSERT_TRUE(check_facet_classification(doubled, split));
  ASSERT_EQ(split.groups.size(), 4u);
  split.groups[0].constraints = {0};
  split.groups.push_back(FacetGroup{{4}, FacetPoint{{Rational(0), Rational(1, 2)}}});
  EXPECT_FALSE(check_facet_classification(doubled, split));
}

}  // namespace
}  // namespace pleat::lp
