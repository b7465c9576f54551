// The polyhedral queries the walker asks, each answered with an exact
// certificate. GLPK (double) proposes; exact rational arithmetic verifies the
// proposal; when verification fails an exact rational LP (cddlib, GMP build)
// decides. Every returned verdict is exact: a filter proposal is returned only
// after the same exact checks lp/checker.hpp makes (points evaluated exactly
// on every constraint; multipliers solved exactly on GLPK's support, then
// signs and the offset inequality checked), and fallback results pass
// lp/checker.hpp itself. Internal inconsistencies (never expected) throw
// std::logic_error; a cddlib failure throws std::runtime_error. Long queries
// poll the current thread's stop request (core/stop.hpp) and may throw Stopped.
#pragma once

#include "lp/filter_tolerances.hpp"
#include "lp/polyhedron.hpp"

#include <cstdint>
#include <memory>

namespace pleat::lp {
namespace detail {
struct DoubleRows;
}

// decide_open_cell, find_centre and decide_boundedness count one question
// each; classify_facets counts one per facet group.
struct QueryCounts {
  std::uint64_t lp_queries = 0;       // questions answered (each query counts its sub-questions)
  std::uint64_t filter_settled = 0;   // answered by a verified double proposal
  std::uint64_t exact_fallbacks = 0;  // needed the exact solver
  QueryCounts& operator+=(const QueryCounts& other);
};

// One solver state. Not shareable between threads: use one Oracle per thread
// (different Oracles may run concurrently: GLPK objects live inside one call
// on the calling thread, GLPK 5 keeps its environment thread-local, and the
// rare cddlib fallback runs under a process-wide mutex).
class Oracle {
 public:
  explicit Oracle(FilterTolerances tolerances = {});
  ~Oracle();
  Oracle(const Oracle&) = delete;
  Oracle& operator=(const Oracle&) = delete;
  Oracle(Oracle&&) noexcept;
  Oracle& operator=(Oracle&&) noexcept;

  // Query 1: is the open cell non-empty? Exact verdict.
  [[nodiscard]] CellVerdict decide_open_cell(const Polyhedron& cell);

  // Query 4: a well-centred rational point strictly inside a non-empty open
  // cell, with short denominators (a Chebyshev-style centre in a norm computed
  // exactly, the radius capped by radius_cap > 0, rounded and re-checked).
  // Returns EmptinessCertificate when the cell is empty. Exact verdict.
  [[nodiscard]] CellVerdict find_centre(const Polyhedron& cell, const Rational& radius_cap = Rational(1));

  // Query 2: every group of constraints classified as a facet of the closed
  // cell (with a relative-interior point) or not (with a Motzkin certificate).
  // Precondition: interior is an InteriorPoint of cell (checked; usage_error).
  // With keep_non_facet_certificates false, a non-facet verdict is still
  // proved exactly (filtered signs, exact where they cannot decide) but its
  // NonFacetCertificate is left with empty multipliers: for callers that only
  // need to know which groups are facets (the walk without certificates).
  [[nodiscard]] FacetClassification classify_facets(const Polyhedron& cell, const InteriorPoint& interior,
                                                    bool keep_non_facet_certificates = true);

  // Query 3: is the closed cell bounded? Precondition: the open cell is
  // non-empty. Exact verdict.
  [[nodiscard]] BoundednessVerdict decide_boundedness(const Polyhedron& cell);

  [[nodiscard]] const QueryCounts& counts() const;

 private:
  [[nodiscard]]
  BoundednessVerdict decide_boundedness_of_distinct_rows(const Polyhedron& cell, const detail::DoubleRows& rows);
  struct State;
  std::unique_ptr<State> state_;
};

}  // namespace pleat::lp
