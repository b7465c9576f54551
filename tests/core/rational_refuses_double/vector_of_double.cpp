// Refused: a RationalVector listing a double.
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  pleat::RationalVector v{0.5}; (void)v; (void)r; (void)x;
#else
  pleat::RationalVector v{pleat::Rational(1, 2)}; (void)v; (void)r; (void)x;
#endif
}
