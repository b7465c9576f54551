// The fast path for cells of R^3 (lp/space_cell.hpp). Double proposes: a box
// clipped by each plane as a simple convex polytope, each vertex labelled by
// the three planes that meet there (an edge joins two vertices sharing two
// labels). Exact proves: every sign below is filtered first and computed in
// integers only when the filter cannot decide.
#include "lp/space_cell.hpp"

#include "core/filtered_sign.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/filter_tolerances.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>

namespace pleat::lp {
namespace {

using Point = std::array<double, 3>;

// A row's plane in double, scaled to |a0| + |a1| + |a2| = 1, so that a slack
// is within a factor 3 of the max-norm distance to the plane.
struct Plane {
  std::array<double, 3> a{};
  double c = 0;
  double slack(const Point& x) const { return a[0] * x[0] + a[1] * x[1] + a[2] * x[2] + c; }
};

// The exact rows and their filter images (a0, a1, a2, c per row).
struct Rows {
  const std::vector<SpaceRow>& exact;
  std::vector<double> images;  // 4 per row
  const double* image(std::size_t i) const { return images.data() + 4 * i; }
};

// ---- exact signs: filtered, then integers --------------------------------------

// A rational point: its filter images, and (built only when a filter cannot
// decide) integer numerators over one positive denominator.
class ScaledPoint {
 public:
  explicit ScaledPoint(const RationalVector& point) : point_(point) {
    for (std::size_t k = 0; k < 3; ++k) image[k] = filter_image(point[k]);
  }
  double image[3];

  int exact_sign(const SpaceRow& row) {
    if (!is_scaled_) {
      denominator_ = 1;
      for (const Rational& x : point_) mpz_lcm(denominator_.get_mpz_t(), denominator_.get_mpz_t(), x.get_den_mpz_t());
      for (std::size_t k = 0; k < 3; ++k) numerators_[k] = point_[k].get_num() * (denominator_ / point_[k].get_den());
      is_scaled_ = true;
    }
    Integer sum = row.c * denominator_;
    for (std::size_t k = 0; k < 3; ++k) sum += row.a[k] * numerators_[k];
    return sgn(sum);
  }

