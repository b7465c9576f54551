// Exact numbers for pleat: GMP rationals (gmpxx), and the only ways to move
// between them and doubles. Every function here is exact unless its name ends
// in _double.
#pragma once

#include "core/errors.hpp"

#include <gmpxx.h>

#include <concepts>
#include <cstddef>
#include <string>
#include <string_view>
#include <type_traits>
#include <utility>
#include <vector>

namespace pleat {

// An exact rational: GMP's mpq_class, always canonical (lowest terms, positive
// denominator), that refuses doubles at compile time, so that
// rational_from_double and to_double below are the only bridges. Everything
// else of mpq_class is inherited unchanged: constructors from integers,
// integer pairs (Rational(1, 3)), strings (Rational("1/3")), mpq_t and gmpxx
// expressions (Rational r = a + b;), the arithmetic, comparisons and
// get_mpq_t(). Refused: constructing from or assigning a float, double or long
// double (Rational r = 0.1; RationalVector v{0.5}), get_d(), and mixing a
// Rational with a floating-point number in + - * / == != < <= > >= and the
// compound assignments (r > 0.2, r * 0.5, 0.5 + r, r += 0.5).
// Not refused: a floating-point number mixed with a gmpxx expression rather
// than a Rational, e.g. (a + b) > 0.2 or 0.5 * (a - b), which gmpxx's own
// templates still accept; refusing those would need a type that owns its
// arithmetic instead of inheriting gmpxx's.
// Zero cost: no virtual functions, the same size and layout as mpq_class, and
// the same code (every operation is mpq_class's).
class Rational : public mpq_class {
 public:
  using mpq_class::mpq_class;
  Rational() = default;
  // A function of gmpxx returning mpq_class (a base, which inherited
  // constructors do not convert from).
  Rational(const mpq_class& value) : mpq_class(value) {}
  Rational(mpq_class&& value) : mpq_class(std::move(value)) {}

  Rational(float) = delete;
  Rational(double) = delete;
  Rational(long double) = delete;

  using mpq_class::operator=;
  Rational& operator=(float) = delete;
  Rational& operator=(double) = delete;
  Rational& operator=(long double) = delete;

  using mpq_class::operator+=;
  using mpq_class::operator-=;
  using mpq_class::operator*=;
  using mpq_class::operator/=;
  Rational& operator+=(float) = delete;
  Rational& operator+=(double) = delete;
  Rational& operator-=(float) = delete;
  Rational& operator-=(double) = delete;
  Rational& operator*=(float) = delete;
  Rational& operator*=(double) = delete;
  Rational& operator/=(float) = delete;
  Rational& operator/=(double) = delete;

  double get_d() const = delete;  // use to_double, which says it rounds

  // mpq_swap, as gmpxx's swap for mpq_class (std::swap's three moves would
  // otherwise be chosen for the derived type).
  friend void swap(Rational& a, Rational& b) noexcept { a.mpq_class::swap(b); }
};

static_assert(sizeof(Rational) == sizeof(mpq_class) && std::is_standard_layout_v<Rational>,
              "Rational adds no data to mpq_class");

// Rational (op) floating point and floating point (op) Rational do not
// compile. Templates constrained to floating-point types, so that an integer
// operand still reaches gmpxx's exact overloads; for a float they win over
// gmpxx's templates because those bind a Rational only as a base class.
#define PLEAT_REFUSE_FLOATING_OPERATOR(op)                        \
  template <std::floating_point Floating>                         \
  void operator op(const Rational&, Floating) = delete;           \
  template <std::floating_point Floating>                         \
  void operator op(Floating, const Rational&) = delete;
PLEAT_REFUSE_FLOATING_OPERATOR(+)
PLEAT_REFUSE_FLOATING_OPERATOR(-)
PLEAT_REFUSE_FLOATING_OPERATOR(*)
PLEAT_REFUSE_FLOATING_OPERATOR(/)
PLEAT_REFUSE_FLOATING_OPERATOR(==)
PLEAT_REFUSE_FLOATING_OPERATOR(!=)
PLEAT_REFUSE_FLOATING_OPERATOR(<)
PLEAT_REFUSE_FLOATING_OPERATOR(<=)
PLEAT_REFUSE_FLOATING_OPERATOR(>)
PLEAT_REFUSE_FLOATING_OPERATOR(>=)
#undef PLEAT_REFUSE_FLOATING_OPERATOR

using Integer = mpz_class;
using RationalVector = std::vector<Rational>;
using DoubleVector = std::vector<double>;

// Parses the spec's exact number grammar (whole string, no spaces):
//   [-]?(DIGITS | DIGITS.DIGITS? | .DIGITS)([eE][+-]?DIGITS)?   or   [-]?DIGITS/DIGITS
// A decimal exponent beyond +/-4000 and a zero denominator are rejected.
// Throws input_error whose message says what is wrong (without a location:
// callers prefix one). Exact: "0.1" is 1/10.
Rational parse_rational(std::string_view text);

// For messages: the character text starts with (precondition: not empty),
// quoted: a whole UTF-8 sequence with its code point ("'€' (U+20AC)"), a
// byte that starts no valid sequence alone ("'\xff'", escaped where printed).
std::string quoted_character(std::string_view text);

// "-3/8", "7": lowest terms, positive denominator. Exact.
std::string format_rational(const Rational& value);

// For messages: format_rational when it is at most `most` characters, else
// a decimal approximation with its size, "about 1.00000e+400 (an integer of
// 401 digits)", "about -3.33333e-1 (a fraction of 120/121 digits)": an
// error about a number given as 1e400 does not print 401 digits.
std::string format_rational_brief(const Rational& value, std::size_t most = 48);

// The nearest double, correctly rounded (MPFR; mpq_get_d would truncate),
// except below the normal range, where it may be one ulp off. Not exact, by name.
double to_double(const Rational& value);

// The exact rational value of a finite double (every double is dyadic).
// Throws input_error for NaN or infinity.
Rational rational_from_double(double value);

DoubleVector to_double(const RationalVector& values);

}  // namespace pleat
