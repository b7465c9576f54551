// Exact random points strictly inside a domain, for certifying from points
// without a walk (enumerate/functional_dimension.hpp).
//
// The points are short dyadic rationals (so exact forward passes stay cheap)
// drawn from a fixed-seed generator: the same seed gives the same points on
// every run and for any thread count. Whole space: N(0, s^2 I) around the
// origin, with s = 1 for every other point (the usual sampled estimate's
// distribution) and s cycling through 1/4 ... 32 for the others, to reach
// regions far from the origin. Box: uniform in the box. Polytope: the centre
// plus a random direction scaled to a random fraction of the distance to the
// boundary. Every point is checked to lie strictly inside (exactly).
#pragma once

#include "core/rational.hpp"
#include "enumerate/domain.hpp"

#include <cstdint>
#include <random>

namespace pleat {

class InteriorPointSource {
 public:
  // Precondition: the domain has interior (make_box / make_polytope check it).
  InteriorPointSource(const Domain& domain, std::uint64_t seed);

  // The next point of the sequence. Exact; strictly inside the domain.
  RationalVector next();

  // A point near `point` (strictly inside the domain), displaced by a random
  // step of size about 2^-(12 + attempt) per coordinate: to move a point off
  // a bent hyperplane it fell on.
  RationalVector nudge(const RationalVector& point, unsigned attempt);

 private:
  Rational dyadic_normal(unsigned bits);
  Rational dyadic_fraction();  // uniform in (0, 1), 16 bits
  [[nodiscard]] bool is_inside(const RationalVector& point) const;
  RationalVector along_ray(const RationalVector& direction);

  const Domain& domain_;
  RationalVector centre_;
  std::mt19937_64 random_;
  std::uint64_t drawn_ = 0;
};

}  // namespace pleat
