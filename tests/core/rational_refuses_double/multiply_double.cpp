// Refused: a Rational times a double (r * 0.5).
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  pleat::Rational y = r * 0.5; (void)y; (void)x;
#else
  pleat::Rational y = r * pleat::Rational(1, 2); (void)y; (void)x;
#endif
}