 private:
  const RationalVector& point_;
  bool is_scaled_ = false;
  std::array<Integer, 3> numerators_;
  Integer denominator_;
};

// sign(a . x + c) at the point, exactly.
int sign_at(const Rows& rows, std::size_t i, ScaledPoint& point) {
  if (std::optional<int> sign = filtered_affine_sign(rows.image(i), point.image, 3, rows.image(i)[3])) return *sign;
  return point.exact_sign(rows.exact[i]);
}

// A 3-vector with its exact entries and their filter images.
struct Vector3 {
  const double* image;
  const Integer* exact;
};

Vector3 normal_of(const Rows& rows, std::size_t i) { return {rows.image(i), rows.exact[i].a.data()}; }

Integer determinant(const Integer* a, const Integer* b, const Integer* c) {
  Integer det = a[0] * (b[1] * c[2] - b[2] * c[1]);
  det -= a[1] * (b[0] * c[2] - b[2] * c[0]);
  det += a[2] * (b[0] * c[1] - b[1] * c[0]);
  return det;
}

int determinant_sign(const Vector3& a, const Vector3& b, const Vector3& c) {
  if (std::optional<int> sign = filtered_determinant_sign(a.image, b.image, c.image)) return *sign;
  return sgn(determinant(a.exact, b.exact, c.exact));
}

// sign(det [(a_p, c_p); (a_q, c_q); (a_r, c_r); (a_s, c_s)]), exactly (the
// exact value expanded along the last column).
int row_determinant_sign(const Rows& rows, std::size_t p, std::size_t q, std::size_t r, std::size_t s) {
  if (std::optional<int> sign = filtered_determinant_sign(rows.image(p), rows.image(q), rows.image(r), rows.image(s)))
    return *sign;
  const SpaceRow& P = rows.exact[p];
  const SpaceRow& Q = rows.exact[q];
  const SpaceRow& R = rows.exact[r];
  const SpaceRow& S = rows.exact[s];
  Integer det = S.c * determinant(P.a.data(), Q.a.data(), R.a.data());
  det -= R.c * determinant(P.a.data(), Q.a.data(), S.a.data());
  det += Q.c * determinant(P.a.data(), R.a.data(), S.a.data());
  det -= P.c * determinant(Q.a.data(), R.a.data(), S.a.data());
  return sgn(det);
}

// b = y0 a_t0 + y1 a_t1 + y2 a_t2 with y >= 0, exactly (Cramer: with
// D = det(a_t), y0 = det(b, a_t1, a_t2) / D and so on). Returns sign(D), 0
// when it fails.
int is_in_cone(const Rows& rows, const Vector3& b, const std::array<std::size_t, 3>& t) {
  const Vector3 a0 = normal_of(rows, t[0]), a1 = normal_of(rows, t[1]), a2 = normal_of(rows, t[2]);
  const int d = determinant_sign(a0, a1, a2);
  if (d == 0) return 0;
  if (determinant_sign(b, a1, a2) * d < 0 || determinant_sign(a0, b, a2) * d < 0 ||
      determinant_sign(a0, a1, b) * d < 0)
    return 0;
  return d;
}

// a_j = sum y a_t with y >= 0 and sum y c_t <= c_j, exactly: with M the 4 x 4
// matrix of rows (a_t0, c_t0), (a_t1, c_t1), (a_t2, c_t2), (a_j, c_j),
// det M = D (c_j - sum y c_t), so the offset condition is sign(det M) D >= 0.
bool is_redundant_by_three(const Rows& rows, std::size_t j, const std::array<std::size_t, 3>& t) {
  const int d = is_in_cone(rows, normal_of(rows, j), t);
  return d != 0 && row_determinant_sign(rows, t[0], t[1], t[2], j) * d >= 0;
}

// Row i a positive multiple of row j (same closed half-space), exactly.
bool is_positive_multiple(const SpaceRow& p, const SpaceRow& q) {
  const Integer* u[4] = {&p.a[0], &p.a[1], &p.a[2], &p.c};
  const Integer* v[4] = {&q.a[0], &q.a[1], &q.a[2], &q.c};
  for (std::size_t i = 0; i < 4; ++i)
    for (std::size_t k = i + 1; k < 4; ++k)
      if (*u[i] * *v[k] != *u[k] * *v[i]) return false;
  return sgn(Integer(p.a[0] * q.a[0] + p.a[1] * q.a[1] + p.a[2] * q.a[2])) > 0;
}

// ---- the polytope ----------------------------------------------------------------

// A vertex, the three planes (ascending indices) that meet there, and its
// three neighbours: next[d] ends the edge that leaves plane label[d] (the
// edge on the other two planes).
struct Vertex {
  Point x;
  std::array<std::uint32_t, 3> label;
  std::array<std::uint32_t, 3> next;
  bool has(std::uint32_t plane) const { return label[0] == plane || label[1] == plane || label[2] == plane; }
  std::size_t slot(std::uint32_t plane) const { return label[0] == plane ? 0 : label[1] == plane ? 1 : 2; }
};
using Polytope = std::vector<Vertex>;

// The point where three planes meet: x = -(c_p (q x r) + c_q (r x p) + c_r (p x q)) / (p . (q x r)).
std::optional<Point> meet(const Plane& p, const Plane& q, const Plane& r) {
  const auto cross = [](const std::array<double, 3>& u, const std::array<double, 3>& v) {
    return Point{u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]};
  };
  const Point qr = cross(q.a, r.a), rp = cross(r.a, p.a), pq = cross(p.a, q.a);
  const double det = p.a[0] * qr[0] + p.a[1] * qr[1] + p.a[2] * qr[2];
  if (!(std::fabs(det) > FilterTolerances::space_parallel_determinant)) return std::nullopt;
  Point x;
  for (std::size_t k = 0; k < 3; ++k) x[k] = -(p.c * qr[k] + q.c * rp[k] + r.c * pq[k]) / det;
  return x;
}

double max_norm(const Point& x) { return std::max({std::fabs(x[0]), std::fabs(x[1]), std::fabs(x[2])}); }

// The polytope cut by plane h (kept where its slack is >= 0). Every edge
// from a cut-off vertex to a kept one gives a new vertex on h; the new
// vertices are joined around the cut face (two of them share each plane that
// crosses it). False when the result is empty or the proposal is degenerate
// (a vertex on h within rounding, inconsistent edges: not a simple polytope
// in double). `spare` is scratch space (swapped with the result).
bool clip(Polytope& polytope, Polytope& spare, const std::vector<Plane>& planes, std::uint32_t h,
          std::vector<double>& slack) {
  constexpr std::uint32_t unset = std::numeric_limits<std::uint32_t>::max();
  const std::size_t n = polytope.size();
  slack.resize(n);
  std::size_t negative = 0;
  for (std::size_t v = 0; v < n; ++v) {
    slack[v] = planes[h].slack(polytope[v].x);
    if (!(std::fabs(slack[v]) > FilterTolerances::space_vertex_on_plane * (1.0 + max_norm(polytope[v].x))))
      return false;
    negative += slack[v] < 0;
  }
  if (negative == 0) return true;
  if (negative == n) return false;
  // Kept vertices first (renumbered), their edges into the cut-off part unset.
  thread_local std::vector<std::uint32_t> renumbered;
  renumbered.assign(n, unset);
  Polytope& next = spare;
  next.clear();
  for (std::size_t v = 0; v < n; ++v)
    if (slack[v] > 0) {
      renumbered[v] = static_cast<std::uint32_t>(next.size());
      next.push_back(polytope[v]);
    }
  for (Vertex& vertex : next)
    for (std::uint32_t& to : vertex.next) to = to < n ? renumbered[to] : unset;
  const std::size_t first_new = next.size();
  for (std::size_t v = 0; v < n; ++v) {
    if (slack[v] > 0) continue;
    for (std::size_t d = 0; d < 3; ++d) {
      const std::uint32_t w = polytope[v].next[d];
      if (w >= n) return false;
      if (slack[w] < 0) continue;  // the whole edge goes
      const std::uint32_t p = polytope[v].label[(d + 1) % 3], q = polytope[v].label[(d + 2) % 3];
      Vertex& kept = next[renumbered[w]];
      if (!kept.has(p) || !kept.has(q)) return false;
      const std::optional<Point> x = meet(planes[p], planes[q], planes[h]);
      if (!x) return false;
      Vertex vertex{*x, {p, q, h}, {unset, unset, unset}};
      std::sort(vertex.label.begin(), vertex.label.end());
      vertex.next[vertex.slot(h)] = renumbered[w];
      const std::size_t towards = kept.label[0] != p && kept.label[0] != q ? 0 : kept.label[1] != p && kept.label[1] != q ? 1 : 2;
      if (kept.next[towards] != unset) return false;
      kept.next[towards] = static_cast<std::uint32_t>(next.size());
      next.push_back(vertex);
    }
  }
  // Around the cut face: the edge on planes {r, h} of a new vertex joins the
  // other new vertex on r.
  for (std::size_t u = first_new; u < next.size(); ++u)
    for (std::size_t d = 0; d < 3; ++d) {
      const std::uint32_t r = next[u].label[d];
      if (r == h) continue;
      std::size_t partner = next.size();
      for (std::size_t t = first_new; t < next.size(); ++t)
        if (t != u && next[t].has(r)) {
          if (partner != next.size()) return false;
          partner = t;
        }
      if (partner == next.size()) return false;
      // The edge on {r, h} leaves u's third plane.
      std::size_t across = 0;
      while (next[u].label[across] == r || next[u].label[across] == h) ++across;
      next[u].next[across] = static_cast<std::uint32_t>(partner);
    }
  for (const Vertex& vertex : next)
    for (std::uint32_t to : vertex.next)
      if (to == unset) return false;
  polytope.swap(next);
  return polytope.size() >= 4;
}

// The box [-r, r]^3 as six planes appended to `planes`, and its polytope.
Polytope box_polytope(std::vector<Plane>& planes, double r) {
  const auto first = static_cast<std::uint32_t>(planes.size());
  for (std::size_t k = 0; k < 3; ++k)
    for (double sign : {1.0, -1.0}) {  // x_k >= -r, then x_k <= r
      Plane plane;
      plane.a[k] = sign;
      plane.c = r;
      planes.push_back(plane);
    }
  Polytope box;
  for (std::uint32_t corner = 0; corner < 8; ++corner) {
    Vertex vertex;
    for (std::uint32_t k = 0; k < 3; ++k) {
      const bool is_high = (corner >> k) & 1;
      vertex.x[k] = is_high ? r : -r;
      vertex.label[k] = first + 2 * k + (is_high ? 1 : 0);
      vertex.next[k] = corner ^ (1u << k);  // leaving the face x_k = +-r: along axis k
    }
    box.push_back(vertex);
  }
  return box;
}

Point average(const std::vector<const Point*>& points) {
  Point sum{0.0, 0.0, 0.0};
  for (const Point* x : points)
    for (std::size_t k = 0; k < 3; ++k) sum[k] += (*x)[k];
  for (double& value : sum) value /= static_cast<double>(points.size());
  return sum;
}

// ---- the pieces of describe_space_cell ---------------------------------------------

// Rows grouped into classes of positive multiples: equal scaled rows screen,
// integers decide. Fills cell.groups (ordered by representative).
void group_rows(const std::vector<SpaceRow>& exact, const std::vector<Plane>& all, SpaceCell& cell,
                std::vector<std::size_t>& representative) {
  const std::size_t m = exact.size();
  std::vector<std::size_t> order(m), root(m);
  for (std::size_t i = 0; i < m; ++i) order[i] = root[i] = i;
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return all[a].a[0] < all[b].a[0]; });
  constexpr double screen = FilterTolerances::fast_path_multiple_screen;
  const auto find = [&](std::size_t i) {
    while (root[i] != i) i = root[i];
    return i;
  };
  for (std::size_t a = 0; a < m; ++a) {
    const std::size_t i = order[a];
    for (std::size_t b = a + 1; b < m && all[order[b]].a[0] - all[i].a[0] <= screen; ++b) {
      const std::size_t j = order[b];
      if (std::fabs(all[i].a[1] - all[j].a[1]) > screen || std::fabs(all[i].a[2] - all[j].a[2]) > screen ||
          !is_positive_multiple(exact[i], exact[j]))
        continue;
      const std::size_t ri = find(i), rj = find(j);
      if (ri != rj) root[std::max(ri, rj)] = std::min(ri, rj);
    }
  }
  std::vector<std::size_t> group_of(m);
  for (std::size_t i = 0; i < m; ++i) {
    const std::size_t r = find(i);
    if (r == i) {
      group_of[i] = cell.groups.size();
      cell.groups.push_back(SpaceGroup{{i}, false, {}, {}});
      representative.push_back(i);
    } else {
      group_of[i] = group_of[r];
      cell.groups[group_of[r]].rows.push_back(i);
    }
  }
}

