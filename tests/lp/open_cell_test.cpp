// Query 1 (open cell non-empty?) and query 4 (centre): witnesses, degenerate
// cells, 200-bit cells the double filter cannot decide, and the checker.
#include "lp/checker.hpp"
#include "lp/oracle.hpp"
#include "lp_test_support.hpp"

#include <gtest/gtest.h>

#include <random>

namespace pleat::lp {
namespace {

using testing::box;
using testing::constraint;
using testing::power_of_two;
using testing::random_cell_around;
using testing::random_point;

bool is_empty_verdict(const CellVerdict& verdict) {
  return std::holds_alternative<EmptinessCertificate>(verdict);
}

TEST(OpenCell, KnownInteriorPointGivesCheckedPoint) {
  std::mt19937 random(11);
  Oracle oracle;
  for (int trial = 0; trial < 40; ++trial) {
    const std::size_t dim = 2 + static_cast<std::size_t>(trial % 5);
    const RationalVector inside = random_point(random, dim);
    const Polyhedron cell = random_cell_around(random, dim, 10 + 5 * static_cast<std::size_t>(trial % 4), inside);
    const CellVerdict verdict = oracle.decide_open_cell(cell);
    ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict)) << "trial " << trial;
    EXPECT_TRUE(check_interior_point(cell, std::get<InteriorPoint>(verdict)));
  }
  EXPECT_EQ(oracle.counts().lp_queries, 40u);
  EXPECT_EQ(oracle.counts().filter_settled + oracle.counts().exact_fallbacks, 40u);
}

TEST(OpenCell, KnownFarkasCombinationGivesCheckedCertificate) {
  // Constraints 0..m-2 random; the last is -(sum y_i a_i) with offset making
  // sum y_i c_i = -r <= 0 for positive y: empty by construction.
  std::mt19937 random(12);
  std::uniform_int_distribution<long> entry(-9, 9);
  std::uniform_int_distribution<long> weight(1, 5);
  std::uniform_int_distribution<long> gap(0, 3);
  Oracle oracle;
  for (int trial = 0; trial < 40; ++trial) {
    const std::size_t dim = 2 + static_cast<std::size_t>(trial % 4);
    const std::size_t count = 3 + static_cast<std::size_t>(trial % 6);
    Polyhedron cell{dim, {}};
    RationalVector last_normal(dim, Rational(0));
    Rational last_offset = -gap(random);
    for (std::size_t i = 0; i + 1 < count; ++i) {
      Constraint c{RationalVector(dim), Rational(entry(random))};
      for (std::size_t k = 0; k < dim; ++k) c.normal[k] = entry(random);
      c.normal[0] = c.normal[0] == 0 ? Rational(1) : c.normal[0];
      const long y = weight(random);
      for (std::size_t k = 0; k < dim; ++k) last_normal[k] -= y * c.normal[k];
      last_offset -= y * c.offset;
      cell.constraints.push_back(std::move(c));
    }
    bool is_zero = true;
    for (const Rational& v : last_normal) is_zero = is_zero && v == 0;
    if (is_zero) continue;
    cell.constraints.push_back(Constraint{last_normal, last_offset});
    const CellVerdict verdict = oracle.decide_open_cell(cell);
    ASSERT_TRUE(is_empty_verdict(verdict)) << "trial " << trial;
    EXPECT_TRUE(check_emptiness(cell, std::get<EmptinessCertificate>(verdict)));
  }
}

TEST(OpenCell, DegenerateCells) {
  Oracle oracle;
  // A point as closure: x >= 0 and -x >= 0 (interior empty).
  const Polyhedron point_cell{1, {constraint({1}, 0), constraint({-1}, 0)}};
  CellVerdict verdict = oracle.decide_open_cell(point_cell);
  ASSERT_TRUE(is_empty_verdict(verdict));
  EXPECT_TRUE(check_emptiness(point_cell, std::get<EmptinessCertificate>(verdict)));
  // A line as closure in 2-D: y >= 0, -y >= 0, plus x > -5.
  const Polyhedron line_cell{2, {constraint({0, 1}, 0), constraint({1, 0}, 5), constraint({0, -1}, 0)}};
  verdict = oracle.decide_open_cell(line_cell);
  ASSERT_TRUE(is_empty_verdict(verdict));
  EXPECT_TRUE(check_emptiness(line_cell, std::get<EmptinessCertificate>(verdict)));
  // Parallel and coincident constraints, positive multiples: non-empty.
  const Polyhedron parallel{1, {constraint({1}, 0), constraint({1}, -1), constraint({2}, -2),
                                constraint({1}, -1), constraint({-1}, 3)}};
  verdict = oracle.decide_open_cell(parallel);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  EXPECT_TRUE(check_interior_point(parallel, std::get<InteriorPoint>(verdict)));
  // Parallel with a gap: x > 0 and -x - 1 > 0.
  const Polyhedron gap{1, {constraint({1}, 0), constraint({-1}, -1)}};
  verdict = oracle.decide_open_cell(gap);
  ASSERT_TRUE(is_empty_verdict(verdict));
  EXPECT_TRUE(check_emptiness(gap, std::get<EmptinessCertificate>(verdict)));
  // No constraints: all of Q^3.
  const Polyhedron space{3, {}};
  verdict = oracle.decide_open_cell(space);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  EXPECT_TRUE(check_interior_point(space, std::get<InteriorPoint>(verdict)));
}

