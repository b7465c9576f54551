// Small null spaces by integer minors (lp/detail/integer_rows.hpp) and the
// supports' multipliers solved with them (lp/detail/oracle_support.cpp): the kind
// of null space agrees with the rank from Gauss-Jordan over Q, and every
// certificate equals the one the same system gives when solved over Q (the
// earlier path, written out here).
#include "lp/checker.hpp"
#include "lp/detail/exact_linear.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/detail/integer_rows.hpp"
#include "lp/detail/oracle_parts.hpp"

#include <gtest/gtest.h>

#include <random>

namespace pleat::lp::detail {
namespace {

using Columns = std::vector<std::vector<Integer>>;

SmallNullSpace null_space_of(const Columns& columns) {
  std::vector<const std::vector<Integer>*> pointers;
  for (const std::vector<Integer>& column : columns) pointers.push_back(&column);
  return small_null_space(pointers);
}

std::size_t rank_over_q(const Columns& columns) {
  RationalMatrix m(columns[0].size(), columns.size());
  for (std::size_t c = 0; c < columns.size(); ++c)
    for (std::size_t r = 0; r < columns[c].size(); ++r) m(r, c) = Rational(columns[c][r]);
  return exact_rank(m);
}

bool is_in_null_space(const Columns& columns, const std::vector<Integer>& v) {
  for (std::size_t r = 0; r < columns[0].size(); ++r) {
    Integer sum = 0;
    for (std::size_t c = 0; c < columns.size(); ++c) sum += columns[c][r] * v[c];
    if (sgn(sum) != 0) return false;
  }
  return true;
}

// Worked by hand: e1 + e2 + e3 - (1, 1, 1) = 0.
TEST(SmallNullSpace, FourColumnsInSpace) {
  const Columns columns{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}, {1, 1, 1}};
  const SmallNullSpace space = null_space_of(columns);
  ASSERT_EQ(space.kind, SmallNullSpace::Kind::line);
  const Integer& scale = space.vector[0];
  EXPECT_EQ(space.vector, (std::vector<Integer>{scale, scale, scale, -scale}));
  EXPECT_NE(sgn(scale), 0);
}

TEST(SmallNullSpace, KindFollowsTheRankOnRandomMatrices) {
  std::mt19937 random(17);
  std::uniform_int_distribution<int> entry(-3, 3);
  std::uniform_int_distribution<int> zero(0, 2);
  int lines = 0, nones = 0, undecided = 0;
  for (int trial = 0; trial < 3000; ++trial) {
    const std::size_t d = 1 + static_cast<std::size_t>(trial % 3);
    const std::size_t n = 1 + static_cast<std::size_t>((trial / 3) % (d + 1));
    Columns columns(n, std::vector<Integer>(d));
    for (auto& column : columns)
      for (Integer& value : column) value = zero(random) == 0 ? 0 : entry(random);
    // Sometimes a column repeated or scaled, to reach the degenerate kinds.
    if (n > 1 && trial % 5 == 0)
      for (std::size_t r = 0; r < d; ++r) columns[n - 1][r] = 2 * columns[0][r];
    const std::size_t nullity = n - rank_over_q(columns);
    const SmallNullSpace space = null_space_of(columns);
    switch (nullity) {
      case 0:
        EXPECT_EQ(space.kind, SmallNullSpace::Kind::none) << trial;
        ++nones;
        break;
      case 1:
        ASSERT_EQ(space.kind, SmallNullSpace::Kind::line) << trial;
        EXPECT_TRUE(is_in_null_space(columns, space.vector)) << trial;
        EXPECT_FALSE(std::all_of(space.vector.begin(), space.vector.end(),
                                 [](const Integer& v) { return sgn(v) == 0; }));
        ++lines;
        break;
      default:
        EXPECT_EQ(space.kind, SmallNullSpace::Kind::undecided) << trial;
        ++undecided;
    }
  }
  // Every kind was reached, so each branch above was exercised.
  EXPECT_GT(lines, 100);
  EXPECT_GT(nones, 100);
  EXPECT_GT(undecided, 100);
}

TEST(SmallNullSpace, TooLargeIsUndecided) {
  EXPECT_EQ(null_space_of(Columns{{1, 2, 3, 4}}).kind, SmallNullSpace::Kind::undecided);  // d = 4
  EXPECT_EQ(null_space_of(Columns{{1}, {2}, {3}}).kind, SmallNullSpace::Kind::undecided);  // n > d + 1
}

Constraint random_constraint(std::mt19937& random, std::size_t dim) {
  std::uniform_int_distribution<int> numerator(-6, 6);
  std::uniform_int_distribution<int> denominator(1, 4);
  Constraint c;
  while (std::all_of(c.normal.begin(), c.normal.end(), [](const Rational& v) { return sgn(v) == 0; })) {
    c.normal.clear();
    for (std::size_t k = 0; k < dim; ++k) {
      Rational value(numerator(random), denominator(random));
      value.canonicalize();
      c.normal.push_back(value);
    }
  }
  c.offset = Rational(numerator(random), denominator(random));
  c.offset.canonicalize();
  return c;
}

// The Motzkin system of non_facet_on_support, solved over Q as before minors.
std::optional<NonFacetCertificate> non_facet_over_q(const Polyhedron& cell, std::size_t j,
                                                    const std::vector<std::size_t>& support) {
  RationalMatrix system(cell.dim + 1, support.size() + 1);
  RationalVector rhs(cell.dim + 1, Rational(0));
  for (std::size_t k = 0; k < cell.dim; ++k) system(k, 0) = cell.constraints[j].normal[k];
  for (std::size_t s = 0; s < support.size(); ++s) {
    for (std::size_t k = 0; k < cell.dim; ++k) system(k, s + 1) = cell.constraints[support[s]].normal[k];
    system(cell.dim, s + 1) = 1;
  }
  rhs[cell.dim] = 1;
  const std::optional<RationalVector> solution = solve_exact(std::move(system), std::move(rhs));
  if (!solution) return std::nullopt;
  NonFacetCertificate certificate{(*solution)[0], RationalVector(cell.constraints.size())};
  Rational offset_sum = certificate.equality_multiplier * cell.constraints[j].offset;
  for (std::size_t s = 0; s < support.size(); ++s) {
    if (sgn((*solution)[s + 1]) < 0) return std::nullopt;
    certificate.multipliers[support[s]] = (*solution)[s + 1];
    offset_sum += (*solution)[s + 1] * cell.constraints[support[s]].offset;
  }
  if (sgn(offset_sum) > 0) return std::nullopt;
  return certificate;
}

// The redundancy system of redundancy_on_support, over Q.
std::optional<NonFacetCertificate> redundancy_over_q(const Polyhedron& cell, std::size_t j,
                                                     const std::vector<std::size_t>& support) {
  RationalMatrix system(cell.dim, support.size());
  for (std::size_t s = 0; s < support.size(); ++s)
    for (std::size_t k = 0; k < cell.dim; ++k) system(k, s) = cell.constraints[support[s]].normal[k];
  const std::optional<RationalVector> y = solve_exact(std::move(system), cell.constraints[j].normal);
  if (!y) return std::nullopt;
  NonFacetCertificate certificate{Rational(-1), RationalVector(cell.constraints.size())};
  Rational offset_sum = 0;
  for (std::size_t s = 0; s < support.size(); ++s) {
    if (sgn((*y)[s]) < 0) return std::nullopt;
    certificate.multipliers[support[s]] = (*y)[s];
    offset_sum += (*y)[s] * cell.constraints[support[s]].offset;
  }
  if (offset_sum > cell.constraints[j].offset) return std::nullopt;
  return certificate;
}

// a = t b for some t > 0 (the checker wants a group to hold all of its class).
bool is_positive_multiple_of(const Constraint& a, const Constraint& b) {
  std::size_t k = 0;
  while (k < b.normal.size() && sgn(b.normal[k]) == 0) ++k;
  if (k == b.normal.size()) return false;
  const Rational t = a.normal[k] / b.normal[k];
  if (sgn(t) <= 0) return false;
  for (std::size_t i = 0; i < a.normal.size(); ++i)
    if (a.normal[i] != t * b.normal[i]) return false;
  return a.offset == t * b.offset;
}

// lp::is_positive_multiple (cross-multiplied integers) against the definition
// (one ratio t > 0 for every entry), on rows that are multiples by positive,
// negative and zero factors, or multiples with one entry changed.
TEST(PositiveMultiple, AgreesWithTheRatioDefinition) {
  std::mt19937 random(29);
  std::uniform_int_distribution<int> numerator(-5, 5);
  std::uniform_int_distribution<int> denominator(1, 7);
  int multiples = 0, others = 0;
  for (int trial = 0; trial < 3000; ++trial) {
    const std::size_t dim = 1 + static_cast<std::size_t>(trial % 3);
    const Constraint b = random_constraint(random, dim);
    Rational t(numerator(random), denominator(random));
    t.canonicalize();
    Constraint a{RationalVector(dim), t * b.offset};
    for (std::size_t k = 0; k < dim; ++k) a.normal[k] = t * b.normal[k];
    if (trial % 4 == 1) a.offset += Rational(1, denominator(random));
    if (trial % 4 == 2) a.normal[static_cast<std::size_t>(trial) % dim] += Rational(1, denominator(random));
    if (trial % 4 == 3) a = random_constraint(random, dim);
    const bool expected = is_positive_multiple_of(a, b);
    EXPECT_EQ(is_positive_multiple(a, b), expected) << trial;
    (expected ? multiples : others) += 1;
  }
  EXPECT_GT(multiples, 300);
  EXPECT_GT(others, 300);
}

bool same(const std::optional<NonFacetCertificate>& a, const std::optional<NonFacetCertificate>& b) {
  if (a.has_value() != b.has_value()) return false;
  return !a || (a->equality_multiplier == b->equality_multiplier && a->multipliers == b->multipliers);
}

// Random plane and space cells whose supports are often dependent or whose
// constraint j is a combination of them (so both outcomes occur).
TEST(SupportMultipliers, EqualTheRationalEliminationsAnswer) {
  std::mt19937 random(23);
  int certified = 0, refused = 0;
  for (int trial = 0; trial < 2000; ++trial) {
    const std::size_t dim = 2 + static_cast<std::size_t>(trial % 2);
    Polyhedron cell{dim, {}};
    for (int i = 0; i < 5; ++i) cell.constraints.push_back(random_constraint(random, dim));
    std::uniform_int_distribution<int> weight(0, 3);
    Constraint combined{RationalVector(dim, Rational(0)), Rational(0)};
    for (std::size_t s = 1; s <= dim; ++s) {
      const int numerator = weight(random);
      Rational w(numerator, 1 + weight(random));
      w.canonicalize();
      for (std::size_t k = 0; k < dim; ++k) combined.normal[k] += w * cell.constraints[s].normal[k];
      combined.offset += w * cell.constraints[s].offset;
    }
    Rational shift(weight(random) - 1, 2);
    shift.canonicalize();
    combined.offset += shift;
    if (trial % 3 != 0) cell.constraints[0] = combined;
    std::vector<std::size_t> support;
    for (std::size_t s = 1; s <= std::min<std::size_t>(dim, 1 + static_cast<std::size_t>(trial % 4)); ++s)
      support.push_back(s);
    LazyIntegerRows rows(cell);
    const std::optional<NonFacetCertificate> motzkin = non_facet_on_support(cell, 0, support, &rows);
    EXPECT_TRUE(same(motzkin, non_facet_over_q(cell, 0, support))) << trial;
    EXPECT_TRUE(same(non_facet_on_support(cell, 0, support), motzkin)) << trial;
    const std::optional<NonFacetCertificate> redundancy = redundancy_on_support(cell, 0, support, &rows);
    EXPECT_TRUE(same(redundancy, redundancy_over_q(cell, 0, support))) << trial;
    const bool is_own_class = is_well_formed(cell) && std::none_of(cell.constraints.begin() + 1, cell.constraints.end(),
                                           [&](const Constraint& c) { return is_positive_multiple_of(c, cell.constraints[0]); });
    for (const auto* found : {&motzkin, &redundancy}) {
      if (!*found) {
        ++refused;
        continue;
      }
      ++certified;
      if (is_own_class) {
        EXPECT_TRUE(check_non_facet(cell, {0}, **found)) << trial;
      }
    }
  }
  EXPECT_GT(certified, 200);
  EXPECT_GT(refused, 200);
}

}  // namespace
}  // namespace pleat::lp::detail
