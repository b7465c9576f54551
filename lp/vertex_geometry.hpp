// Exact polyhedral geometry that knows nothing of networks: ordered polygons
// in the plane and the planar complex they tile, vertex enumeration
// (V-representation) in any dimension, exact volumes, and the ordered faces of
// a 3-D polytope. Everything is exact rational arithmetic (cddlib's GMP build
// for the vertex enumeration); nothing prints. Polyhedra are closed here:
// {x : normal_i . x + offset_i >= 0}.
#pragma once

#include "core/rational.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <vector>

namespace pleat::lp {

// ---- The plane --------------------------------------------------------------

// A closed convex polygon: distinct vertices (each of size 2) in
// counter-clockwise order, no three consecutive ones collinear. Fewer than
// three vertices means a degenerate (zero-area) or empty intersection.
struct Polygon {
  std::vector<RationalVector> vertices;
};

// The rectangle [lower_0, upper_0] x [lower_1, upper_1] cut by the closed
// half-planes (normal . x + offset >= 0), by exact Sutherland-Hodgman clipping.
// Preconditions: lower_i < upper_i; every normal has size 2 and is nonzero
// (throws usage_error). Exact.
Polygon clip_rectangle(const RationalVector& lower, const RationalVector& upper,
                       const std::vector<Constraint>& half_planes);

// Shoelace area of a counter-clockwise polygon (>= 0). Exact.
Rational polygon_area(const Polygon& polygon);

// Counter-clockwise order of points around a centre that is strictly inside
// their convex hull, or strictly inside the unbounded region they bound
// (exact angular comparison, no trigonometry). Precondition: size-2 points.
void sort_counter_clockwise(std::vector<RationalVector>& points, const RationalVector& centre);

// The planar subdivision that polygons tiling a domain form (they may meet
// at T-junctions: a vertex of one polygon in the middle of another's edge).
// Its vertices are the distinct polygon vertices; its edges are the pieces of
// polygon edges between consecutive vertices on one line, each listing the
// polygons whose boundary holds it (two for an interior edge, one on the
// outer boundary). For a tiling of a convex polygon, V - E + F = 1 with F the
// number of polygons. Preconditions: polygons as clip_rectangle returns them,
// with pairwise disjoint interiors. Exact.
struct PlanarEdge {
  RationalVector from, to;             // from < to (lexicographic)
  std::vector<std::size_t> polygons;   // indices into the input, increasing
};
struct PlanarComplex {
  std::vector<RationalVector> vertices;  // sorted
  std::vector<PlanarEdge> edges;
};
PlanarComplex planar_complex(const std::vector<Polygon>& polygons);

// ---- Any dimension ----------------------------------------------------------

// P = conv(points) + cone(rays) + span(lines). When lines is empty, points
// are exactly the vertices of P. Rays and lines are primitive integer vectors
// (a line's first nonzero entry positive). For dim 2 and a pointed P, points
// are ordered along the boundary counter-clockwise seen from inside: for an
// unbounded region the walk starts at the vertex where the boundary comes in
// from infinity (along -rays.front() when there are two rays) and ends where
// it leaves (along rays.back()).
struct VertexRepresentation {
  std::vector<RationalVector> points;
  std::vector<RationalVector> rays;
  std::vector<RationalVector> lines;
  bool is_bounded() const { return rays.empty() && lines.empty(); }
};

// The V-representation of the closed polyhedron, by cddlib's exact double
// description (GMP rationals, under lp's process-wide cddlib lock).
// Precondition: the closed polyhedron has non-empty interior (a region), and
// `interior` is a point strictly inside it (used to order 2-D vertices).
// Throws std::runtime_error if cddlib reports an error. Exact.
VertexRepresentation vertex_representation(const Polyhedron& closed, const RationalVector& interior);

// The volume of a bounded full-dimensional polytope given by its (possibly
// redundant) constraints and its vertices: a cone from the vertex centroid
// over each facet, each facet's volume by the same rule one dimension down
// after projecting out one coordinate (heights divided by that coordinate's
// normal entry, so no square roots). Exact; the cost grows quickly with the
// dimension (meant for dim <= 4). Precondition: vertices are those of the
// polytope (as vertex_representation returns them).
Rational polytope_volume(const Polyhedron& closed, const std::vector<RationalVector>& vertices);

// ---- Three dimensions ------------------------------------------------------

// A 2-D face of a 3-D polytope: its corners as indices into the vertex list
// given, ordered counter-clockwise seen from outside the polytope, and the
// constraint (index into closed.constraints) that supports it. Each face is
// listed once, under the first constraint that supports it.
struct PolytopeFace {
  std::vector<std::size_t> corners;
  std::size_t constraint = 0;
};

// The 2-D faces of a bounded 3-D polytope from its (possibly redundant)
// constraints and its vertices (as vertex_representation returns them): for
// every constraint met with equality by at least three vertices, those
// vertices in outward counter-clockwise order. Precondition: closed.dim == 3.
// Exact.
std::vector<PolytopeFace> polytope_faces(const Polyhedron& closed, const std::vector<RationalVector>& vertices);

}  // namespace pleat::lp
