// Query 3 (boundedness): known recession directions, lineality, bounded
// polytopes with Stiemke multipliers, 200-bit cells, tampering; and several
// Oracles in several threads at once.
#include "lp/checker.hpp"
#include "lp/oracle.hpp"
#include "lp_test_support.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <random>
#include <thread>

namespace pleat::lp {
namespace {

using testing::box;
using testing::constraint;
using testing::power_of_two;
using testing::random_cell_around;
using testing::random_point;
using testing::slack_at;

Rational dot(const RationalVector& a, const RationalVector& b) {
  Rational sum = 0;
  for (std::size_t k = 0; k < a.size(); ++k) sum += a[k] * b[k];
  return sum;
}

TEST(Boundedness, BoxesAndSimplicesAreBounded) {
  Oracle oracle;
  for (std::size_t dim = 1; dim <= 6; ++dim) {
    const Polyhedron cell = box(dim, -2, 3);
    const BoundednessVerdict verdict = oracle.decide_boundedness(cell);
    ASSERT_TRUE(std::holds_alternative<BoundednessCertificate>(verdict)) << dim;
    const BoundednessCertificate& certificate = std::get<BoundednessCertificate>(verdict);
    EXPECT_TRUE(check_boundedness(cell, certificate));
    // Stiemke: every multiplier of a box is positive (opposite faces pair up).
    for (const Rational& y : certificate.multipliers) EXPECT_GT(y, 0);
  }
}

TEST(Boundedness, KnownRecessionDirectionIsFound) {
  // Every constraint has a_i . d0 >= 0 for a chosen d0: the cell is unbounded
  // along d0; the returned direction must pass the checker.
  std::mt19937 random(31);
  std::uniform_int_distribution<long> entry(-9, 9);
  Oracle oracle;
  for (int trial = 0; trial < 30; ++trial) {
    const std::size_t dim = 2 + static_cast<std::size_t>(trial % 5);
    RationalVector d0(dim);
    for (std::size_t k = 0; k < dim; ++k) d0[k] = entry(random);
    d0[0] = 3;
    const RationalVector inside = random_point(random, dim);
    Polyhedron cell = random_cell_around(random, dim, 8 + static_cast<std::size_t>(trial), inside);
    for (Constraint& c : cell.constraints) {
      if (dot(c.normal, d0) < 0) {  // flip the constraint through the interior point
        for (Rational& v : c.normal) v = -v;
        c.offset = 0;
        c.offset = 1 - slack_at(c, inside);
      }
    }
    const BoundednessVerdict verdict = oracle.decide_boundedness(cell);
    ASSERT_TRUE(std::holds_alternative<RecessionDirection>(verdict)) << trial;
    EXPECT_TRUE(check_recession_direction(cell, std::get<RecessionDirection>(verdict)));
  }
}

TEST(Boundedness, StripHasLineality) {
  // 0 < y < 1 in 2-D, and a slab in 3-D: the recession cone is a line/plane.
  Oracle oracle;
  const Polyhedron strip{2, {constraint({0, 1}, 0), constraint({0, -1}, 1)}};
  BoundednessVerdict verdict = oracle.decide_boundedness(strip);
  ASSERT_TRUE(std::holds_alternative<RecessionDirection>(verdict));
  const RationalVector& d = std::get<RecessionDirection>(verdict).direction;
  EXPECT_EQ(d[1], 0);
  EXPECT_NE(d[0], 0);
  const Polyhedron slab{3, {constraint({1, 1, 1}, 0), constraint({-2, -2, -2}, 5)}};
  verdict = oracle.decide_boundedness(slab);
  ASSERT_TRUE(std::holds_alternative<RecessionDirection>(verdict));
  EXPECT_TRUE(check_recession_direction(slab, std::get<RecessionDirection>(verdict)));
  const Polyhedron space{2, {}};
  EXPECT_TRUE(std::holds_alternative<RecessionDirection>(oracle.decide_boundedness(space)));
}

TEST(Boundedness, HalfStripHasOneRay) {
  // 0 < y < 1, x > 0: the cone is the single ray (1, 0), lower-dimensional.
  Oracle oracle;
  const Polyhedron half{2, {constraint({0, 1}, 0), constraint({0, -1}, 1), constraint({1, 0}, 0)}};
  const BoundednessVerdict verdict = oracle.decide_boundedness(half);
  ASSERT_TRUE(std::holds_alternative<RecessionDirection>(verdict));
  const RationalVector& d = std::get<RecessionDirection>(verdict).direction;
  EXPECT_EQ(d[1], 0);
  EXPECT_GT(d[0], 0);
}

TEST(Boundedness, RandomPolytopesWithRedundancy) {
  // Many random normals around an interior point: bounded once the normals
  // positively span; compare with the witness either way (a direction must
  // pass the checker, a certificate must too).
  std::mt19937 random(32);
  Oracle oracle;
  int bounded = 0;
  for (int trial = 0; trial < 30; ++trial) {
    const std::size_t dim = 2 + static_cast<std::size_t>(trial % 5);
    const RationalVector inside = random_point(random, dim);
    const Polyhedron cell = random_cell_around(random, dim, 4 + 3 * static_cast<std::size_t>(trial % 10), inside);
    const BoundednessVerdict verdict = oracle.decide_boundedness(cell);
    if (std::holds_alternative<BoundednessCertificate>(verdict)) {
      ++bounded;
      EXPECT_TRUE(check_boundedness(cell, std::get<BoundednessCertificate>(verdict))) << trial;
    } else {
      EXPECT_TRUE(check_recession_direction(cell, std::get<RecessionDirection>(verdict))) << trial;
    }
  }
  EXPECT_GT(bounded, 5);
}

// 200-bit coefficients, B = 2^200. In double the slanted rows of both cells
// below round to +-(y - x), so the filter sees the ray (1, 1).
//   Diverging:  (B + 1) y - B x > 0,  x - y + 1 > 0,  x > 0: exactly unbounded
//               (the cone is between slopes B/(B+1) and 1).
//   Converging: B y - (B + 1) x > 0,  x - y + 1 > 0,  x > 0: the lines meet at
//               x = B, a triangle: bounded, although double proposes the ray
//               (1, 1), which fails exactly; the exact path must decide.
TEST(Boundedness, TwoHundredBitNearlyParallelRows) {
  const Rational big = power_of_two(200);
  Polyhedron diverging{2, {}};
  diverging.constraints.push_back(Constraint{{-big, big + 1}, Rational(0)});
  diverging.constraints.push_back(Constraint{{Rational(1), Rational(-1)}, Rational(1)});
  diverging.constraints.push_back(Constraint{{Rational(1), Rational(0)}, Rational(0)});
  Oracle oracle;
  const BoundednessVerdict verdict = oracle.decide_boundedness(diverging);
  ASSERT_TRUE(std::holds_alternative<RecessionDirection>(verdict));
  EXPECT_TRUE(check_recession_direction(diverging, std::get<RecessionDirection>(verdict)));

  Polyhedron converging{2, {}};
  converging.constraints.push_back(Constraint{{-(big + 1), big}, Rational(0)});
  converging.constraints.push_back(Constraint{{Rational(1), Rational(-1)}, Rational(1)});
  converging.constraints.push_back(Constraint{{Rational(1), Rational(0)}, Rational(0)});
  Oracle second;
  const BoundednessVerdict closed = second.decide_boundedness(converging);
  ASSERT_TRUE(std::holds_alternative<BoundednessCertificate>(closed));
  EXPECT_TRUE(check_boundedness(converging, std::get<BoundednessCertificate>(closed)));
  EXPECT_EQ(second.counts().exact_fallbacks, 1u);
  // The double proposal itself is wrong exactly:
  EXPECT_FALSE(check_recession_direction(converging, RecessionDirection{{Rational(1), Rational(1)}}));
}

TEST(Checker, TamperedBoundednessCertificatesFail) {
  const Polyhedron square = box(2, 0, 1);
  const BoundednessCertificate good{{Rational(1), Rational(1), Rational(2), Rational(2)}};
  EXPECT_TRUE(check_boundedness(square, good));
  // y = 0 satisfies sum y a = 0 and proves nothing.
  EXPECT_FALSE(check_boundedness(square, BoundednessCertificate{RationalVector(4, Rational(0))}));
  // Support of rank 1 (x rows only): the strip is not bounded.
  EXPECT_FALSE(check_boundedness(square, BoundednessCertificate{{Rational(1), Rational(1), Rational(0), Rational(0)}}));
  EXPECT_FALSE(check_boundedness(square, BoundednessCertificate{{Rational(1), Rational(2), Rational(2), Rational(2)}}));
  EXPECT_TRUE(check_recession_direction(Polyhedron{2, {constraint({1, 0}, 0)}}, RecessionDirection{{Rational(1), Rational(5)}}));
  EXPECT_FALSE(check_recession_direction(square, RecessionDirection{{Rational(1), Rational(0)}}));
  EXPECT_FALSE(check_recession_direction(square, RecessionDirection{{Rational(0), Rational(0)}}));
}

TEST(Threads, SeveralOraclesRunConcurrently) {
  // Each thread owns an Oracle and answers every query type on its own random
  // cells; every certificate is checked. GLPK keeps one environment per thread.
  std::atomic<int> failures{0};
  std::atomic<std::uint64_t> queries{0};
  auto work = [&](unsigned seed) {
    std::mt19937 random(seed);
    Oracle oracle;
    for (int trial = 0; trial < 12; ++trial) {
      const std::size_t dim = 2 + static_cast<std::size_t>(trial % 4);
      const RationalVector inside = random_point(random, dim);
      const Polyhedron cell = random_cell_around(random, dim, 20, inside);
      const CellVerdict centre = oracle.find_centre(cell);
      if (!std::holds_alternative<InteriorPoint>(centre) ||
          !check_interior_point(cell, std::get<InteriorPoint>(centre)))
        ++failures;
      if (!check_facet_classification(cell, oracle.classify_facets(cell, InteriorPoint{inside}))) ++failures;
      const BoundednessVerdict bounded = oracle.decide_boundedness(cell);
      const bool is_checked = std::holds_alternative<BoundednessCertificate>(bounded)
                                  ? check_boundedness(cell, std::get<BoundednessCertificate>(bounded))
                                  : check_recession_direction(cell, std::get<RecessionDirection>(bounded));
      if (!is_checked) ++failures;
    }
    queries += oracle.counts().lp_queries;
  };
  std::vector<std::thread> threads;
  for (unsigned t = 0; t < 4; ++t) threads.emplace_back(work, 100 + t);
  for (std::thread& thread : threads) thread.join();
  EXPECT_EQ(failures.load(), 0);
  EXPECT_GT(queries.load(), 4u * 12u * 2u);
}

}  // namespace
}  // namespace pleat::lp