// A rational point near x strictly inside every representative, or empty.
RationalVector interior_point(const Rows& rows, const std::vector<Plane>& planes,
                              const std::vector<std::size_t>& representative, const Point& x) {
  double least = std::numeric_limits<double>::infinity();
  for (std::size_t k = 0; k < representative.size(); ++k) least = std::min(least, planes[k].slack(x));
  if (!(least > 0.0)) return {};
  for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
    RationalVector point;
    for (std::size_t k = 0; k < 3; ++k) point.push_back(detail::short_rational_near(x[k], least * shrink));
    ScaledPoint scaled(point);
    bool inside = true;
    for (std::size_t k = 0; k < representative.size() && inside; ++k) inside = sign_at(rows, representative[k], scaled) > 0;
    if (inside) return point;  // group members are positive multiples of their representative
  }
  return {};
}

// A point of group k's plane where every other representative is > 0: the
// average of the face's vertices in `shape`, two coordinates rounded and the
// third (largest |a|) solved exactly. Empty when it cannot be proved.
RationalVector facet_point(const Rows& rows, const std::vector<Plane>& planes,
                           const std::vector<std::size_t>& representative, std::size_t k, const Polytope& shape) {
  std::vector<const Point*> face;
  for (const Vertex& vertex : shape)
    if (vertex.has(static_cast<std::uint32_t>(k))) face.push_back(&vertex.x);
  if (face.size() < 3) return {};
  const Point middle = average(face);
  double margin = 1.0;
  for (std::size_t other = 0; other < representative.size(); ++other)
    if (other != k) margin = std::min(margin, planes[other].slack(middle));
  if (!(margin > 0.0)) return {};
  const SpaceRow& row = rows.exact[representative[k]];
  std::size_t solved = 0;
  for (std::size_t c = 1; c < 3; ++c)
    if (std::fabs(planes[k].a[c]) > std::fabs(planes[k].a[solved])) solved = c;
  for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
    // Moving the two rounded coordinates by at most r moves the solved one by
    // at most 2 r (|a_solved| is the largest): every slack by at most 2 r.
    RationalVector point(3);
    Rational rest(row.c);
    for (std::size_t c = 0; c < 3; ++c) {
      if (c == solved) continue;
      point[c] = detail::short_rational_near(middle[c], margin * shrink);
      rest += Rational(row.a[c]) * point[c];
    }
    point[solved] = -rest / Rational(row.a[solved]);
    ScaledPoint scaled(point);
    bool holds = true;
    for (std::size_t other = 0; other < representative.size() && holds; ++other)
      if (other != k) holds = sign_at(rows, representative[other], scaled) > 0;
    if (holds) return point;
  }
  return {};
}

