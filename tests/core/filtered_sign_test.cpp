// Filtered signs: a decided sign must equal the exact one (checked here with
// GMP on random and on adversarial inputs), and the filter must decline what
// its error bound cannot settle (near-cancellation, values outside the window).
#include "core/filtered_sign.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <random>
#include <vector>

namespace pleat {
namespace {

Rational random_rational(std::mt19937_64& random) {
  std::uniform_int_distribution<long> numerator(-1'000'000'000'000L, 1'000'000'000'000L);
  std::uniform_int_distribution<long> denominator(1, 1'000'000'007L);
  const long d = denominator(random);  // drawn first: a call's argument order is unspecified
  Rational value(numerator(random), d);
  value.canonicalize();
  return value;
}

TEST(FilteredSign, DecidedSignsAreExact) {
  std::mt19937_64 random(11);
  std::size_t decided = 0;
  for (int trial = 0; trial < 2000; ++trial) {
    std::vector<Rational> a(3), x(3);
    for (auto& v : a) v = random_rational(random);
    for (auto& v : x) v = random_rational(random);
    Rational c = random_rational(random);
    // Every fourth case: c chosen so that the sum is exactly 0 (cancellation).
    if (trial % 4 == 0) c = -(a[0] * x[0] + a[1] * x[1] + a[2] * x[2]);
    const Rational exact = a[0] * x[0] + a[1] * x[1] + a[2] * x[2] + c;
    std::vector<double> ai, xi;
    for (const auto& v : a) ai.push_back(filter_image(v));
    for (const auto& v : x) xi.push_back(filter_image(v));
    const std::optional<int> sign = filtered_affine_sign(ai.data(), xi.data(), 3, filter_image(c));
    if (trial % 4 == 0 && sgn(exact) == 0) {
      EXPECT_FALSE(sign.has_value() && *sign != 0);
    }
    if (sign) {
      ++decided;
      ASSERT_EQ(*sign, sgn(exact)) << "trial " << trial;
    }
  }
  EXPECT_GT(decided, 1400u);  // the random (non-cancelling) three quarters
}

TEST(FilteredSign, DeclinesNearCancellation) {
  // 1 + 2^-60 - 1 > 0 exactly, but the images cannot tell.
  const Rational tiny(Rational(1) / Rational(Integer(1) << 60));
  const double a[2] = {filter_image(Rational(1) + tiny), filter_image(Rational(-1))};
  const double x[2] = {1.0, 1.0};
  EXPECT_FALSE(filtered_affine_sign(a, x, 2, 0.0).has_value());
  // A sum of exact zeros is exactly zero.
  const double zeros[2] = {0.0, 0.0};
  EXPECT_EQ(filtered_affine_sign(zeros, x, 2, 0.0), std::optional<int>(0));
}

TEST(FilteredSign, DeclinesValuesOutsideTheWindow) {
  const Rational huge(Integer(1) << 400);
  const Rational minute = Rational(1) / huge;
  EXPECT_TRUE(std::isnan(filter_image(huge)));
  EXPECT_TRUE(std::isnan(filter_image(minute)));
  const double a[1] = {filter_image(minute)};
  const double x[1] = {1.0};
  EXPECT_FALSE(filtered_affine_sign(a, x, 1, 1.0).has_value());
  EXPECT_EQ(filter_image(Rational(0)), 0.0);
}

TEST(FilteredSign, DeterminantsMatchExact) {
  std::mt19937_64 random(3);
  for (int trial = 0; trial < 1000; ++trial) {
    std::vector<Rational> m(9);
    for (auto& v : m) v = random_rational(random);
    if (trial % 3 == 0) {  // third row = first + second: determinant exactly 0
      for (int k = 0; k < 3; ++k) m[6 + k] = m[k] + m[3 + k];
    }
    const Rational d2 = m[0] * m[4] - m[1] * m[3];
    const Rational d3 = m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) +
                        m[2] * (m[3] * m[7] - m[4] * m[6]);
    std::vector<double> image;
    for (const auto& v : m) image.push_back(filter_image(v));
    if (const auto sign = filtered_determinant_sign(image[0], image[1], image[3], image[4])) {
      ASSERT_EQ(*sign, sgn(d2));
    }
    if (const auto sign = filtered_determinant_sign(image.data(), image.data() + 3, image.data() + 6)) {
      ASSERT_EQ(*sign, sgn(d3)) << "trial " << trial;
    }
  }
}

// The 4 x 4 filter against the exact determinant (Laplace expansion along the
// first row, in rationals): exactly singular matrices (row 3 = row 0 + row 1)
// and nearly singular ones (plus 2^-60) must never get a wrong sign.
TEST(FilteredSign, FourByFourDeterminantsMatchExact) {
  std::mt19937_64 random(5);
  const auto det3 = [](const std::vector<Rational>& m, int r0, int r1, int r2, int skip) -> Rational {
    int cols[3], n = 0;
    for (int c = 0; c < 4; ++c)
      if (c != skip) cols[n++] = c;
    const auto at = [&](int r, int c) -> const Rational& { return m[4 * r + cols[c]]; };
    return at(r0, 0) * (at(r1, 1) * at(r2, 2) - at(r1, 2) * at(r2, 1)) -
           at(r0, 1) * (at(r1, 0) * at(r2, 2) - at(r1, 2) * at(r2, 0)) +
           at(r0, 2) * (at(r1, 0) * at(r2, 1) - at(r1, 1) * at(r2, 0));
  };
  int decided = 0;
  for (int trial = 0; trial < 1000; ++trial) {
    std::vector<Rational> m(16);
    for (auto& v : m) v = random_rational(random);
    if (trial % 3 == 0)
      for (int k = 0; k < 4; ++k) m[12 + k] = m[k] + m[4 + k];
    if (trial % 3 == 1)
      for (int k = 0; k < 4; ++k) m[12 + k] = m[k] + m[4 + k] + Rational(1, Integer(1) << 60);
    Rational det = 0;
    for (int c = 0; c < 4; ++c) {
      const Rational minor = det3(m, 1, 2, 3, c);
      det += (c % 2 ? -1 : 1) * m[c] * minor;
    }
    std::vector<double> image;
    for (const auto& v : m) image.push_back(filter_image(v));
    if (const auto sign = filtered_determinant_sign(image.data(), image.data() + 4, image.data() + 8, image.data() + 12)) {
      ASSERT_EQ(*sign, sgn(det)) << "trial " << trial;
      ++decided;
    }
  }
  EXPECT_GT(decided, 300);  // the well-conditioned third at least
}

}  // namespace
}  // namespace pleat
