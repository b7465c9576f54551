// Refused: mpq_class::get_d, which truncates: to_double is the bridge.
// Compiled twice by ctest (CMakeLists.txt here): as it is, it must compile
// (the allowed form); with -DPLEAT_REFUSED it must not.
#include "core/rational.hpp"

void form(const pleat::Rational& r, double x) {
#ifdef PLEAT_REFUSED
  const double d = r.get_d(); (void)d; (void)x;
#else
  const double d = pleat::to_double(r); (void)d; (void)x;
#endif
}