// a_j = sum y a_s (y >= 0), sum y c_s <= c_j for a support of 1 or 2 rows,
// exactly (rare: cells without vertices).
bool is_redundant_exactly(const std::vector<SpaceRow>& exact, std::size_t j, const std::vector<std::size_t>& support) {
  Polyhedron small{3, {}};
  std::vector<std::size_t> indices;
  for (std::size_t s : support) {
    indices.push_back(small.constraints.size());
    const SpaceRow& row = exact[s];
    small.constraints.push_back(Constraint{{Rational(row.a[0]), Rational(row.a[1]), Rational(row.a[2])}, Rational(row.c)});
  }
  const SpaceRow& row = exact[j];
  small.constraints.push_back(Constraint{{Rational(row.a[0]), Rational(row.a[1]), Rational(row.a[2])}, Rational(row.c)});
  return space_redundancy_certificate(small, small.constraints.size() - 1, indices).has_value();
}

// The support proving that group k (no face) is not a facet, or empty.
std::vector<std::size_t> redundancy_support(const Rows& rows, const std::vector<Plane>& planes,
                                            const std::vector<std::size_t>& representative, std::size_t k,
                                            const Polytope& polytope) {
  const std::size_t g = representative.size();
  const std::size_t j = representative[k];
  const auto is_real = [&](const Vertex& v) { return v.label[2] < g; };  // labels ascending; box planes follow
  const bool has_real = std::any_of(polytope.begin(), polytope.end(), is_real);
  // A redundant row's minimum over a pointed cell is at a vertex, whose three
  // planes support it (LP optimality); without vertices, the least box-clipped
  // vertex's real planes.
  const Vertex* best = nullptr;
  double least = std::numeric_limits<double>::infinity();
  for (const Vertex& v : polytope) {
    if (has_real && !is_real(v)) continue;
    const double value = planes[k].slack(v.x);
    if (value < least) {
      least = value;
      best = &v;
    }
  }
  if (!best) return {};
  std::vector<std::size_t> support;
  for (std::uint32_t label : best->label)
    if (label < g) support.push_back(representative[label]);
  std::sort(support.begin(), support.end());
  if (support.size() == 3) {
    if (!is_redundant_by_three(rows, j, {support[0], support[1], support[2]})) return {};
  } else if (support.empty() || !is_redundant_exactly(rows.exact, j, support)) {
    return {};
  }
  return support;
}