TEST(OpenCell, ZeroNormalIsAUsageError) {
  Oracle oracle;
  const Polyhedron bad{2, {constraint({1, 0}, 1), constraint({0, 0}, 1)}};
  EXPECT_THROW((void)oracle.decide_open_cell(bad), usage_error);
  EXPECT_THROW((void)oracle.find_centre(bad), usage_error);
  const Polyhedron wrong_size{2, {constraint({1}, 1)}};
  EXPECT_THROW((void)oracle.decide_open_cell(wrong_size), usage_error);
  EXPECT_THROW((void)oracle.find_centre(box(2, 0, 1), Rational(0)), usage_error);
}

TEST(Centre, SquareCentreIsExactAndShort) {
  Oracle oracle;
  const Polyhedron square = box(2, 0, 10);
  const CellVerdict verdict = oracle.find_centre(square, Rational(100));
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  // The max-norm Chebyshev centre of [0,10]^2 is (5,5), radius 5.
  EXPECT_EQ(std::get<InteriorPoint>(verdict).point, (RationalVector{Rational(5), Rational(5)}));
}

TEST(Centre, ThinTriangleCentreHasShortDenominators) {
  Oracle oracle;
  // 0 < y, y < x / 1000, x < 1: the centre must still be exact and short.
  const Polyhedron thin{2, {constraint({0, 1}, 0), constraint({1, -1000}, 0), constraint({-1, 0}, 1)}};
  const CellVerdict verdict = oracle.find_centre(thin);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  const InteriorPoint& centre = std::get<InteriorPoint>(verdict);
  EXPECT_TRUE(check_interior_point(thin, centre));
  for (const Rational& value : centre.point) EXPECT_LT(mpz_sizeinbase(value.get_den_mpz_t(), 2), 24u);
}

TEST(Centre, UnboundedCellUsesTheCap) {
  Oracle oracle;
  // Half-plane x > 3: unbounded; the capped LP still returns a checked point
  // whose distance from the boundary reflects the cap.
  const Polyhedron half{2, {constraint({1, 0}, -3)}};
  for (long cap : {1L, 7L}) {
    const CellVerdict verdict = oracle.find_centre(half, Rational(cap));
    ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
    const RationalVector& point = std::get<InteriorPoint>(verdict).point;
    EXPECT_TRUE(check_interior_point(half, InteriorPoint{point}));
    EXPECT_GE(point[0] - 3, Rational(cap * 15, 16));
  }
}

TEST(Centre, EmptyCellGivesCertificate) {
  Oracle oracle;
  const Polyhedron gap{2, {constraint({1, 1}, 0), constraint({-1, -1}, -1)}};
  const CellVerdict verdict = oracle.find_centre(gap);
  ASSERT_TRUE(is_empty_verdict(verdict));
  EXPECT_TRUE(check_emptiness(gap, std::get<EmptinessCertificate>(verdict)));
}

// 200-bit coefficients: y > (1 + 2^-200) x, y < x, x > 1 is empty, but in
// double both slanted rows round to the same line, so double multipliers
// (equal weights on the two slanted rows) are wrong. The verdict must be
// exact anyway: either the exact re-solve on GLPK's support (which includes
// x > 1 when GLPK's basis has it) or the exact fallback supplies the weight
// on x > 1 that doubles cannot see.
TEST(OpenCell, TwoHundredBitEmptyCellNeedsTheExactPath) {
  const Rational big = power_of_two(200);
  Polyhedron cell{2, {}};
  cell.constraints.push_back(Constraint{{-(big + 1), big}, Rational(0)});  // 2^200 y - (2^200+1) x > 0
  cell.constraints.push_back(Constraint{{Rational(1), Rational(-1)}, Rational(0)});
  cell.constraints.push_back(Constraint{{Rational(1), Rational(0)}, Rational(-1)});
  Oracle oracle;
  const CellVerdict verdict = oracle.decide_open_cell(cell);
  ASSERT_TRUE(is_empty_verdict(verdict));
  const EmptinessCertificate& certificate = std::get<EmptinessCertificate>(verdict);
  EXPECT_TRUE(check_emptiness(cell, certificate));
  EXPECT_GT(certificate.multipliers[2], 0);  // the x > 1 row is needed
  EXPECT_EQ(certificate.multipliers[2], certificate.multipliers[0]);  // exact balance, 2^-200 apart from double
  EXPECT_EQ(oracle.counts().filter_settled + oracle.counts().exact_fallbacks, 1u);
  // The double proposal alone (equal weights on the slanted rows) fails exactly.
  EXPECT_FALSE(check_emptiness(cell, EmptinessCertificate{{Rational(1), Rational(1), Rational(0)}}));
}

