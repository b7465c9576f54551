// The plane cell's exact facet question without an LP (lp/detail/oracle_line.cpp):
// every verdict passes the solver-free checker, and facet versus non-facet agrees
// with a naive reference that tries every candidate point on the line.
#include "lp/checker.hpp"
#include "lp/detail/oracle_parts.hpp"
#include "lp/oracle.hpp"
#include "lp_test_support.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <random>

namespace pleat::lp {
namespace {

using testing::constraint;
using testing::random_cell_around;
using testing::random_point;
using testing::slack_at;

// Naive reference: the line a_j . x + c_j = 0 meets every other line in at most one
// point; an open piece of the line where all others are positive, if any, contains
// the midpoint of two consecutive such crossings or a point beyond the last ones.
bool has_facet_point_naive(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  const Constraint& rep = cell.constraints[group[0]];
  // A point on the line and its direction.
  const std::size_t solved = sgn(rep.normal[1]) != 0 ? 1 : 0;
  RationalVector base(2, Rational(0));
  base[solved] = -rep.offset / rep.normal[solved];
  const RationalVector direction{-rep.normal[1], rep.normal[0]};
  std::vector<Rational> crossings;
  for (const Constraint& other : cell.constraints) {
    const Rational along = other.normal[0] * direction[0] + other.normal[1] * direction[1];
    if (sgn(along) != 0) crossings.push_back(-slack_at(other, base) / along);
  }
  std::sort(crossings.begin(), crossings.end());
  std::vector<Rational> candidates{Rational(0)};
  if (!crossings.empty()) {
    candidates = {crossings.front() - 1, crossings.back() + 1};
    for (std::size_t k = 0; k + 1 < crossings.size(); ++k) candidates.push_back((crossings[k] + crossings[k + 1]) / 2);
  }
  for (const Rational& s : candidates) {
    const RationalVector x{base[0] + s * direction[0], base[1] + s * direction[1]};
    bool is_facet_point = true;
    for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
      const bool is_member = std::find(group.begin(), group.end(), i) != group.end();
      if (!is_member && sgn(slack_at(cell.constraints[i], x)) <= 0) is_facet_point = false;
    }
    if (is_facet_point) return true;
  }
  return false;
}

void expect_agrees_with_reference(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  const std::optional<FacetVerdict> verdict = detail::classify_group_on_line(cell, group);
  ASSERT_TRUE(verdict.has_value());
  if (const auto* point = std::get_if<FacetPoint>(&*verdict)) {
    EXPECT_TRUE(check_facet_point(cell, group, *point));
  } else {
    EXPECT_TRUE(check_non_facet(cell, group, std::get<NonFacetCertificate>(*verdict)));
  }
  EXPECT_EQ(std::holds_alternative<FacetPoint>(*verdict), has_facet_point_naive(cell, group));
}

TEST(FacetsOnLine, RandomPlaneCellsAgreeWithTheNaiveReference) {
  std::mt19937 random(20261203);
  int facets = 0, non_facets = 0;
  for (int trial = 0; trial < 300; ++trial) {
    const RationalVector inside = random_point(random, 2);
    const Polyhedron cell = random_cell_around(random, 2, 3 + trial % 12, inside);
    for (std::size_t j = 0; j < cell.constraints.size(); ++j) {
      // Only a constraint that is no positive multiple of another is its own group.
      bool has_multiple = false;
      for (std::size_t i = 0; i < cell.constraints.size(); ++i)
        has_multiple = has_multiple || (i != j && is_positive_multiple(cell.constraints[i], cell.constraints[j]));
      if (has_multiple) continue;
      expect_agrees_with_reference(cell, {j});
      (has_facet_point_naive(cell, {j}) ? facets : non_facets) += 1;
    }
  }
  // Both answers occur often enough to mean something.
  EXPECT_GT(facets, 300);
  EXPECT_GT(non_facets, 300);
}

TEST(FacetsOnLine, ThinSliverParallelAndGroupedConstraints) {
  // A triangle of width 1e-30 between y = 0, x = 0 and x + 1e-30 (y + 1) = 0 ... as
  // constraints y > 0, -x > 0 and x + 1e-30 y + 1e-30 > 0: each is a facet.
  const Rational tiny(Integer(1), Integer("1000000000000000000000000000000"));
  Polyhedron sliver{2, {constraint({0, 1}, 0), constraint({-1, 0}, 0), constraint({1, 0}, 0)}};
  sliver.constraints[2].normal[1] = tiny;
  sliver.constraints[2].offset = tiny;
  for (std::size_t j = 0; j < 3; ++j) {
    expect_agrees_with_reference(sliver, {j});
    EXPECT_TRUE(std::holds_alternative<FacetPoint>(*detail::classify_group_on_line(sliver, {j})));
  }
  // A parallel constraint non-positive on the whole line (support one): x > 0 on -x = 0.
  const Polyhedron parallel{2, {constraint({-1, 0}, 0), constraint({1, 0}, 0), constraint({0, 1}, 1)}};
  expect_agrees_with_reference(parallel, {0});
  EXPECT_TRUE(std::holds_alternative<NonFacetCertificate>(*detail::classify_group_on_line(parallel, {0})));
  // A group of two positive multiples: the line they share is a facet of the square.
  const Polyhedron square{2, {constraint({1, 0}, 0), constraint({2, 0}, 0), constraint({-1, 0}, 1),
                              constraint({0, 1}, 0), constraint({0, -1}, 1)}};
  expect_agrees_with_reference(square, {0, 1});
  // A line touching the square only at the corner (0, 0): no facet.
  Polyhedron corner = square;
  corner.constraints.push_back(constraint({1, 1}, 0));
  expect_agrees_with_reference(corner, {5});
  EXPECT_TRUE(std::holds_alternative<NonFacetCertificate>(*detail::classify_group_on_line(corner, {5})));
}

TEST(FacetsOnLine, OnlyThePlane) {
  const Polyhedron cube{3, {constraint({1, 0, 0}, 0), constraint({-1, 0, 0}, 1)}};
  EXPECT_FALSE(detail::classify_group_on_line(cube, {0}).has_value());
}

}  // namespace
}  // namespace pleat::lp
