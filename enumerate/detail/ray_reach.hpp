// How far a line sweep of certify's no-walk path may go inside the domain
// (enumerate/functional_dimension.cpp's lines phase). Internal to enumerate/
// (not installed).
#pragma once

#include "core/evaluate.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"

#include <algorithm>
#include <cstddef>
#include <limits>

namespace pleat::detail {

// The largest t keeping base + t direction inside the domain's sides, a
// little short of the boundary (double: it only bounds where a sweep
// proposes points); +infinity when the ray never leaves.
inline double ray_reach(const Domain& domain, const DoubleVector& base, const DoubleVector& direction) {
  double reach = std::numeric_limits<double>::infinity();
  for (const auto& side : domain.constraints) {
    double at_base = to_double(side.offset), slope = 0;
    for (std::size_t i = 0; i < base.size(); ++i) {
      at_base += to_double(side.normal[i]) * base[i];
      slope += to_double(side.normal[i]) * direction[i];
    }
    if (slope < 0) reach = std::min(reach, at_base / -slope);
  }
  return reach * (1 - 1e-9);
}

}  // namespace pleat::detail