// The non-empty twin: x < y < (1 + 2^-200) x, x > 1 has interior points of
// width 2^-200 x; double sees an empty sliver.
TEST(OpenCell, TwoHundredBitThinCellNeedsTheExactPath) {
  const Rational big = power_of_two(200);
  Polyhedron cell{2, {}};
  cell.constraints.push_back(Constraint{{big + 1, -big}, Rational(0)});  // (2^200+1) x - 2^200 y > 0
  cell.constraints.push_back(Constraint{{Rational(-1), Rational(1)}, Rational(0)});
  cell.constraints.push_back(Constraint{{Rational(1), Rational(0)}, Rational(-1)});
  Oracle oracle;
  const CellVerdict verdict = oracle.decide_open_cell(cell);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  EXPECT_TRUE(check_interior_point(cell, std::get<InteriorPoint>(verdict)));
  EXPECT_EQ(oracle.counts().exact_fallbacks, 1u);
  const CellVerdict centre = oracle.find_centre(cell);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(centre));
  EXPECT_TRUE(check_interior_point(cell, std::get<InteriorPoint>(centre)));
}

// Coefficients far beyond double range: rows scaled by 2^3000 are still
// settled by the filter (each row is scaled by a power of two first); a cell
// 2^3000 away from the origin has offsets no double can hold, and the exact
// path decides it.
TEST(OpenCell, HugeCoefficientsBeyondDoubleRange) {
  const Rational huge = power_of_two(3000);
  Polyhedron scaled{2, {}};
  for (const Constraint& c : box(2, 1, 3).constraints) {
    Constraint big = c;
    for (Rational& v : big.normal) v *= huge;
    big.offset *= huge;
    scaled.constraints.push_back(big);
  }
  Oracle oracle;
  CellVerdict verdict = oracle.find_centre(scaled);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  EXPECT_EQ(std::get<InteriorPoint>(verdict).point, (RationalVector{Rational(2), Rational(2)}));
  EXPECT_EQ(oracle.counts().exact_fallbacks, 0u);

  // huge < x < huge + 1, 0 < y < 1.
  const Polyhedron far{2, {Constraint{{Rational(1), Rational(0)}, -huge}, Constraint{{Rational(-1), Rational(0)}, huge + 1},
                           constraint({0, 1}, 0), constraint({0, -1}, 1)}};
  verdict = oracle.decide_open_cell(far);
  ASSERT_TRUE(std::holds_alternative<InteriorPoint>(verdict));
  EXPECT_TRUE(check_interior_point(far, std::get<InteriorPoint>(verdict)));
  EXPECT_EQ(oracle.counts().exact_fallbacks, 1u);
  const FacetClassification facets = oracle.classify_facets(far, std::get<InteriorPoint>(verdict));
  EXPECT_TRUE(check_facet_classification(far, facets));
  const BoundednessVerdict bounded = oracle.decide_boundedness(far);
  ASSERT_TRUE(std::holds_alternative<BoundednessCertificate>(bounded));
  EXPECT_TRUE(check_boundedness(far, std::get<BoundednessCertificate>(bounded)));
}

TEST(Checker, TamperedCellCertificatesFail) {
  const Polyhedron square = box(2, 0, 1);
  EXPECT_TRUE(check_interior_point(square, InteriorPoint{{Rational(1, 2), Rational(1, 2)}}));
  EXPECT_FALSE(check_interior_point(square, InteriorPoint{{Rational(0), Rational(1, 2)}}));  // on the boundary
  EXPECT_FALSE(check_interior_point(square, InteriorPoint{{Rational(1, 2)}}));                // wrong size
  const Polyhedron gap{1, {constraint({1}, 0), constraint({-1}, -1)}};
  EXPECT_TRUE(check_emptiness(gap, EmptinessCertificate{{Rational(1), Rational(1)}}));
  EXPECT_FALSE(check_emptiness(gap, EmptinessCertificate{{Rational(1), Rational(2)}}));   // sum y a != 0
  EXPECT_FALSE(check_emptiness(gap, EmptinessCertificate{{Rational(0), Rational(0)}}));   // all zero
  EXPECT_FALSE(check_emptiness(gap, EmptinessCertificate{{Rational(-1), Rational(-1)}})); // negative
  const Polyhedron open{1, {constraint({1}, 0), constraint({-1}, 1)}};
  EXPECT_FALSE(check_emptiness(open, EmptinessCertificate{{Rational(1), Rational(1)}}));  // sum y c > 0
}

}  // namespace
}  // namespace pleat::lp
