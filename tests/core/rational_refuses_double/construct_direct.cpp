// Refused: a Rational constructed from a double element (Rational(point[k])).
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  const double point[1] = {x}; pleat::Rational y(point[0]); (void)y; (void)r;
#else
  const double point[1] = {x}; pleat::Rational y = pleat::rational_from_double(point[0]); (void)y; (void)r;
#endif
}
