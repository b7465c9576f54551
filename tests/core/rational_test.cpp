// The exact number grammar of spec/network-format.md and the double bridges.
#include "core/rational.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <cmath>
#include <limits>
#include <string>

namespace pleat {
namespace {

// parse_rational's refusal of `text`, or "accepted".
std::string message(const std::string& text) {
  try {
    parse_rational(text);
  } catch (const input_error& error) {
    return std::string(error.what());
  }
  return std::string("accepted");
}

Rational fraction(long numerator, long denominator) {
  Rational value(numerator, denominator);
  value.canonicalize();
  return value;
}

TEST(ParseRational, TenTimesOneTenthIsExactlyOne) {
  Rational sum = 0;
  for (int i = 0; i < 10; ++i) sum += parse_rational("0.1");
  EXPECT_EQ(sum, Rational(1));
  EXPECT_EQ(parse_rational("0.1"), fraction(1, 10));
  // The double 0.1 is not 1/10: the bridge from double must show the difference.
  EXPECT_NE(rational_from_double(0.1), fraction(1, 10));
}

TEST(ParseRational, DecimalForms) {
  EXPECT_EQ(parse_rational("7"), Rational(7));
  EXPECT_EQ(parse_rational("-7"), Rational(-7));
  EXPECT_EQ(parse_rational("0"), Rational(0));
  EXPECT_EQ(parse_rational("-0"), Rational(0));
  EXPECT_EQ(parse_rational("3."), Rational(3));
  EXPECT_EQ(parse_rational(".25"), fraction(1, 4));
  EXPECT_EQ(parse_rational("-.5e1"), Rational(-5));
  EXPECT_EQ(parse_rational("1e-3"), fraction(1, 1000));
  EXPECT_EQ(parse_rational("1E+3"), Rational(1000));
  EXPECT_EQ(parse_rational("2.50e-1"), fraction(1, 4));
  EXPECT_EQ(parse_rational("0012.5"), fraction(25, 2));
  EXPECT_EQ(parse_rational("1e4000"), Rational(Integer("1" + std::string(4000, '0'))));
}

TEST(ParseRational, TinyAndHugeStayExact) {
  Rational tiny = parse_rational("1e-30");
  EXPECT_EQ(tiny.get_num(), 1);
  EXPECT_EQ(tiny.get_den(), Integer("1" + std::string(30, '0')));
  const std::string thirty_digits = "123456789012345678901234567890";
  EXPECT_EQ(parse_rational(thirty_digits), Rational(Integer(thirty_digits)));
}

TEST(ParseRational, FractionsAreReduced) {
  EXPECT_EQ(parse_rational("2/4"), fraction(1, 2));
  EXPECT_EQ(format_rational(parse_rational("2/4")), "1/2");
  EXPECT_EQ(parse_rational("-6/3"), Rational(-2));
  EXPECT_EQ(parse_rational("0/5"), Rational(0));
}

TEST(ParseRational, RejectsBadGrammar) {
  for (const char* bad : {"1/0", "1.2.3", " 1", "1 ", "+1", "0x10", "1e", "", "NaN", "nan", "inf",
                          "Infinity", "-", ".", "-.", "1/", "/2", "1/-2", "-1/+2", "1.5/2", "1/2e3",
                          "1e+", "1e1.5", "--1", "1,5", "e5", "1_000"}) {
    EXPECT_THROW(parse_rational(bad), input_error) << "accepted \"" << bad << "\"";
  }
}

TEST(ParseRational, ZeroDenominatorMessage) {
  try {
    parse_rational("3/0");
    FAIL() << "3/0 accepted";
  } catch (const input_error& error) {
    EXPECT_NE(std::string(error.what()).find("zero denominator"), std::string::npos) << error.what();
  }
}

// The grammar has no '+' sign: '+0' was refused with "expected digits", as
// if its digits were at fault. The message names the sign, and suggests the
// number without it when that reads.
TEST(ParseRational, LeadingPlusNamedAsTheFault) {
  EXPECT_EQ(message("+0"), "not a number \"+0\": a leading '+' is not part of a number; write \"0\"");
  EXPECT_EQ(message("+1/2"), "not a number \"+1/2\": a leading '+' is not part of a number; write \"1/2\"");
  EXPECT_EQ(message("+.5e+1"), "not a number \"+.5e+1\": a leading '+' is not part of a number; write \".5e+1\"");
  for (const char* bad : {"+", "+-1", "++1", "+abc", "+1/0"})
    EXPECT_EQ(message(bad), std::string("not a number \"") + bad + "\": a leading '+' is not part of a number") << bad;
}

// The unexpected character is named whole, with its code point (the message
// named one byte of a multibyte character, '\xe2' for '€'); a byte that
// starts no valid UTF-8 sequence is named alone.
TEST(ParseRational, UnexpectedCharacterNamedWhole) {
  EXPECT_EQ(message("1\u20AC"), "not a number \"1\u20AC\": unexpected character '\u20AC' (U+20AC)");
  EXPECT_EQ(message("1\u00A0"), "not a number \"1\u00A0\": unexpected character '\u00A0' (U+00A0)");
  EXPECT_EQ(message("1e\u22122"), "not a number \"1e\u22122\": unexpected character '\u2212' (U+2212) in the exponent");
  EXPECT_EQ(message("2\U0001F600"), "not a number \"2\U0001F600\": unexpected character '\U0001F600' (U+1F600)");
  EXPECT_EQ(message("1x"), "not a number \"1x\": unexpected character 'x'");
  EXPECT_EQ(message("1\xff"), "not a number \"1\xff\": unexpected character '\xff'");
  EXPECT_EQ(message("1\xe2\x82"), "not a number \"1\xe2\x82\": unexpected character '\xe2'");  // cut short
  EXPECT_EQ(message("1\xc0\xb1"), "not a number \"1\xc0\xb1\": unexpected character '\xc0'");  // overlong
  EXPECT_EQ(message("1\xed\xa0\x80"), "not a number \"1\xed\xa0\x80\": unexpected character '\xed'");  // surrogate
}

TEST(ParseRational, HugeExponentsRejectedFast) {
  const auto start = std::chrono::steady_clock::now();
  EXPECT_THROW(parse_rational("1e999999"), input_error);
  EXPECT_THROW(parse_rational("1e-999999"), input_error);
  EXPECT_THROW(parse_rational("1e4001"), input_error);
  EXPECT_THROW(parse_rational("1e-4001"), input_error);
  EXPECT_THROW(parse_rational("1e" + std::string(10000, '9')), input_error);
  const auto elapsed = std::chrono::steady_clock::now() - start;
  EXPECT_LT(std::chrono::duration<double>(elapsed).count(), 0.05);
  // Leading zeros in the exponent are harmless: the value is what counts.
  EXPECT_EQ(parse_rational("1e" + std::string(10000, '0') + "2"), Rational(100));
  EXPECT_EQ(parse_rational("1e-4000"), Rational(Integer(1), Integer("1" + std::string(4000, '0'))));
}

TEST(FormatRational, LowestTermsPositiveDenominator) {
  EXPECT_EQ(format_rational(fraction(6, -16)), "-3/8");
  EXPECT_EQ(format_rational(Rational(-7)), "-7");
  EXPECT_EQ(format_rational(Rational(0)), "0");
  for (const char* text : {"-3/8", "7", "1/1000000000000000000000000000000", "-123456789012345678901234567890"})
    EXPECT_EQ(format_rational(parse_rational(text)), text);
}

// Messages print a long exact number as an approximation and its size:
// --dist box:0,1e400 printed 401 digits.
TEST(FormatRational, BriefKeepsShortNumbersAndApproximatesLongOnes) {
  EXPECT_EQ(format_rational_brief(parse_rational("-3/8")), "-3/8");
  EXPECT_EQ(format_rational_brief(parse_rational("1.00000000000000000001")),
            "100000000000000000001/100000000000000000000");  // 43 characters: exact
  EXPECT_EQ(format_rational_brief(parse_rational("1e400")), "about 1.00000e+400 (an integer of 401 digits)");
  EXPECT_EQ(format_rational_brief(parse_rational("-1e400")), "about -1.00000e+400 (an integer of 401 digits)");
  EXPECT_EQ(format_rational_brief(Rational(parse_rational("-1/3") / parse_rational("1e60"))), "about -3.33333e-61 (a fraction of 1/61 digits)");
  EXPECT_EQ(format_rational_brief(parse_rational("123456789e-60")),
            "about 1.23457e-52 (a fraction of 9/61 digits)");
  EXPECT_EQ(format_rational_brief(parse_rational("1e40"), 8), "about 1.00000e+40 (an integer of 41 digits)");
}

TEST(Doubles, FromDoubleIsExactDyadic) {
  EXPECT_EQ(rational_from_double(0.375), fraction(3, 8));
  EXPECT_EQ(rational_from_double(-2.0), Rational(-2));
  // 0.1 as a double is 3602879701896397 / 2^55 (IEEE 754 binary64 rounding of 1/10).
  Rational expected(Integer("3602879701896397"), Integer(1) << 55);
  expected.canonicalize();
  EXPECT_EQ(rational_from_double(0.1), expected);
  EXPECT_THROW(rational_from_double(std::numeric_limits<double>::quiet_NaN()), input_error);
  EXPECT_THROW(rational_from_double(std::numeric_limits<double>::infinity()), input_error);
  EXPECT_THROW(rational_from_double(-std::numeric_limits<double>::infinity()), input_error);
}

TEST(Doubles, ToDoubleRoundsToNearest) {
  // The double nearest 1/10 lies above it, so a truncating conversion (mpq_get_d)
  // would return the double below 0.1 and fail here.
  EXPECT_EQ(to_double(fraction(1, 10)), 0.1);
  EXPECT_EQ(to_double(fraction(-3, 8)), -0.375);
  EXPECT_EQ(to_double(fraction(1, 3)), 1.0 / 3.0);
  EXPECT_EQ(to_double(fraction(2, 3)), 2.0 / 3.0);
  // Round trip through the exact bridge for awkward doubles.
  for (double value : {0.1, -1e-300, 1.7976931348623157e308, 4.9406564584124654e-324, 123.456})
    EXPECT_EQ(to_double(rational_from_double(value)), value);
  DoubleVector converted = to_double(RationalVector{fraction(1, 2), Rational(-3)});
  ASSERT_EQ(converted.size(), 2u);
  EXPECT_EQ(converted[0], 0.5);
  EXPECT_EQ(converted[1], -3.0);
}

// What Rational keeps of mpq_class (its refusals of doubles are compile-time
// checks: tests/core/rational_refuses_double/).
TEST(RationalType, IntegersExpressionsAndMpqInteropStillWork) {
  const Rational third(1, 3);
  EXPECT_EQ(third * 2 + 1, fraction(5, 3));  // integer operands reach gmpxx's exact overloads
  EXPECT_TRUE(third > 0 && third < 1 && 2 * third != 1);
  Rational sum = third + fraction(1, 6);  // a gmpxx expression
  EXPECT_EQ(sum, fraction(1, 2));
  sum += 1;
  EXPECT_EQ(sum, fraction(3, 2));
  const mpq_class base(5, 7);
  Rational from_base = base;  // a function of gmpxx returning mpq_class
  EXPECT_EQ(from_base, fraction(5, 7));
  mpq_t raw;
  mpq_init(raw);
  mpq_set(raw, third.get_mpq_t());
  EXPECT_EQ(Rational(raw), third);
  mpq_clear(raw);
  EXPECT_EQ(Rational("-2/3"), fraction(-2, 3));  // gmpxx does not canonicalise strings
  Rational a(1), b(2);
  swap(a, b);  // Rational's own swap (mpq_swap)
  EXPECT_EQ(a, Rational(2));
  EXPECT_EQ(b, Rational(1));
}

}  // namespace
}  // namespace pleat
