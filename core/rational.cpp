// Exact number parsing and formatting (spec: network-format.md, "Every number
// is exact"), and the only conversions between Rational and double.
#include "core/rational.hpp"
#include "core/thread_caches.hpp"

#include <mpfr.h>

#include <cmath>
#include <cstdio>
#include <cstddef>
#include <string>

namespace pleat {
namespace {

constexpr long max_decimal_exponent = 4000;

bool is_digit(char c) { return c >= '0' && c <= '9'; }

// Length of the run of decimal digits starting at `from`.
std::size_t digit_run(std::string_view text, std::size_t from) {
  std::size_t end = from;
  while (end < text.size() && is_digit(text[end])) ++end;
  return end - from;
}

Integer integer_from_digits(std::string_view digits) {
  if (digits.empty()) return Integer(0);
  return Integer(std::string(digits), 10);
}

// The exponent's digits, read one at a time so that a huge exponent is
// rejected after a few digits instead of being materialised.
long parse_exponent(std::string_view text, std::string_view whole) {
  bool is_negative = false;
  std::size_t at = 0;
  if (at < text.size() && (text[at] == '+' || text[at] == '-')) {
    is_negative = text[at] == '-';
    ++at;
  }
  if (at == text.size())
    throw input_error("not a number \"" + std::string(whole) + "\": exponent has no digits");
  long value = 0;
  for (; at < text.size(); ++at) {
    if (!is_digit(text[at]))
      throw input_error("not a number \"" + std::string(whole) + "\": unexpected character " +
                        quoted_character(text.substr(at)) + " in the exponent");
    value = value * 10 + (text[at] - '0');
    if (value > max_decimal_exponent)
      throw input_error("not a number \"" + std::string(whole) +
                        "\": decimal exponent beyond +/-4000");
  }
  return is_negative ? -value : value;
}

Rational power_of_ten(long exponent) {
  Integer power;
  mpz_ui_pow_ui(power.get_mpz_t(), 10, static_cast<unsigned long>(exponent < 0 ? -exponent : exponent));
  if (exponent >= 0) return Rational(power);
  Rational result(Integer(1), power);
  result.canonicalize();
  return result;
}

std::string quoted(std::string_view text) { return "\"" + std::string(text) + "\""; }

}  // namespace

std::string quoted_character(std::string_view text) {
  const auto byte = [&](std::size_t k) { return static_cast<unsigned char>(text[k]); };
  const unsigned char lead = byte(0);
  std::size_t length = 1;
  char32_t code = lead;
  if (lead >= 0xC2 && lead <= 0xDF) length = 2, code = lead & 0x1F;
  else if (lead >= 0xE0 && lead <= 0xEF) length = 3, code = lead & 0x0F;
  else if (lead >= 0xF0 && lead <= 0xF4) length = 4, code = lead & 0x07;
  bool is_sequence = length > 1 && text.size() >= length;
  for (std::size_t k = 1; is_sequence && k < length; ++k) {
    is_sequence = (byte(k) & 0xC0) == 0x80;
    code = (code << 6) | (byte(k) & 0x3F);
  }
  const char32_t least[] = {0, 0, 0x80, 0x800, 0x10000};
  // Not overlong, not a surrogate, not beyond U+10FFFF.
  is_sequence = is_sequence && code >= least[length] && code <= 0x10FFFF && !(code >= 0xD800 && code <= 0xDFFF);
  std::string named = "'";
  named.append(text.data(), is_sequence ? length : 1);
  named += '\'';
  if (is_sequence) {
    char hex[16];
    std::snprintf(hex, sizeof hex, " (U+%04X)", static_cast<unsigned>(code));
    named += hex;
  }
  return named;
}

Rational parse_rational(std::string_view text) {
  if (text.empty()) throw input_error("not a number: empty text");
  const std::string_view whole = text;
  // The grammar has no '+' sign ([-]?...): say so rather than "expected
  // digits", which left '+0' looking like a number refused for its digits.
  if (text.front() == '+') {
    const std::string_view unsigned_text = whole.substr(1);
    bool reads = !unsigned_text.empty() && unsigned_text.front() != '+' && unsigned_text.front() != '-';
    try {
      if (reads) (void)parse_rational(unsigned_text);
    } catch (const input_error&) {
      reads = false;
    }
    throw input_error("not a number " + quoted(whole) + ": a leading '+' is not part of a number" +
                      (reads ? "; write " + quoted(unsigned_text) : std::string()));
  }
  bool is_negative = false;
  if (text.front() == '-') {
    is_negative = true;
    text.remove_prefix(1);
  }
  const std::size_t integer_length = digit_run(text, 0);
  std::string_view integer_digits = text.substr(0, integer_length);
  std::string_view rest = text.substr(integer_length);

  Rational value;
  if (!rest.empty() && rest.front() == '/') {
    // [-]?DIGITS/DIGITS
    rest.remove_prefix(1);
    const std::size_t denominator_length = digit_run(rest, 0);
    if (integer_length == 0 || denominator_length == 0 || denominator_length != rest.size())
      throw input_error("not a number " + quoted(whole) + ": a fraction is DIGITS/DIGITS");
    Integer denominator = integer_from_digits(rest);
    if (denominator == 0) throw input_error("not a number " + quoted(whole) + ": zero denominator");
    value = Rational(integer_from_digits(integer_digits), denominator);
    value.canonicalize();
  } else {
    // [-]?(DIGITS | DIGITS.DIGITS? | .DIGITS)([eE][+-]?DIGITS)?
    std::string_view fraction_digits;
    if (!rest.empty() && rest.front() == '.') {
      rest.remove_prefix(1);
      const std::size_t fraction_length = digit_run(rest, 0);
      fraction_digits = rest.substr(0, fraction_length);
      rest.remove_prefix(fraction_length);
    }
    if (integer_digits.empty() && fraction_digits.empty())
      throw input_error("not a number " + quoted(whole) + ": expected digits");
    long exponent = 0;
    if (!rest.empty() && (rest.front() == 'e' || rest.front() == 'E')) {
      rest.remove_prefix(1);
      exponent = parse_exponent(rest, whole);
      rest = {};
    }
    if (!rest.empty())
      throw input_error("not a number " + quoted(whole) + ": unexpected character " + quoted_character(rest));
    // Digits with the point removed, times 10^(exponent - fraction length).
    Integer mantissa = integer_from_digits(std::string(integer_digits) + std::string(fraction_digits));
    value = Rational(mantissa) * power_of_ten(exponent - static_cast<long>(fraction_digits.size()));
  }
  if (is_negative) value = -value;
  return value;
}

std::string format_rational(const Rational& value) { return value.get_str(10); }

std::string format_rational_brief(const Rational& value, std::size_t most) {
  std::string exact = format_rational(value);
  if (exact.size() <= most) return exact;
  free_number_caches_at_thread_exit();  // MPFR pools integers per thread
  mpfr_t rounded;
  mpfr_init2(rounded, 64);
  mpfr_set_q(rounded, value.get_mpq_t(), MPFR_RNDN);
  mpfr_exp_t exponent = 0;
  char* digits = mpfr_get_str(nullptr, &exponent, 10, 6, rounded, MPFR_RNDN);
  std::string text = digits;
  mpfr_free_str(digits);
  mpfr_clear(rounded);
  std::string sign;
  if (!text.empty() && text[0] == '-') {
    sign = "-";
    text.erase(0, 1);
  }
  // mpfr_get_str's digits d1 d2 ... mean 0.d1d2... * 10^exponent (value is nonzero: "0" is short).
  const long power = static_cast<long>(exponent) - 1;
  const std::size_t numerator_digits = value.get_num().get_str().size() - (sgn(value) < 0 ? 1 : 0);
  const std::string size = value.get_den() == 1
                         ? "an integer of " + std::to_string(numerator_digits) + " digits"
                         : "a fraction of " + std::to_string(numerator_digits) + "/" +
                               std::to_string(value.get_den().get_str().size()) + " digits";
  return "about " + sign + text.substr(0, 1) + "." + text.substr(1) + "e" + (power < 0 ? "-" : "+") +
         std::to_string(power < 0 ? -power : power) + " (" + size + ")";
}

double to_double(const Rational& value) {
  // MPFR rounds correctly to 53 bits (mpq_get_d would truncate). Below the
  // normal range the second rounding to a subnormal may be off by one ulp.
  free_number_caches_at_thread_exit();  // MPFR pools integers per thread
  mpfr_t rounded;
  mpfr_init2(rounded, 53);
  mpfr_set_q(rounded, value.get_mpq_t(), MPFR_RNDN);
  const double result = mpfr_get_d(rounded, MPFR_RNDN);
  mpfr_clear(rounded);
  return result;
}

Rational rational_from_double(double value) {
  if (!std::isfinite(value)) throw input_error("not a finite number (NaN or infinity)");
  Rational exact;
  mpq_set_d(exact.get_mpq_t(), value);  // exact: every finite double is dyadic
  return exact;
}

DoubleVector to_double(const RationalVector& values) {
  DoubleVector out;
  out.reserve(values.size());
  for (const auto& value : values) out.push_back(to_double(value));
  return out;
}

}  // namespace pleat
