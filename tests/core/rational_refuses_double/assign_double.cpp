// Refused: a double assigned to a Rational.
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  pleat::Rational y; y = x; (void)r;
#else
  pleat::Rational y; y = pleat::rational_from_double(x); (void)r;
#endif
}
