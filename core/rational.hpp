// Exact numbers for pleat: GMP rationals (gmpxx), and the only ways to move
// between them and doubles. Every function here is exact unless its name ends
// in _double.
#pragma once

#include "core/errors.hpp"

#include <gmpxx.h>

#include <string>
#include <string_view>
#include <vector>

namespace pleat {

using Rational = mpq_class;  // always canonical (lowest terms, positive denominator)
using Integer = mpz_class;
using RationalVector = std::vector<Rational>;
using DoubleVector = std::vector<double>;

// Parses the spec's exact number grammar (whole string, no spaces):
//   [-]?(DIGITS | DIGITS.DIGITS? | .DIGITS)([eE][+-]?DIGITS)?   or   [-]?DIGITS/DIGITS
// A decimal exponent beyond +/-4000 and a zero denominator are rejected.
// Throws input_error whose message says what is wrong (without a location:
// callers prefix one). Exact: "0.1" is 1/10.
Rational parse_rational(std::string_view text);

// "-3/8", "7": lowest terms, positive denominator. Exact.
std::string format_rational(const Rational& value);

// Nearest double (round to nearest by GMP's mpq_get_d truncation is not
// correctly rounded; this is within one ulp). Not exact, by name.
double to_double(const Rational& value);

// The exact rational value of a finite double (every double is dyadic).
// Throws input_error for NaN or infinity.
Rational rational_from_double(double value);

DoubleVector to_double(const RationalVector& values);

}  // namespace pleat
