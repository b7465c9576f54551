// simplest_between: the rational with the smallest denominator (then the
// smallest numerator) in a closed interval; it rounds every point the oracle
// prints, so its values are pinned here.
#include "lp/detail/exact_tools.hpp"

#include <gtest/gtest.h>

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

}  // namespace
}  // namespace pleat::lp::detail
