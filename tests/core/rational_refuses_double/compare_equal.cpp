// Refused: a Rational compared with a double (r == x, and x == r reversed).
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  const bool b = r == x; (void)b;
#else
  const bool b = pleat::to_double(r) == x; (void)b;
#endif
}
