#include "lp/vertex_geometry.hpp"

#include "core/errors.hpp"
#include "lp/detail/cdd_handles.hpp"

#include <algorithm>
#include <array>
#include <map>
#include <set>
#include <stdexcept>
#include <string>
#include <utility>

namespace pleat::lp {
namespace {

// (b - a) x (c - a): positive when a, b, c turn counter-clockwise.
Rational turn(const RationalVector& a, const RationalVector& b, const RationalVector& c) {
  return (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
}

Rational cross(const RationalVector& a, const RationalVector& b) { return a[0] * b[1] - a[1] * b[0]; }

// Drops repeated consecutive vertices and vertices in the middle of a straight
// run, so the polygon's vertices are its corners.
void remove_flat_vertices(std::vector<RationalVector>& vertices) {
  bool changed = true;
  while (changed && vertices.size() >= 2) {
    changed = false;
    const std::size_t n = vertices.size();
    for (std::size_t i = 0; i < n; ++i) {
      const RationalVector& previous = vertices[(i + n - 1) % n];
      const RationalVector& next = vertices[(i + 1) % n];
      if (vertices[i] == next || (n >= 3 && turn(previous, vertices[i], next) == 0)) {
        vertices.erase(vertices.begin() + static_cast<std::ptrdiff_t>(i));
        changed = true;
        break;
      }
    }
  }
}

// Scales to a primitive integer vector (same direction).
RationalVector primitive(RationalVector v) {
  Integer denominator_lcm = 1;
  for (const auto& x : v) mpz_lcm(denominator_lcm.get_mpz_t(), denominator_lcm.get_mpz_t(), x.get_den_mpz_t());
  Integer numerator_gcd = 0;
  for (auto& x : v) {
    x *= denominator_lcm;
    mpz_gcd(numerator_gcd.get_mpz_t(), numerator_gcd.get_mpz_t(), x.get_num_mpz_t());
  }
  if (numerator_gcd != 0)
    for (auto& x : v) x /= numerator_gcd;
  return v;
}

std::vector<Constraint> distinct_half_spaces(const std::vector<Constraint>& constraints) {
  // Scaled so the first nonzero normal entry is +-1: equal half-spaces become equal rows.
  std::set<std::pair<RationalVector, Rational>> seen;
  std::vector<Constraint> out;
  for (const auto& c : constraints) {
    auto first = std::find_if(c.normal.begin(), c.normal.end(), [](const Rational& x) { return x != 0; });
    if (first == c.normal.end()) continue;
    const Rational scale = abs(*first);
    Constraint scaled{c.normal, c.offset / scale};
    for (auto& x : scaled.normal) x /= scale;
    if (seen.emplace(scaled.normal, scaled.offset).second) out.push_back(std::move(scaled));
  }
  return out;
}

Rational volume_recursive(std::size_t dim, const std::vector<Constraint>& constraints,
                          const std::vector<RationalVector>& vertices) {
  if (vertices.size() < dim + 1) return 0;
  if (dim == 1) {
    Rational low = vertices.front()[0], high = vertices.front()[0];
    for (const auto& v : vertices) {
      low = std::min(low, v[0]);
      high = std::max(high, v[0]);
    }
    return high - low;
  }
  RationalVector centroid(dim, Rational(0));
  for (const auto& v : vertices)
    for (std::size_t i = 0; i < dim; ++i) centroid[i] += v[i];
  for (auto& x : centroid) x /= static_cast<long>(vertices.size());

  const std::vector<Constraint> half_spaces = distinct_half_spaces(constraints);
  Rational volume = 0;
  for (const auto& facet : half_spaces) {
    const Rational height = slack(facet, centroid);
    if (height <= 0) continue;
    std::vector<RationalVector> on_facet;
    for (const auto& v : vertices)
      if (slack(facet, v) == 0) on_facet.push_back(v);
    if (on_facet.size() < dim) continue;
    // Project out coordinate j, where facet.normal[j] = +-1 (distinct_half_spaces).
    const std::size_t j = static_cast<std::size_t>(
        std::find_if(facet.normal.begin(), facet.normal.end(), [](const Rational& x) { return x != 0; }) -
        facet.normal.begin());
    const Rational& pivot = facet.normal[j];
    auto drop_j = [&](const RationalVector& v) {
      RationalVector out;
      for (std::size_t i = 0; i < v.size(); ++i)
        if (i != j) out.push_back(v[i]);
      return out;
    };
    std::vector<RationalVector> projected;
    for (const auto& v : on_facet) projected.push_back(drop_j(v));
    // On the facet x_j = -(offset + sum_{i != j} a_i x_i) / a_j; substitute it.
    std::vector<Constraint> restricted;
    for (const auto& other : half_spaces) {
      if (&other == &facet) continue;
      const Rational factor = other.normal[j] / pivot;
      Constraint c{drop_j(other.normal), other.offset - factor * facet.offset};
      const RationalVector facet_rest = drop_j(facet.normal);
      for (std::size_t i = 0; i < c.normal.size(); ++i) c.normal[i] -= factor * facet_rest[i];
      restricted.push_back(std::move(c));
    }
    volume += height * volume_recursive(dim - 1, restricted, projected) / static_cast<long>(dim);
  }
  return volume;
}

// Orders 2-D vertices along the boundary of an unbounded region: from where it
// comes in from infinity to where it leaves; rays in the same order.
void order_unbounded_boundary(VertexRepresentation& result, const Polyhedron& closed,
                              const RationalVector& interior) {
  std::vector<RationalVector>& points = result.points;
  const std::size_t n = points.size();
  auto is_boundary_edge = [&](const RationalVector& a, const RationalVector& b) {
    if (turn(a, b, interior) <= 0) return false;
    return std::any_of(closed.constraints.begin(), closed.constraints.end(),
                       [&](const Constraint& c) { return slack(c, a) == 0 && slack(c, b) == 0; });
  };
  if (n >= 2) {
    for (std::size_t i = 0; i < n; ++i) {
      if (!is_boundary_edge(points[i], points[(i + 1) % n])) {
        std::rotate(points.begin(), points.begin() + static_cast<std::ptrdiff_t>((i + 1) % n), points.end());
        break;
      }
    }
  }
  if (result.rays.size() == 2 && n >= 1) {
    RationalVector to_interior{interior[0] - points.front()[0], interior[1] - points.front()[1]};
    // The incoming ray r has the interior on its left when walked towards the vertex.
    if (!(cross(to_interior, result.rays.front()) > 0)) std::swap(result.rays.front(), result.rays.back());
  }
}

}  // namespace

Polygon clip_rectangle(const RationalVector& lower, const RationalVector& upper,
                       const std::vector<Constraint>& half_planes) {
  if (lower.size() != 2 || upper.size() != 2 || !(lower[0] < upper[0]) || !(lower[1] < upper[1]))
    throw usage_error("clip_rectangle: needs a non-empty 2-D rectangle");
  std::vector<RationalVector> vertices{
      {lower[0], lower[1]}, {upper[0], lower[1]}, {upper[0], upper[1]}, {lower[0], upper[1]}};
  for (const auto& c : half_planes) {
    if (c.normal.size() != 2 || (c.normal[0] == 0 && c.normal[1] == 0))
      throw usage_error("clip_rectangle: a half-plane needs a nonzero 2-D normal");
    std::vector<RationalVector> kept;
    const std::size_t n = vertices.size();
    for (std::size_t i = 0; i < n; ++i) {
      const RationalVector& current = vertices[i];
      const RationalVector& next = vertices[(i + 1) % n];
      const Rational here = slack(c, current);
      const Rational there = slack(c, next);
      if (here >= 0) kept.push_back(current);
      if ((here > 0 && there < 0) || (here < 0 && there > 0)) {
        const Rational t = here / (here - there);
        kept.push_back({current[0] + t * (next[0] - current[0]), current[1] + t * (next[1] - current[1])});
      }
    }
    vertices = std::move(kept);
    if (vertices.empty()) break;
  }
  remove_flat_vertices(vertices);
  return Polygon{std::move(vertices)};
}

Rational polygon_area(const Polygon& polygon) {
  const auto& v = polygon.vertices;
  Rational twice = 0;
  for (std::size_t i = 0; i < v.size(); ++i) twice += cross(v[i], v[(i + 1) % v.size()]);
  return twice / 2;
}

void sort_counter_clockwise(std::vector<RationalVector>& points, const RationalVector& centre) {
  auto half = [&](const RationalVector& p) {
    const Rational dx = p[0] - centre[0], dy = p[1] - centre[1];
    return (dy > 0 || (dy == 0 && dx > 0)) ? 0 : 1;
  };
  std::sort(points.begin(), points.end(), [&](const RationalVector& a, const RationalVector& b) {
    const int half_a = half(a), half_b = half(b);
    if (half_a != half_b) return half_a < half_b;
    return turn(centre, a, b) > 0;
  });
}

PlanarComplex planar_complex(const std::vector<Polygon>& polygons) {
  // Group polygon edges by their supporting line a x + b y + c = 0 (scaled
  // so the first nonzero of a, b is 1); a point on it is placed by x, or by y
  // on a vertical line.
  struct EdgeOnLine {
    Rational low, high;
    std::size_t polygon;
  };
  struct Line {
    std::vector<EdgeOnLine> edges;
    std::map<Rational, RationalVector> points;
  };
  std::map<std::array<Rational, 3>, Line> lines;
  std::set<RationalVector> vertices;
  for (std::size_t index = 0; index < polygons.size(); ++index) {
    const auto& corners = polygons[index].vertices;
    if (corners.size() < 3) continue;
    for (std::size_t i = 0; i < corners.size(); ++i) {
      const RationalVector& p = corners[i];
      const RationalVector& q = corners[(i + 1) % corners.size()];
      vertices.insert(p);
      Rational a = q[1] - p[1], b = p[0] - q[0];
      const Rational scale = a != 0 ? a : b;
      a /= scale;
      b /= scale;
      const Rational c = -(a * p[0] + b * p[1]);
      const std::size_t axis = b != 0 ? 0 : 1;
      Line& line = lines[{a, b, c}];
      line.points.emplace(p[axis], p);
      line.points.emplace(q[axis], q);
      line.edges.push_back(EdgeOnLine{std::min(p[axis], q[axis]), std::max(p[axis], q[axis]), index});
    }
  }
  PlanarComplex complex;
  complex.vertices.assign(vertices.begin(), vertices.end());
  for (const auto& [key, line] : lines) {
    for (auto it = line.points.begin(); std::next(it) != line.points.end(); ++it) {
      const auto next = std::next(it);
      PlanarEdge edge;
      for (const auto& e : line.edges)
        if (e.low <= it->first && next->first <= e.high) edge.polygons.push_back(e.polygon);
      if (edge.polygons.empty()) continue;
      std::sort(edge.polygons.begin(), edge.polygons.end());
      edge.polygons.erase(std::unique(edge.polygons.begin(), edge.polygons.end()), edge.polygons.end());
      edge.from = std::min(it->second, next->second);
      edge.to = std::max(it->second, next->second);
      complex.edges.push_back(std::move(edge));
    }
  }
  return complex;
}

VertexRepresentation vertex_representation(const Polyhedron& closed, const RationalVector& interior) {
  const std::size_t dim = closed.dim;
  VertexRepresentation result;
  if (closed.constraints.empty()) {  // all of R^dim
    result.points.push_back(RationalVector(dim, Rational(0)));
    for (std::size_t i = 0; i < dim; ++i) {
      RationalVector axis(dim, Rational(0));
      axis[i] = 1;
      result.lines.push_back(axis);
    }
    return result;
  }
  {
    const detail::CddSession session;
    detail::CddMatrix matrix = detail::make_cdd_matrix(closed.constraints.size(), dim + 1);
    matrix->representation = dd_Inequality;
    for (std::size_t i = 0; i < closed.constraints.size(); ++i) {
      mpq_set(matrix->matrix[i][0], closed.constraints[i].offset.get_mpq_t());
      for (std::size_t k = 0; k < dim; ++k)
        mpq_set(matrix->matrix[i][k + 1], closed.constraints[i].normal[k].get_mpq_t());
    }
    dd_ErrorType error = dd_NoError;
    const detail::CddPolyhedron polyhedron(dd_DDMatrix2Poly(matrix.get(), &error));
    if (error != dd_NoError || polyhedron == nullptr)
      throw std::runtime_error("cddlib: vertex enumeration failed (error " + std::to_string(error) + ")");
    const detail::CddMatrix generators(dd_CopyGenerators(polyhedron.get()));
    for (dd_rowrange r = 0; r < generators->rowsize; ++r) {
      RationalVector entries(dim);
      for (std::size_t k = 0; k < dim; ++k) entries[k] = Rational(generators->matrix[r][k + 1]);
      const Rational kind(generators->matrix[r][0]);
      if (set_member(r + 1, generators->linset)) {
        entries = primitive(entries);
        auto first = std::find_if(entries.begin(), entries.end(), [](const Rational& x) { return x != 0; });
        if (first != entries.end() && *first < 0)
          for (auto& x : entries) x = -x;
        result.lines.push_back(std::move(entries));
      } else if (kind == 0) {
        result.rays.push_back(primitive(std::move(entries)));
      } else {
        for (auto& x : entries) x /= kind;
        result.points.push_back(std::move(entries));
      }
    }
  }
  if (result.points.empty()) {
    // cddlib leaves out the apex of a cone given by homogeneous rows: the origin.
    RationalVector origin(dim, Rational(0));
    for (const auto& c : closed.constraints)
      if (c.offset < 0) throw std::runtime_error("cddlib: no point in the V-representation");
    result.points.push_back(std::move(origin));
  }
  std::sort(result.points.begin(), result.points.end());
  std::sort(result.rays.begin(), result.rays.end());
  std::sort(result.lines.begin(), result.lines.end());
  if (dim == 2 && result.lines.empty() && interior.size() == 2) {
    sort_counter_clockwise(result.points, interior);
    if (!result.rays.empty()) order_unbounded_boundary(result, closed, interior);
  }
  return result;
}

Rational polytope_volume(const Polyhedron& closed, const std::vector<RationalVector>& vertices) {
  if (closed.dim == 0) throw usage_error("polytope_volume: dimension 0");
  return volume_recursive(closed.dim, closed.constraints, vertices);
}

namespace {

// The vertices on one face, ordered counter-clockwise seen from outside (the
// polytope is where normal . x + offset > 0, so outward is -normal): sorted
// around their centroid in the plane of the two coordinates the face projects
// onto without collapsing (the largest normal entry dropped), then reversed
// when that projection flips the orientation.
std::vector<std::size_t> outward_face_order(const Constraint& face, const std::vector<RationalVector>& vertices,
                                            const std::vector<std::size_t>& on_face) {
  std::size_t drop = 0;
  for (std::size_t k = 1; k < 3; ++k)
    if (abs(face.normal[k]) > abs(face.normal[drop])) drop = k;
  const std::size_t u = drop == 0 ? 1 : 0, w = drop == 2 ? 1 : 2;
  auto project = [&](std::size_t v) { return RationalVector{vertices[v][u], vertices[v][w]}; };
  RationalVector centre(2, Rational(0));
  for (std::size_t v : on_face) {
    centre[0] += vertices[v][u];
    centre[1] += vertices[v][w];
  }
  centre[0] /= static_cast<long>(on_face.size());
  centre[1] /= static_cast<long>(on_face.size());
  std::vector<RationalVector> flat;
  for (std::size_t v : on_face) flat.push_back(project(v));
  sort_counter_clockwise(flat, centre);
  std::vector<std::size_t> ordered;
  for (const auto& q : flat)
    for (std::size_t v : on_face)
      if (project(v) == q) ordered.push_back(v);
  // The projected turn must have the sign of -normal[drop] times the
  // orientation of the (u, w) axes in R^3 (+1 unless drop == 1).
  const int axes_sign = drop == 1 ? -1 : 1;
  if ((face.normal[drop] > 0 ? -1 : 1) * axes_sign < 0) std::reverse(ordered.begin(), ordered.end());
  return ordered;
}

}  // namespace

std::vector<PolytopeFace> polytope_faces(const Polyhedron& closed, const std::vector<RationalVector>& vertices) {
  if (closed.dim != 3) throw usage_error("polytope_faces: needs a 3-D polytope");
  std::vector<PolytopeFace> faces;
  std::set<std::vector<std::size_t>> seen;
  for (std::size_t c = 0; c < closed.constraints.size(); ++c) {
    std::vector<std::size_t> on_face;
    for (std::size_t v = 0; v < vertices.size(); ++v)
      if (slack(closed.constraints[c], vertices[v]) == 0) on_face.push_back(v);
    if (on_face.size() < 3) continue;
    if (!seen.insert(on_face).second) continue;
    faces.push_back(PolytopeFace{outward_face_order(closed.constraints[c], vertices, on_face), c});
  }
  return faces;
}

}  // namespace pleat::lp