const Integer unit_entries[3][3] = {{Integer(1), Integer(0), Integer(0)},
                                    {Integer(0), Integer(1), Integer(0)},
                                    {Integer(0), Integer(0), Integer(1)}};

// Bounded: for each of the six directions u = +-e_k, the vertex where u . x
// is largest has -u in the cone of its planes' normals (LP optimality);
// summed, those multipliers are Stiemke multipliers (y >= 0, sum y a = 0,
// their normals span R^3 as every +-e_k is in their cone).
bool is_bounded_proved(const Rows& rows, const std::vector<std::size_t>& representative, const Polytope& polytope) {
  for (std::size_t k = 0; k < 3; ++k)
    for (double sign : {1.0, -1.0}) {
      const Vertex* best = &polytope.front();
      for (const Vertex& v : polytope)
        if (sign * v.x[k] > sign * best->x[k]) best = &v;
      Integer negated[3] = {Integer(0), Integer(0), Integer(0)};  // -u
      negated[k] = sign > 0 ? -1 : 1;
      const double image[3] = {filter_image(negated[0]), filter_image(negated[1]), filter_image(negated[2])};
      const std::array<std::size_t, 3> t{representative[best->label[0]], representative[best->label[1]],
                                         representative[best->label[2]]};
      if (is_in_cone(rows, Vector3{image, negated}, t) == 0) return false;
    }
  return true;
}

