// Refused: a double compared with a Rational (x < r).
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  const bool b = x < r; (void)b;
#else
  const bool b = x < pleat::to_double(r); (void)b;
#endif
}
