// Refused: a double added in place (y += 0.5).
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  pleat::Rational y = r; y += 0.5; (void)x;
#else
  pleat::Rational y = r; y += pleat::Rational(1, 2); (void)x;
#endif
}
