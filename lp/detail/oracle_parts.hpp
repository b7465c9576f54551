// The Oracle's shared parts (lp/oracle*.cpp): exact helpers, filtered checks
// on a cell's double images, the exact cddlib fallbacks, the classes of
// positive multiples, and the Oracle's state. Every verdict returned by these
// functions is exact; filtered checks fall back to exact arithmetic whenever
// their error bound cannot decide.
#pragma once

#include "core/filtered_sign.hpp"
#include "lp/detail/double_rows.hpp"
#include "lp/detail/integer_rows.hpp"
#include "lp/oracle.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <vector>

namespace pleat::lp {

struct Oracle::State {
  FilterTolerances tolerances;
  QueryCounts counts;
};

namespace detail {

// A point as integers over one common denominator, for fast exact signs.
struct ScaledPoint {
  std::vector<Integer> numerators;
  Integer denominator = 1;
  explicit ScaledPoint(const RationalVector& point) : numerators(point.size()) {
    for (const Rational& value : point) mpz_lcm(denominator.get_mpz_t(), denominator.get_mpz_t(), value.get_den_mpz_t());
    for (std::size_t k = 0; k < point.size(); ++k) {
      numerators[k] = denominator / point[k].get_den();
      numerators[k] *= point[k].get_num();
    }
  }
};

// sign(a . x + c), exactly: (a . X + c D) accumulated as one unreduced fraction
// (no gcd per term; denominators of integer rows stay 1).
int slack_sign(const Constraint& constraint, const ScaledPoint& point, Integer& numerator, Integer& denominator,
               Integer& term);

[[nodiscard]] bool is_interior(const Polyhedron& cell, const RationalVector& point);

// Each coordinate replaced by the simplest rational within radius of it
// (radius <= 0: the double's exact value).
RationalVector round_point(const std::vector<double>& point, double radius);

// Same, around an exact point.
RationalVector round_point(const RationalVector& point, const Rational& radius);

Rational one_norm(const RationalVector& values);

// Index of the largest |a_k| (exact comparison).
std::size_t largest_entry(const RationalVector& normal);

// The point with every coordinate but `solved` taken from point, and the
// `solved` coordinate chosen so that constraint is exactly zero there.
RationalVector project_onto(const Constraint& constraint, RationalVector point, std::size_t solved);

[[nodiscard]] bool is_facet_point(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                  const RationalVector& point);

// Exact Gordan/Motzkin multipliers on a proposed support S: solve
//   sum_{s in S} y_s a_s = 0,  sum_{s in S} y_s = 1
// exactly, then require y >= 0 and sum y_s c_s <= 0.
[[nodiscard]] std::optional<EmptinessCertificate> emptiness_on_support(const Polyhedron& cell,
                                                                       const std::vector<std::size_t>& support);

// Exact Motzkin multipliers for "group j = 0, the rest > 0" on a proposed
// support S (outside the group): solve
//   mu a_j + sum_{s in S} y_s a_s = 0,  sum_{s in S} y_s = 1
// exactly, then require y >= 0 and mu c_j + sum y_s c_s <= 0.
[[nodiscard]]
std::optional<NonFacetCertificate> non_facet_on_support(const Polyhedron& cell, std::size_t representative,
                                                        const std::vector<std::size_t>& support,
                                                        LazyIntegerRows* known_rows = nullptr);

// The redundancy form of the Motzkin certificate: a_j = sum_{s in S} y_s a_s
// with y >= 0 and sum y_s c_s <= c_j (equality multiplier -1).
// For both: known_rows, when given, are the cell's integer rows; in the plane
// and in space a support of at most dim constraints is solved by integer minors.
[[nodiscard]]
std::optional<NonFacetCertificate> redundancy_on_support(const Polyhedron& cell, std::size_t representative,
                                                         const std::vector<std::size_t>& support,
                                                         LazyIntegerRows* known_rows = nullptr);

// The redundancy certificate of redundancy_on_support for a support of two
// constraints in the plane, by Cramer's rule (no matrix, few temporaries):
// a_j = y1 a_s1 + y2 a_s2, y >= 0, y1 c_s1 + y2 c_s2 <= c_j.
[[nodiscard]]
std::optional<NonFacetCertificate> redundancy_in_plane(const Polyhedron& cell, std::size_t j, std::size_t s1,
                                                       std::size_t s2);

// A cell's constraints as filter images (core/filtered_sign.hpp): per row
// a_0, ..., a_(n-1), c. Built once per query; they decide signs only where
// their error bound allows, exact arithmetic decides the rest.
struct CellImages {
  std::size_t width = 0;
  std::vector<double> values;  // width = dim + 1 per constraint
  explicit CellImages(const Polyhedron& cell)
      : width(cell.dim + 1), values(width * cell.constraints.size()) {
    for (std::size_t i = 0; i < cell.constraints.size(); ++i) {
      double* out = values.data() + width * i;
      for (std::size_t k = 0; k < cell.dim; ++k) out[k] = filter_image(cell.constraints[i].normal[k]);
      out[cell.dim] = filter_image(cell.constraints[i].offset);
    }
  }
  const double* row(std::size_t i) const { return values.data() + width * i; }
  double offset(std::size_t i) const { return values[width * i + width - 1]; }
};

// Every constraint > 0 at point, decided exactly (filtered, exact when undecided).
[[nodiscard]] bool is_interior_filtered(const Polyhedron& cell, const CellImages& images, const RationalVector& point);

// Whether redundancy_in_plane(cell, j, s1, s2) would succeed, by filtered
// signs: with D = det(a_s1, a_s2), y1 = det(a_j, a_s2) / D, y2 = det(a_s1, a_j) / D
// and y1 c_s1 + y2 c_s2 - c_j = -det[(a_s1, c_s1); (a_s2, c_s2); (a_j, c_j)] / D.
// nullopt when a sign is left undecided. Exact when it returns a value.
[[nodiscard]]
std::optional<bool> is_redundant_in_plane_filtered(const CellImages& images, std::size_t j, std::size_t s1,
                                                   std::size_t s2);

// is_facet_point for a single constraint j of a plane cell, with each
// constraint's sign filtered first and computed exactly only when undecided.
[[nodiscard]] bool is_facet_point_filtered(const Polyhedron& cell, const CellImages& images, std::size_t j,
                                           const RationalVector& point);

[[noreturn]] void internal_failure(const char* what);  // throws std::logic_error

// Open cell, exactly (in the plane and in space first by decide_open_cell_on_lines
// or _on_planes, else cddlib). try_first: constraints whose lines or planes are
// asked first (a hint only: any order gives an exact answer).
[[nodiscard]] CellVerdict decide_open_cell_exactly(const Polyhedron& cell, const Rational& cap,
                                                   const std::vector<std::size_t>& try_first = {});

// Open plane cell (dim 2), exactly and without an LP: a facet point on some
// constraint's line stepped inside, or, when no line has one, a Gordan certificate
// on one line's support (lp/detail/oracle_line.cpp). nullopt when dim != 2 or no
// certificate passes its exact check.
[[nodiscard]] std::optional<CellVerdict> decide_open_cell_on_lines(const Polyhedron& cell,
                                                                  const std::vector<std::size_t>& try_first = {});

// Open space cell (dim 3), exactly and without an LP: a facet point on some
// constraint's plane (classify_group_on_plane's search) stepped inside, or a Gordan
// certificate on one plane's Motzkin support with the plane's own constraint.
// nullopt when dim != 3 or no certificate passes its exact check.
[[nodiscard]] std::optional<CellVerdict> decide_open_cell_on_planes(const Polyhedron& cell,
                                                                   const std::vector<std::size_t>& try_first = {});

// One facet group, exactly (in the plane first by classify_group_on_line, else cddlib).
// known_rows, when given, are the cell's integer rows (built on first use, shared by
// the cell's queries).
[[nodiscard]] FacetVerdict classify_group_exactly(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                                  LazyIntegerRows* known_rows = nullptr);

// One facet group of a plane cell (dim 2), exactly and without an LP: the open
// interval the other constraints leave on the group's line (lp/detail/oracle_line.cpp).
// nullopt when dim != 2 or a certificate unexpectedly fails its exact check.
[[nodiscard]]
std::optional<FacetVerdict> classify_group_on_line(const Polyhedron& cell, const std::vector<std::size_t>& group);
[[nodiscard]]
std::optional<FacetVerdict> classify_group_on_line(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                                   const std::vector<IntegerRow>& rows);

// One facet group of a space cell (dim 3), exactly and without an LP: the open
// plane cell the other constraints leave on the group's plane, decided on its
// lines (decide_open_cell_on_lines); a Gordan certificate there gives the Motzkin
// support. nullopt when dim != 3 or a certificate unexpectedly fails its check.
[[nodiscard]]
std::optional<FacetVerdict> classify_group_on_plane(const Polyhedron& cell, const std::vector<std::size_t>& group);
[[nodiscard]]
std::optional<FacetVerdict> classify_group_on_plane(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                                    const std::vector<IntegerRow>& rows);

// Boundedness, exactly.
[[nodiscard]] BoundednessVerdict decide_boundedness_exactly(const Polyhedron& cell);

// Groups of positive multiples, by representative index; each group ascending.
std::vector<std::vector<std::size_t>> group_positive_multiples(const Polyhedron& cell, const DoubleRows& rows);

// One representative per class of positive multiples. GLPK's factorisation
// can fail an internal assertion (and abort the process) on a basis with
// repeated rows, so the double filters only ever see representatives, and
// certificates are mapped back (duplicates get multiplier 0).
// Without duplicates (the usual case) nothing is copied: cell() is the
// caller's polyhedron, which must outlive this value.
struct Representatives {
  const Polyhedron* original = nullptr;
  Polyhedron distinct;  // the representatives, built only when there are duplicates
  std::vector<std::vector<std::size_t>> classes;  // original indices, ascending; front is the representative
  bool has_duplicates = false;
  DoubleRows rows;  // the double image of cell()
  const Polyhedron& cell() const { return has_duplicates ? distinct : *original; }
};

Representatives reduce_to_representatives(const Polyhedron& cell);

RationalVector expand_multipliers(const RationalVector& reduced, const Representatives& classes, std::size_t size);

CellVerdict expand(CellVerdict verdict, const Representatives& classes, std::size_t size);

}  // namespace detail
}  // namespace pleat::lp
