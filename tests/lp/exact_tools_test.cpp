// simplest_between: the rational with the smallest denominator (then the
// smallest numerator) in a closed interval; it rounds every point the oracle
// prints, so its values are pinned here.
#include "lp/detail/exact_tools.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <random>

namespace pleat::lp::detail {
namespace {

// Values checked by brute force in Python (fractions.Fraction: for k = 1, 2, ...
// the first k with ceil(low k) / k <= high).
TEST(SimplestBetween, MatchesBruteForce) {
  EXPECT_EQ(simplest_between(Rational(33, 100), Rational(34, 100)), Rational(1, 3));
  EXPECT_EQ(simplest_between(Rational(314159, 100000), Rational(314160, 100000)), Rational(355, 113));
  EXPECT_EQ(simplest_between(Rational(-7, 3), Rational(-9, 4)), Rational(-7, 3));
  EXPECT_EQ(simplest_between(Rational(5, 2), Rational(5, 2)), Rational(5, 2));
  EXPECT_EQ(simplest_between(Rational(1, 1000001), Rational(1, 1000000)), Rational(1, 1000000));
  EXPECT_EQ(simplest_between(Rational(2, 3), Rational(3, 4)), Rational(2, 3));
  EXPECT_EQ(simplest_between(Rational(7), Rational(15, 2)), Rational(7));
  EXPECT_EQ(simplest_between(Rational(-1, 2), Rational(1, 3)), Rational(0));
}

// The brute-force definition on small random intervals: nothing with a
// smaller denominator lies inside, and the answer does.
TEST(SimplestBetween, NoSmallerDenominatorInside) {
  std::mt19937 random(5);
  std::uniform_int_distribution<int> numerator(-400, 400);
  std::uniform_int_distribution<int> denominator(1, 60);
  for (int trial = 0; trial < 300; ++trial) {
    // Draws in a fixed order (the order of a call's arguments is unspecified).
    const int low_denominator = denominator(random);
    Rational low(numerator(random), low_denominator);
    const int high_denominator = denominator(random);
    Rational high(numerator(random), high_denominator);
    low.canonicalize();
    high.canonicalize();
    if (low > high) std::swap(low, high);
    const Rational best = simplest_between(low, high);
    ASSERT_LE(low, best);
    ASSERT_LE(best, high);
    for (long k = 1; k < best.get_den().get_si(); ++k) {
      // the smallest multiple of 1/k at or above low
      Integer n;
      Integer scaled = low.get_num() * k;
      mpz_cdiv_q(n.get_mpz_t(), scaled.get_mpz_t(), low.get_den_mpz_t());
      ASSERT_GT(Rational(n, k), high) << "1/" << k << " step fits in [" << low << ", " << high << "]";
    }
  }
}

// short_rational_near builds its convergents with no gcd (coprime by the
// convergents' determinant identity, denominator positive): each result must
// equal its own canonical form and lie within the radius (in double, as it
// is chosen: a radius below the value's last bits widens to them). On
// 3.14159265 with radius 1e-6 the first convergent that close is 355/113
// (Python's fractions: limit_denominator(112) gives 333/106, 8e-5 away;
// limit_denominator(113) gives 355/113, 3e-7 away).
TEST(ShortRationalNear, ConvergentsAreCanonicalAndNear) {
  EXPECT_EQ(short_rational_near(3.14159265, 1e-6), Rational(355, 113));
  std::mt19937 random(11);
  std::uniform_real_distribution<double> value(-1e6, 1e6);
  std::uniform_real_distribution<double> exponent(-14, 2);
  for (int sample = 0; sample < 20000; ++sample) {
    const double x = sample % 3 == 0 ? value(random) / 1e6 : value(random);
    const double radius = std::pow(10.0, exponent(random)) * (1 + std::fabs(x)) * 1e-3;
    const Rational r = short_rational_near(x, radius);
    Rational canonical = r;
    canonical.canonicalize();
    ASSERT_EQ(mpz_cmp(r.get_num_mpz_t(), canonical.get_num_mpz_t()), 0) << x << " " << radius;
    ASSERT_EQ(mpz_cmp(r.get_den_mpz_t(), canonical.get_den_mpz_t()), 0) << x << " " << radius;
    ASSERT_GT(sgn(r.get_den()), 0);
    EXPECT_LE(std::fabs(to_double(r) - x), radius * (1 + 1e-12) + 4 * 0x1p-52 * std::fabs(x)) << x << " " << radius;
  }
}

}  // namespace
}  // namespace pleat::lp::detail
