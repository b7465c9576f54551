// Refused: a Rational compared with a double (r > 0.2).
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  const bool b = r > 0.2; (void)b; (void)x;
#else
  const bool b = r > pleat::Rational(1, 5); (void)b; (void)x;
#endif
}