// a_i . d >= 0 for every representative among the first `count`, exactly.
bool is_recession_direction(const Rows& rows, const std::vector<std::size_t>& representative, std::size_t count,
                            const std::array<Integer, 3>& d) {
  if (sgn(d[0]) == 0 && sgn(d[1]) == 0 && sgn(d[2]) == 0) return false;
  const double image[3] = {filter_image(d[0]), filter_image(d[1]), filter_image(d[2])};
  for (std::size_t k = 0; k < count; ++k) {
    const std::size_t i = representative[k];
    std::optional<int> sign = filtered_affine_sign(rows.image(i), image, 3, 0.0);
    if (!sign) {
      const SpaceRow& row = rows.exact[i];
      sign = sgn(Integer(row.a[0] * d[0] + row.a[1] * d[1] + row.a[2] * d[2]));
    }
    if (*sign < 0) return false;
  }
  return true;
}

std::array<Integer, 3> cross(const Integer* u, const Integer* v) {
  return {Integer(u[1] * v[2] - u[2] * v[1]), Integer(u[2] * v[0] - u[0] * v[2]), Integer(u[0] * v[1] - u[1] * v[0])};
}

// Unbounded: a recession direction from a vertex on the box: the edge
// direction of its two real planes, a real plane crossed with an axis, or
// (no real plane) the box corner's signs. Tries the first few such vertices.
bool is_unbounded_proved(const Rows& rows, const std::vector<std::size_t>& representative, std::size_t count,
                         const Polytope& polytope) {
  std::size_t tried = 0;
  for (const Vertex& v : polytope) {
    std::vector<std::size_t> real;
    for (std::uint32_t label : v.label)
      if (label < count) real.push_back(representative[label]);
    if (real.size() == 3) continue;
    if (++tried > 8) return false;
    std::vector<std::array<Integer, 3>> candidates;
    if (real.size() == 2) {
      candidates.push_back(cross(rows.exact[real[0]].a.data(), rows.exact[real[1]].a.data()));
    } else if (real.size() == 1) {
      for (const auto& axis : unit_entries) candidates.push_back(cross(rows.exact[real[0]].a.data(), axis));
    } else {
      candidates.push_back({Integer(v.x[0] > 0 ? 1 : -1), Integer(v.x[1] > 0 ? 1 : -1), Integer(v.x[2] > 0 ? 1 : -1)});
    }
    for (std::array<Integer, 3>& d : candidates) {
      if (is_recession_direction(rows, representative, count, d)) return true;
      for (Integer& value : d) value = -value;
      if (is_recession_direction(rows, representative, count, d)) return true;
    }
  }
  return false;
}

}  // namespace

