// Network-free exact polyhedral geometry: clipped polygons, the planar
// complex, vertex enumeration, volumes and 3-D faces. Expected values are
// worked out by hand in the comments (elementary geometry).
#include "lp/vertex_geometry.hpp"

#include "core/errors.hpp"

#include <gtest/gtest.h>

#include <set>

namespace pleat::lp {
namespace {

RationalVector v(std::initializer_list<long> values) {
  RationalVector out;
  for (long x : values) out.push_back(Rational(x));
  return out;
}

Constraint half(std::initializer_list<long> normal, long offset) { return Constraint{v(normal), Rational(offset)}; }

TEST(ClipRectangle, CutsTheUnitSquareIntoAnExactCounterClockwiseTriangle) {
  // x + y - 1 >= 0 keeps the triangle (1,0), (1,1), (0,1): area 1/2.
  const Polygon triangle = clip_rectangle(v({0, 0}), v({1, 1}), {half({1, 1}, -1)});
  ASSERT_EQ(triangle.vertices.size(), 3u);
  EXPECT_EQ(polygon_area(triangle), Rational(1, 2));
  const std::set<RationalVector> corners(triangle.vertices.begin(), triangle.vertices.end());
  EXPECT_EQ(corners, (std::set<RationalVector>{v({1, 0}), v({1, 1}), v({0, 1})}));
}

TEST(ClipRectangle, ThirdsAndEmptyAndTouching) {
  // 3x - 1 >= 0 and -3x + 2 >= 0 keep the strip [1/3, 2/3] x [0, 1]: area 1/3.
  const Polygon strip = clip_rectangle(v({0, 0}), v({1, 1}), {half({3, 0}, -1), half({-3, 0}, 2)});
  EXPECT_EQ(strip.vertices.size(), 4u);
  EXPECT_EQ(polygon_area(strip), Rational(1, 3));
  EXPECT_TRUE(clip_rectangle(v({0, 0}), v({1, 1}), {half({1, 0}, -2)}).vertices.empty());
  // x >= 1 touches the square along an edge only: no area left.
  EXPECT_EQ(polygon_area(clip_rectangle(v({0, 0}), v({1, 1}), {half({1, 0}, -1)})), 0);
  EXPECT_THROW(clip_rectangle(v({0, 0}), v({1, 1}), {half({0, 0}, 1)}), usage_error);
}

TEST(VertexRepresentation, TriangleMatchesClippingAndIsOrdered) {
  // x >= 0, y >= 0, 4 - x - y >= 0: vertices (0,0), (4,0), (0,4); area 8.
  const Polyhedron triangle{2, {half({1, 0}, 0), half({0, 1}, 0), half({-1, -1}, 4)}};
  const VertexRepresentation rep = vertex_representation(triangle, v({1, 1}));
  EXPECT_TRUE(rep.is_bounded());
  ASSERT_EQ(rep.points.size(), 3u);
  const Polygon polygon{rep.points};
  EXPECT_EQ(polygon_area(polygon), 8);  // positive: counter-clockwise
  EXPECT_EQ(polytope_volume(triangle, rep.points), 8);
}

TEST(VertexRepresentation, QuadrantHalfPlaneAndWholePlane) {
  // The quadrant x, y >= 0 seen from (1,1): the boundary comes down the y axis
  // (incoming ray (0,1)) and leaves along the x axis (ray (1,0)).
  const VertexRepresentation quadrant =
      vertex_representation(Polyhedron{2, {half({1, 0}, 0), half({0, 1}, 0)}}, v({1, 1}));
  EXPECT_EQ(quadrant.points, (std::vector<RationalVector>{v({0, 0})}));
  EXPECT_EQ(quadrant.rays, (std::vector<RationalVector>{v({0, 1}), v({1, 0})}));
  EXPECT_TRUE(quadrant.lines.empty());
  // 2x - 3 >= 0: one line (0,1), one ray (1,0).
  const VertexRepresentation half_plane = vertex_representation(Polyhedron{2, {half({2, 0}, -3)}}, v({5, 0}));
  EXPECT_EQ(half_plane.lines, (std::vector<RationalVector>{v({0, 1})}));
  EXPECT_EQ(half_plane.rays, (std::vector<RationalVector>{v({1, 0})}));
  ASSERT_EQ(half_plane.points.size(), 1u);
  EXPECT_EQ(half_plane.points.front()[0], Rational(3, 2));
  // The half-strip y >= 0, -1 <= x <= 1 seen from (0,1): the boundary comes
  // down x = -1, runs along the bottom from (-1,0) to (1,0), leaves up x = 1.
  const VertexRepresentation cup = vertex_representation(
      Polyhedron{2, {half({0, 1}, 0), half({1, 0}, 1), half({-1, 0}, 1)}}, v({0, 1}));
  EXPECT_EQ(cup.points, (std::vector<RationalVector>{v({-1, 0}), v({1, 0})}));
  EXPECT_EQ(cup.rays, (std::vector<RationalVector>{v({0, 1})}));
  const VertexRepresentation plane = vertex_representation(Polyhedron{2, {}}, v({0, 0}));
  EXPECT_EQ(plane.lines.size(), 2u);
}

TEST(PolytopeVolume, CubesSimplicesAndACutCorner) {
  // Unit cube: 1. The simplex conv(0, e1, e2, e3): 1/6. The 4-simplex: 1/24.
  const Polyhedron cube{3, {half({1, 0, 0}, 0), half({0, 1, 0}, 0), half({0, 0, 1}, 0), half({-1, 0, 0}, 1),
                                half({0, -1, 0}, 1), half({0, 0, -1}, 1)}};
  const VertexRepresentation cube_rep = vertex_representation(cube, v({0, 0, 0}));
  EXPECT_EQ(cube_rep.points.size(), 8u);
  EXPECT_EQ(polytope_volume(cube, cube_rep.points), 1);
  const Polyhedron simplex{3, {half({1, 0, 0}, 0), half({0, 1, 0}, 0), half({0, 0, 1}, 0), half({-1, -1, -1}, 1)}};
  EXPECT_EQ(polytope_volume(simplex, vertex_representation(simplex, {}).points), Rational(1, 6));
  const Polyhedron simplex4{4, {half({1, 0, 0, 0}, 0), half({0, 1, 0, 0}, 0), half({0, 0, 1, 0}, 0),
                                    half({0, 0, 0, 1}, 0), half({-1, -1, -1, -1}, 1)}};
  EXPECT_EQ(polytope_volume(simplex4, vertex_representation(simplex4, {}).points), Rational(1, 24));
  // The cube with the corner x + y + z > 5/2 cut off (a simplex of legs 1/2: 1/48),
  // and a redundant duplicate constraint (2x >= 0) that must not count twice.
  Polyhedron cut = cube;
  cut.constraints.push_back(Constraint{v({-2, -2, -2}), Rational(5)});
  cut.constraints.push_back(half({2, 0, 0}, 0));
  EXPECT_EQ(polytope_volume(cut, vertex_representation(cut, {}).points), Rational(47, 48));
}

TEST(PlanarComplex, TJunctionSplitsTheLongEdgeAndEulerHolds) {
  // The unit square split by x = 1/2, its right half split by y = 1/2: the
  // left half's edge x = 1/2 meets two polygons, so it is split at (1/2,1/2).
  // V = 4 corners + (1/2,0), (1/2,1), (1/2,1/2), (1,1/2) = 8; E = 10; F = 3.
  const RationalVector lower{Rational(0), Rational(0)}, upper{Rational(1), Rational(1)};
  const Constraint right{v({2, 0}), Rational(-1)}, left{v({-2, 0}), Rational(1)};
  const Constraint up{v({0, 2}), Rational(-1)}, down{v({0, -2}), Rational(1)};
  const std::vector<Polygon> polygons{clip_rectangle(lower, upper, {left}), clip_rectangle(lower, upper, {right, up}),
                                      clip_rectangle(lower, upper, {right, down})};
  const PlanarComplex complex = planar_complex(polygons);
  EXPECT_EQ(complex.vertices.size(), 8u);
  EXPECT_EQ(complex.edges.size(), 10u);
  std::size_t interior = 0;
  for (const auto& edge : complex.edges) {
    if (edge.polygons.size() == 2) ++interior;
    if (edge.polygons.size() == 2 && edge.polygons.front() == 0) {  // the two pieces of x = 1/2
      EXPECT_EQ(edge.from[0], Rational(1, 2));
    }
  }
  EXPECT_EQ(interior, 3u);
}


// The unit cube's faces: six squares, each listed once (the duplicate 2x >= 0
// adds none), each with its four corners on the face and ordered so that the
// corners turn counter-clockwise seen from outside: (b - a) x (c - b) points
// along the outward normal -normal at every corner (elementary geometry).
TEST(PolytopeFaces, CubeFacesAreOutwardCounterClockwiseSquares) {
  Polyhedron cube{3, {half({1, 0, 0}, 0), half({0, 1, 0}, 0), half({0, 0, 1}, 0), half({-1, 0, 0}, 1),
                      half({0, -1, 0}, 1), half({0, 0, -1}, 1)}};
  cube.constraints.push_back(half({2, 0, 0}, 0));
  const std::vector<RationalVector> vertices = vertex_representation(cube, {}).points;
  ASSERT_EQ(vertices.size(), 8u);
  const std::vector<PolytopeFace> faces = polytope_faces(cube, vertices);
  ASSERT_EQ(faces.size(), 6u);
  for (const PolytopeFace& face : faces) {
    ASSERT_LT(face.constraint, 6u);
    const Constraint& supporting = cube.constraints[face.constraint];
    ASSERT_EQ(face.corners.size(), 4u);
    for (std::size_t k = 0; k < 4; ++k) {
      const RationalVector& a = vertices[face.corners[k]];
      const RationalVector& b = vertices[face.corners[(k + 1) % 4]];
      const RationalVector& c = vertices[face.corners[(k + 2) % 4]];
      EXPECT_EQ(slack(supporting, a), 0);
      const RationalVector e{b[0] - a[0], b[1] - a[1], b[2] - a[2]}, f{c[0] - b[0], c[1] - b[1], c[2] - b[2]};
      const RationalVector turn{e[1] * f[2] - e[2] * f[1], e[2] * f[0] - e[0] * f[2], e[0] * f[1] - e[1] * f[0]};
      const Rational outward = -(turn[0] * supporting.normal[0] + turn[1] * supporting.normal[1] +
                                 turn[2] * supporting.normal[2]);
      EXPECT_GT(outward, 0) << "face of constraint " << face.constraint << ", corner " << k;
    }
  }
  EXPECT_THROW(polytope_faces(Polyhedron{2, {half({1, 0}, 0)}}, {}), usage_error);
}

}  // namespace
}  // namespace pleat::lp
