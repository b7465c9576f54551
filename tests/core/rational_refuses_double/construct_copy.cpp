// Refused: a Rational copy-initialised from a double.
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  pleat::Rational y = x; (void)y; (void)r;
#else
  pleat::Rational y = pleat::rational_from_double(x); (void)y; (void)r;
#endif
}
