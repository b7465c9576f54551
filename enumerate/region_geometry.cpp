#include "enumerate/region_geometry.hpp"

#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "enumerate/walker.hpp"
#include "lp/detail/exact_lp.hpp"
#include "lp/oracle.hpp"

#include <cddlib/setoper.h>
#include <cddlib/cdd.h>

#include <algorithm>
#include <array>
#include <map>
#include <mutex>
#include <set>
#include <stdexcept>
#include <string>
#include <utility>
#include <variant>

namespace pleat {
namespace {

Rational dot(const RationalVector& a, const RationalVector& b) {
  Rational sum = 0;
  for (std::size_t i = 0; i < a.size(); ++i) sum += a[i] * b[i];
  return sum;
}

Rational value_at(const lp::Constraint& c, const RationalVector& x) { return dot(c.normal, x) + c.offset; }

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

std::vector<lp::Constraint> distinct_half_spaces(const std::vector<lp::Constraint>& constraints) {
  // Scaled so the first nonzero normal entry is +-1: equal half-spaces become equal rows.
  std::set<std::pair<RationalVector, Rational>> seen;
  std::vector<lp::Constraint> out;
  for (const auto& c : constraints) {
    auto first = std::find_if(c.normal.begin(), c.normal.end(), [](const Rational& x) { return x != 0; });
    if (first == c.normal.end()) continue;
    const Rational scale = abs(*first);
    lp::Constraint scaled{c.normal, c.offset / scale};
    for (auto& x : scaled.normal) x /= scale;
    if (seen.emplace(scaled.normal, scaled.offset).second) out.push_back(std::move(scaled));
  }
  return out;
}

Rational volume_recursive(std::size_t dim, const std::vector<lp::Constraint>& constraints,
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

  const std::vector<lp::Constraint> half_spaces = distinct_half_spaces(constraints);
  Rational volume = 0;
  for (const auto& facet : half_spaces) {
    const Rational height = value_at(facet, centroid);
    if (height <= 0) continue;
    std::vector<RationalVector> on_facet;
    for (const auto& v : vertices)
      if (value_at(facet, v) == 0) on_facet.push_back(v);
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
    std::vector<lp::Constraint> restricted;
    for (const auto& other : half_spaces) {
      if (&other == &facet) continue;
      const Rational factor = other.normal[j] / pivot;
      lp::Constraint c{drop_j(other.normal), other.offset - factor * facet.offset};
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
void order_unbounded_boundary(VertexRepresentation& result, const lp::Polyhedron& closed,
                              const RationalVector& interior) {
  std::vector<RationalVector>& points = result.points;
  const std::size_t n = points.size();
  auto is_boundary_edge = [&](const RationalVector& a, const RationalVector& b) {
    if (turn(a, b, interior) <= 0) return false;
    return std::any_of(closed.constraints.begin(), closed.constraints.end(),
                       [&](const lp::Constraint& c) { return value_at(c, a) == 0 && value_at(c, b) == 0; });
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
                       const std::vector<lp::Constraint>& half_planes) {
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
      const Rational here = value_at(c, current);
      const Rational there = value_at(c, next);
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

VertexRepresentation vertex_representation(const lp::Polyhedron& closed, const RationalVector& interior) {
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
    std::lock_guard<std::mutex> lock(lp::detail::cdd_mutex());
    lp::detail::ensure_cdd_constants();
    dd_MatrixPtr matrix = dd_CreateMatrix(static_cast<dd_rowrange>(closed.constraints.size()),
                                          static_cast<dd_colrange>(dim + 1));
    matrix->representation = dd_Inequality;
    matrix->numbtype = dd_Rational;
    for (std::size_t i = 0; i < closed.constraints.size(); ++i) {
      mpq_set(matrix->matrix[i][0], closed.constraints[i].offset.get_mpq_t());
      for (std::size_t k = 0; k < dim; ++k)
        mpq_set(matrix->matrix[i][k + 1], closed.constraints[i].normal[k].get_mpq_t());
    }
    dd_ErrorType error = dd_NoError;
    dd_PolyhedraPtr polyhedron = dd_DDMatrix2Poly(matrix, &error);
    dd_FreeMatrix(matrix);
    if (error != dd_NoError || polyhedron == nullptr) {
      if (polyhedron) dd_FreePolyhedra(polyhedron);
      throw std::runtime_error("cddlib: vertex enumeration failed (error " + std::to_string(error) + ")");
    }
    dd_MatrixPtr generators = dd_CopyGenerators(polyhedron);
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
    dd_FreeMatrix(generators);
    dd_FreePolyhedra(polyhedron);
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

Rational polytope_volume(const lp::Polyhedron& closed, const std::vector<RationalVector>& vertices) {
  if (closed.dim == 0) throw usage_error("polytope_volume: dimension 0");
  return volume_recursive(closed.dim, closed.constraints, vertices);
}

namespace {

constexpr std::size_t max_vanishing_choices = 16;

void choose_vanishing_states(const Network& network, const Evaluation& at_point, std::size_t k,
                             const AffineMap& post, ActivationPattern& pattern,
                             std::vector<ActivationPattern>& out) {
  if (k == network.relu_layer_count()) {
    out.push_back(pattern);
    return;
  }
  const AffineMap pre = compose_layer(network.layers[k], post);
  const std::size_t first = network.first_neuron_of_layer(k);
  std::vector<std::size_t> free_neurons;
  for (std::size_t i = 0; i < pre.offset.size(); ++i) {
    const Rational& value = at_point.preactivation[k][i];
    NeuronState& state = pattern.states[first + i];
    const RationalVector row = pre.linear.row(i);
    const bool is_constant = std::all_of(row.begin(), row.end(), [](const Rational& x) { return x == 0; });
    if (value > 0) state = NeuronState::on;
    else if (value < 0) state = NeuronState::off;
    else if (is_constant) state = NeuronState::zero_on_region;
    else free_neurons.push_back(i);
  }
  const std::size_t combinations = std::size_t{1} << free_neurons.size();
  for (std::size_t mask = 0; mask < combinations; ++mask) {
    for (std::size_t b = 0; b < free_neurons.size(); ++b)
      pattern.states[first + free_neurons[b]] = (mask >> b) & 1 ? NeuronState::on : NeuronState::off;
    const AffineMap next = apply_states(pre, std::span(pattern.states).subspan(first, pre.offset.size()));
    choose_vanishing_states(network, at_point, k + 1, next, pattern, out);
  }
}

}  // namespace

PointIncidence regions_at_point(const Network& network, const Domain& domain, const RationalVector& point) {
  if (point.size() != network.input_dim || domain.dim != network.input_dim)
    throw usage_error("regions_at_point: dimensions differ");
  for (std::size_t s = 0; s < domain.constraints.size(); ++s)
    if (value_at(domain.constraints[s], point) < 0)
      throw input_error("the point lies outside the domain " + domain.describe());
  const Evaluation at_point = evaluate_exact(network, point);
  PointIncidence result;
  for (std::size_t id = 0; id < at_point.pattern.states.size(); ++id)
    if (at_point.pattern.states[id] == NeuronState::zero_at_point ||
        at_point.pattern.states[id] == NeuronState::zero_on_region)
      result.vanishing_neurons.push_back(id);
  if (result.vanishing_neurons.size() > max_vanishing_choices)
    throw limit_error(std::to_string(result.vanishing_neurons.size()) + " neurons vanish at the point; pleat looks at " +
                      "most " + std::to_string(max_vanishing_choices) + " at one point (2^" +
                      std::to_string(max_vanishing_choices) + " candidate patterns)");

  ActivationPattern pattern;
  pattern.states.resize(network.relu_neuron_count());
  std::vector<ActivationPattern> candidates;
  choose_vanishing_states(network, at_point, 0, identity_map(network.input_dim), pattern, candidates);
  lp::Oracle oracle;
  for (const auto& candidate : candidates) {
    auto cell = build_pattern_cell(network, domain, candidate);
    if (!cell) continue;
    if (cell->cell.constraints.empty() ||
        std::holds_alternative<lp::InteriorPoint>(oracle.decide_open_cell(cell->cell)))
      result.regions.push_back(candidate);
  }
  std::sort(result.regions.begin(), result.regions.end());
  result.regions.erase(std::unique(result.regions.begin(), result.regions.end()), result.regions.end());
  return result;
}

std::size_t rank_contribution(const Network& network, const ActivationPattern& pattern) {
  if (!nonsmooth_neurons(network, pattern).empty()) return 0;
  return rank_exact(coefficient_blocks(network, pattern));
}

}  // namespace pleat
