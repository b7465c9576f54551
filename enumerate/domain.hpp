// The domain a walk covers: all of R^n, an open box, or an open polytope
// {x : normal_i . x + offset_i > 0}. Exact.
#pragma once

#include "lp/polyhedron.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace pleat {

struct Domain {
  enum class Kind { whole_space, box, polytope };
  Kind kind = Kind::whole_space;
  std::size_t dim = 0;
  RationalVector lower, upper;               // only for boxes
  std::vector<lp::Constraint> constraints;   // the domain's sides (empty for R^n)

  // "R^2", "box:(-2,2)x(-1,3)" or "polytope:<m> constraints": for summaries.
  std::string describe() const;
};

Domain make_whole_space(std::size_t dim);

// The open box prod (lower_i, upper_i). Precondition: lower_i < upper_i for
// every i (throws input_error naming the axis otherwise).
Domain make_box(const RationalVector& lower, const RationalVector& upper);

// The open polytope given by its constraints. Throws input_error when a
// normal is zero or the polytope has empty interior (decided exactly).
Domain make_polytope(std::size_t dim, std::vector<lp::Constraint> constraints);

// Where a point lies against the open domain: strictly inside, on its
// boundary (no side negative, one zero) or outside. Exact.
enum class Placement { inside, on_boundary, outside };
Placement placement_in(const Domain& domain, const RationalVector& point);

// A rational point strictly inside the domain: the origin for R^n, the centre
// of a box, a well-centred point of a polytope. Exact.
RationalVector domain_centre(const Domain& domain);

}  // namespace pleat
