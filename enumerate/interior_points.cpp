#include "enumerate/interior_points.hpp"

#include <cmath>
#include <numbers>
#include <optional>

namespace pleat {
namespace {

Rational dyadic(long numerator, unsigned bits) {
  Rational value(numerator, 1ul << bits);
  value.canonicalize();
  return value;
}

}  // namespace

InteriorPointSource::InteriorPointSource(const Domain& domain, std::uint64_t seed)
    : domain_(domain), centre_(domain_centre(domain)), random_(seed) {}

// A standard normal (Box-Muller on two 53-bit uniforms) rounded to a
// multiple of 2^-bits.
Rational InteriorPointSource::dyadic_normal(unsigned bits) {
  const double u1 = (static_cast<double>(random_() >> 11) + 0.5) * 0x1p-53;
  const double u2 = static_cast<double>(random_() >> 11) * 0x1p-53;
  const double g = std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
  return dyadic(std::lround(std::ldexp(g, static_cast<int>(bits))), bits);
}

Rational InteriorPointSource::dyadic_fraction() {
  const long k = static_cast<long>(random_() >> 48);  // 16 bits
  return dyadic(k == 0 ? 1 : k, 16);
}

bool InteriorPointSource::is_inside(const RationalVector& point) const {
  return placement_in(domain_, point) == Placement::inside;
}

// The centre plus a random fraction of the way to the boundary along
// `direction` (nonzero), or `direction` itself when the ray never leaves.
RationalVector InteriorPointSource::along_ray(const RationalVector& direction) {
  std::optional<Rational> reach;  // the largest t with centre + t direction inside (closure)
  for (const auto& side : domain_.constraints) {
    Rational at_centre = side.offset, slope = 0;
    for (std::size_t i = 0; i < direction.size(); ++i) {
      at_centre += side.normal[i] * centre_[i];
      slope += side.normal[i] * direction[i];
    }
    if (sgn(slope) >= 0) continue;
    const Rational t = at_centre / -slope;
    if (!reach || t < *reach) reach = t;
  }
  const Rational t = reach ? *reach * dyadic_fraction() : Rational(1);
  RationalVector point = centre_;
  for (std::size_t i = 0; i < point.size(); ++i) point[i] += t * direction[i];
  return point;
}

RationalVector InteriorPointSource::next() {
  const std::uint64_t index = drawn_++;
  while (true) {
    RationalVector point(domain_.dim);
    if (domain_.kind == Domain::Kind::box) {
      for (std::size_t i = 0; i < point.size(); ++i)
        point[i] = domain_.lower[i] + dyadic_fraction() * (domain_.upper[i] - domain_.lower[i]);
    } else {
      // Every other point at the estimate's scale; the rest spread from 1/4 to 32.
      const Rational scale = index % 2 == 0 ? Rational(1) : dyadic(1l << ((index / 2) % 8), 2);
      RationalVector direction(domain_.dim);
      bool is_zero = true;
      for (Rational& value : direction) {
        value = scale * dyadic_normal(10);
        is_zero = is_zero && sgn(value) == 0;
      }
      if (is_zero) continue;
      if (domain_.kind == Domain::Kind::whole_space) {
        for (std::size_t i = 0; i < point.size(); ++i) point[i] = centre_[i] + direction[i];
      } else {
        point = along_ray(direction);
      }
    }
    if (is_inside(point)) return point;
  }
}

RationalVector InteriorPointSource::nudge(const RationalVector& point, unsigned attempt) {
  for (int tries = 0; tries < 16; ++tries) {
    RationalVector moved = point;
    for (Rational& value : moved) value += dyadic_normal(10) * dyadic(1, 12 + attempt);
    if (is_inside(moved)) return moved;
  }
  // Near the boundary: halfway to the centre (inside, the domain being convex).
  RationalVector halfway = point;
  for (std::size_t i = 0; i < halfway.size(); ++i) halfway[i] = (point[i] + centre_[i]) / 2;
  return halfway;
}

}  // namespace pleat
