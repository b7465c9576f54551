// The independent checker: exact rational arithmetic only, no solver, no
// GLPK. Each function returns true exactly when the certificate proves what
// its type claims about the given polyhedron.
#pragma once

#include "lp/polyhedron.hpp"

#include <cstddef>
#include <vector>

namespace pleat::lp {

[[nodiscard]] bool check_interior_point(const Polyhedron& cell, const InteriorPoint& certificate);
[[nodiscard]] bool check_emptiness(const Polyhedron& cell, const EmptinessCertificate& certificate);
// group: the constraint indices of one facet group (its first is the representative).
[[nodiscard]] bool check_facet_point(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                     const FacetPoint& certificate);
[[nodiscard]] bool check_non_facet(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                   const NonFacetCertificate& certificate);
[[nodiscard]] bool check_recession_direction(const Polyhedron& cell, const RecessionDirection& certificate);
[[nodiscard]] bool check_boundedness(const Polyhedron& cell, const BoundednessCertificate& certificate);

// Every group classified and checked, and the groups partition the constraints
// into classes of positive multiples.
[[nodiscard]] bool check_facet_classification(const Polyhedron& cell, const FacetClassification& classification);

}  // namespace pleat::lp