std::optional<SpaceCell> describe_space_cell(const std::vector<SpaceRow>& exact_rows, std::size_t bounded_rows) {
  const std::size_t m = exact_rows.size();
  if (m == 0) throw usage_error("describe_space_cell: no rows");
  if (bounded_rows > m) throw usage_error("describe_space_cell: more bounded rows than rows");
  Rows rows{exact_rows, std::vector<double>(4 * m)};
  std::vector<Plane> all(m);
  for (std::size_t i = 0; i < m; ++i) {
    const SpaceRow& row = exact_rows[i];
    if (sgn(row.a[0]) == 0 && sgn(row.a[1]) == 0 && sgn(row.a[2]) == 0)
      throw usage_error("describe_space_cell: a row with a zero normal");
    double* image = rows.images.data() + 4 * i;
    for (std::size_t k = 0; k < 3; ++k) image[k] = filter_image(row.a[k]);
    image[3] = filter_image(row.c);
    const double norm = std::fabs(image[0]) + std::fabs(image[1]) + std::fabs(image[2]);
    for (std::size_t k = 0; k < 3; ++k) all[i].a[k] = image[k] / norm;
    all[i].c = image[3] / norm;
    if (!std::isfinite(norm) || !(norm > 0.0) || !std::isfinite(all[i].c)) return std::nullopt;
  }
  SpaceCell cell;
  std::vector<std::size_t> representative;
  group_rows(exact_rows, all, cell, representative);
  const std::size_t g = representative.size();
  std::size_t bounded_groups = 0;  // groups whose representative is among the first bounded_rows
  while (bounded_groups < g && representative[bounded_groups] < bounded_rows) ++bounded_groups;

  // The polytope: a large box clipped by every representative (plane index =
  // group index; the box's planes follow). The rows of the boundedness
  // question come first: the polytope after them is kept.
  std::vector<Plane> planes(g);
  for (std::size_t k = 0; k < g; ++k) planes[k] = all[representative[k]];
  constexpr double box = 0x1p24;
  // Buffers reused between calls on one thread (a walk describes many cells).
  thread_local Polytope polytope, bounded_part, near, spare;
  thread_local std::vector<double> slack;
  polytope = box_polytope(planes, box);
  bounded_part.clear();
  for (std::size_t k = 0; k < g; ++k) {
    if (k == bounded_groups) bounded_part = polytope;
    if (!clip(polytope, spare, planes, static_cast<std::uint32_t>(k), slack)) return std::nullopt;
  }
  if (bounded_groups == g) bounded_part = polytope;

  // The part near the vertices when the cell reaches the box (unbounded or huge).
  const auto is_real = [&](const Vertex& v) { return v.label[2] < g; };
  bool reaches_box = false;
  double extent = 0.0;
  for (const Vertex& v : polytope) {
    if (is_real(v)) extent = std::max(extent, max_norm(v.x));
    else reaches_box = true;
  }
  std::vector<char> has_face(g, 0);
  for (const Vertex& v : polytope)
    for (std::uint32_t label : v.label)
      if (label < g) has_face[label] = 1;
  near = polytope;
  if (reaches_box) {
    if (extent == 0.0)  // no vertex: the feet of the planes on the cell
      for (std::size_t k = 0; k < g; ++k)
        if (has_face[k]) {
          const Plane& p = planes[k];
          const double square = p.a[0] * p.a[0] + p.a[1] * p.a[1] + p.a[2] * p.a[2];
          extent = std::max(extent, max_norm(Point{-p.c * p.a[0] / square, -p.c * p.a[1] / square,
                                                   -p.c * p.a[2] / square}));
        }
    const double radius = 1.0 + 2.0 * extent;
    if (!(radius < box / 4)) return std::nullopt;
    const std::size_t first = planes.size();
    (void)box_polytope(planes, radius);  // appends six planes; `near` is the cell cut by them
    for (std::size_t k = first; k < planes.size(); ++k)
      if (!clip(near, spare, planes, static_cast<std::uint32_t>(k), slack)) return std::nullopt;
  }

  std::vector<const Point*> corners;
  for (const Vertex& v : near) corners.push_back(&v.x);
  cell.interior = interior_point(rows, planes, representative, average(corners));
  if (cell.interior.empty()) return std::nullopt;

  for (std::size_t k = 0; k < g; ++k) {
    SpaceGroup& group = cell.groups[k];
    if (has_face[k]) {
      group.point = facet_point(rows, planes, representative, k, near);
      if (group.point.empty()) group.point = facet_point(rows, planes, representative, k, polytope);
      if (group.point.empty()) return std::nullopt;
      group.is_facet = true;
    } else {
      group.support = redundancy_support(rows, planes, representative, k, polytope);
      if (group.support.empty()) return std::nullopt;
    }
  }

  if (bounded_groups > 0) {
    const bool touches_box = std::any_of(bounded_part.begin(), bounded_part.end(),
                                         [&](const Vertex& v) { return v.label[2] >= bounded_groups; });
    if (!touches_box && is_bounded_proved(rows, representative, bounded_part)) cell.bounded = true;
    else if (touches_box && is_unbounded_proved(rows, representative, bounded_groups, bounded_part)) cell.bounded = false;
  }
  return cell;
}

}  // namespace pleat::lp
