// Polyhedra given by affine constraints over Q^n, and the certificates that
// decide questions about them. Plain values and two exact helpers; nothing
// here solves anything.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <variant>
#include <vector>

namespace pleat::lp {

// normal . x + offset, read as "> 0" in the open cell and ">= 0" in its closure.
struct Constraint {
  RationalVector normal;
  Rational offset;
  friend bool operator==(const Constraint&, const Constraint&) = default;
};

// normal . x + offset, exactly. Precondition: x.size() == normal.size().
[[nodiscard]] Rational slack(const Constraint& constraint, const RationalVector& x);

// True when first = lambda * second for some lambda > 0 (normal and offset
// jointly), exactly; false when the sizes differ or second's normal is zero.
[[nodiscard]] bool is_positive_multiple(const Constraint& first, const Constraint& second);

// The open cell {x in Q^dim : every constraint > 0} and its closure.
// Precondition of every query: each normal has size dim; no constraint has
// an all-zero normal (an identically-constant constraint is the caller's
// business; queries throw usage_error on it).
struct Polyhedron {
  std::size_t dim = 0;
  std::vector<Constraint> constraints;
};

// ---- Certificates (exact values; check them with lp/checker.hpp) ----------

// Every constraint is strictly positive at point.
struct InteriorPoint {
  RationalVector point;
};

// y >= 0, not all zero, sum y_i a_i = 0 and sum y_i c_i <= 0 (Gordan/Motzkin):
// the open cell is empty. multipliers.size() == constraints.size().
struct EmptinessCertificate {
  RationalVector multipliers;
};

// The constraints of one facet group are 0 at point, every other is > 0.
struct FacetPoint {
  RationalVector point;
};

// The mixed system (group = 0, the rest > 0) has no solution: a free
// multiplier on the group's representative row, y >= 0 on the others (zero on
// the group), not all of y zero, with
//   equality_multiplier * a_rep + sum y_i a_i = 0,
//   equality_multiplier * c_rep + sum y_i c_i <= 0   (Motzkin transposition).
struct NonFacetCertificate {
  Rational equality_multiplier;
  RationalVector multipliers;
};

// A direction d != 0 with a_i . d >= 0 for every constraint: the closure is
// unbounded (given it is non-empty).
struct RecessionDirection {
  RationalVector direction;
};

// y > 0 on a support S, zero elsewhere, rank(a_S) = dim and sum_S y_i a_i = 0
// (Stiemke): the recession cone is {0}, so the closure is bounded.
struct BoundednessCertificate {
  RationalVector multipliers;
};

using CellVerdict = std::variant<InteriorPoint, EmptinessCertificate>;
using FacetVerdict = std::variant<FacetPoint, NonFacetCertificate>;
using BoundednessVerdict = std::variant<BoundednessCertificate, RecessionDirection>;

// Constraints that are positive multiples of each other (same closed half-space)
// form one group: they share one facet or none.
struct FacetGroup {
  std::vector<std::size_t> constraints;  // indices, ascending; the first is the representative
  FacetVerdict verdict;
  bool is_facet() const { return std::holds_alternative<FacetPoint>(verdict); }
};

struct FacetClassification {
  std::vector<FacetGroup> groups;  // ordered by representative index
};

}  // namespace pleat::lp
