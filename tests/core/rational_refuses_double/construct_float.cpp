// Refused: a Rational constructed from a float.
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  pleat::Rational y(0.5f); (void)y; (void)r; (void)x;
#else
  pleat::Rational y(1, 2); (void)y; (void)r; (void)x;
#endif
}
