// The plane's fast path (lp/plane_cell.hpp). Double proposes: the cell is
// clipped as a polygon whose edges are kept as line indices and whose
// vertices are recomputed from the two original lines at each corner. Exact
// proves: every sign below is filtered first and computed in integers only
// when the filter cannot decide.
#include "lp/plane_cell.hpp"

#include "core/filtered_sign.hpp"
#include "lp/detail/double_rows.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/filter_tolerances.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace pleat::lp {
namespace {

// A row's line in double, scaled to |a0| + |a1| = 1, so that a slack is
// within a factor 2 of the max-norm distance to the line.
struct Line {
  double a0 = 0, a1 = 0, c = 0;
  double slack(const std::array<double, 2>& x) const { return a0 * x[0] + a1 * x[1] + c; }
};

using Point = std::array<double, 2>;

// The exact rows and their filter images (a0, a1, c per row).
struct Rows {
  std::span<const PlaneRow> exact;
  std::vector<double> images;  // 3 per row
  const double* image(std::size_t i) const { return images.data() + 3 * i; }
};

// ---- exact signs: filtered, then integers --------------------------------------

// A rational point: its filter images, and (built only when a filter
// cannot decide) integer numerators over one positive denominator.
class ScaledPoint {
 public:
  explicit ScaledPoint(const RationalVector& point) : point_(point) {
    image[0] = filter_image(point[0]);
    image[1] = filter_image(point[1]);
  }
  double image[2];

  // sign(a0 x0 + a1 x1 + c) exactly.
  int exact_sign(const PlaneRow& row) {
    if (!is_scaled_) {
      mpz_lcm(denominator_.get_mpz_t(), point_[0].get_den_mpz_t(), point_[1].get_den_mpz_t());
      x0_ = point_[0].get_num() * (denominator_ / point_[0].get_den());
      x1_ = point_[1].get_num() * (denominator_ / point_[1].get_den());
      is_scaled_ = true;
    }
    Integer sum = row.c * denominator_;
    sum += row.a0 * x0_;
    sum += row.a1 * x1_;
    return sgn(sum);
  }

 private:
  const RationalVector& point_;
  bool is_scaled_ = false;
  Integer x0_, x1_, denominator_;
};

// sign(a0 x0 + a1 x1 + c) at the point, exactly.
int sign_at(const Rows& rows, std::size_t i, ScaledPoint& point) {
  if (std::optional<int> sign = filtered_affine_sign(rows.image(i), point.image, 2, rows.image(i)[2])) return *sign;
  return point.exact_sign(rows.exact[i]);
}

// sign(det [a_i; a_j]) of two normals, exactly.
int normal_determinant_sign(const Rows& rows, std::size_t i, std::size_t j) {
  const double* a = rows.image(i);
  const double* b = rows.image(j);
  if (std::optional<int> sign = filtered_determinant_sign(a[0], a[1], b[0], b[1])) return *sign;
  const PlaneRow& p = rows.exact[i];
  const PlaneRow& q = rows.exact[j];
  return sgn(Integer(p.a0 * q.a1 - p.a1 * q.a0));
}

// sign(det [(a_i, c_i); (a_j, c_j); (a_k, c_k)]), exactly.
int row_determinant_sign(const Rows& rows, std::size_t i, std::size_t j, std::size_t k) {
  if (std::optional<int> sign = filtered_determinant_sign(rows.image(i), rows.image(j), rows.image(k))) return *sign;
  const PlaneRow& p = rows.exact[i];
  const PlaneRow& q = rows.exact[j];
  const PlaneRow& r = rows.exact[k];
  Integer det = p.c * (q.a0 * r.a1 - q.a1 * r.a0);
  det -= q.c * (p.a0 * r.a1 - p.a1 * r.a0);
  det += r.c * (p.a0 * q.a1 - p.a1 * q.a0);
  return sgn(det);
}

// Row i a positive multiple of row j (same closed half-plane), exactly.
bool is_positive_multiple(const PlaneRow& p, const PlaneRow& q) {
  if (p.a0 * q.a1 != p.a1 * q.a0) return false;
  if (p.a0 * q.c != q.a0 * p.c || p.a1 * q.c != q.a1 * p.c) return false;
  return sgn(Integer(p.a0 * q.a0 + p.a1 * q.a1)) > 0;
}

// a_j = y1 a_s1 + y2 a_s2 with y >= 0 and y1 c_s1 + y2 c_s2 <= c_j, exactly:
// with D = det(a_s1, a_s2), y1 = det(a_j, a_s2) / D, y2 = det(a_s1, a_j) / D and
// y1 c_s1 + y2 c_s2 - c_j = -det[(a_s1, c_s1); (a_s2, c_s2); (a_j, c_j)] / D.
bool is_redundant_by_two(const Rows& rows, std::size_t j, std::size_t s1, std::size_t s2) {
  const int d = normal_determinant_sign(rows, s1, s2);
  if (d == 0) return false;
  if (normal_determinant_sign(rows, j, s2) * d < 0) return false;
  if (normal_determinant_sign(rows, s1, j) * d < 0) return false;
  return row_determinant_sign(rows, s1, s2, j) * d >= 0;
}

// a_j = y a_s with y > 0 and y c_s <= c_j, exactly.
bool is_redundant_by_one(const Rows& rows, std::size_t j, std::size_t s) {
  if (normal_determinant_sign(rows, j, s) != 0) return false;
  const PlaneRow& a = rows.exact[j];
  const PlaneRow& b = rows.exact[s];
  if (sgn(Integer(a.a0 * b.a0 + a.a1 * b.a1)) <= 0) return false;
  // y = a_jk / a_sk for a k with a_sk != 0; y c_s <= c_j  <=>  a_jk c_s <= c_j a_sk (a_sk > 0).
  const bool first = sgn(b.a0) != 0;
  const Integer& ajk = first ? a.a0 : a.a1;
  const Integer& ask = first ? b.a0 : b.a1;
  const Integer left = ajk * b.c;
  const Integer right = a.c * ask;
  return sgn(ask) > 0 ? left <= right : left >= right;
}

// ---- the polygon ---------------------------------------------------------------

// A convex polygon as its edges' lines in counter-clockwise order; vertex k
// is where edge k-1 meets edge k (computed from the two lines).
struct Polygon {
  std::vector<std::size_t> edges;
  std::vector<Point> vertices;
};

std::optional<Point> intersect(const Line& p, const Line& q) {
  const double det = p.a0 * q.a1 - p.a1 * q.a0;
  if (!(std::fabs(det) > FilterTolerances::plane_parallel_determinant)) return std::nullopt;
  return Point{(-p.c * q.a1 + q.c * p.a1) / det, (-p.a0 * q.c + q.a0 * p.c) / det};
}

// Buffers clip() reuses from one line to the next (a cell is clipped by
// every one of its lines: no allocation per line).
struct ClipScratch {
  std::vector<double> slack;
  Polygon next;
};

// The polygon cut by line i (kept where its slack is >= 0); false when the
// result is empty or inconsistent.
bool clip(Polygon& polygon, const std::vector<Line>& lines, std::size_t i, ClipScratch& scratch) {
  const std::size_t p = polygon.edges.size();
  std::vector<double>& slack = scratch.slack;
  slack.resize(p);
  std::size_t negative = 0;
  for (std::size_t k = 0; k < p; ++k) {
    slack[k] = lines[i].slack(polygon.vertices[k]);
    negative += slack[k] < 0;
  }
  if (negative == 0) return true;
  if (negative == p) return false;
  // The negative vertices form one cyclic run first..last.
  std::size_t first = 0;
  while (!(slack[first] < 0 && !(slack[(first + p - 1) % p] < 0))) ++first;
  std::size_t last = first;
  for (std::size_t step = 1; step < negative; ++step) {
    last = (last + 1) % p;
    if (!(slack[last] < 0)) return false;  // two runs: not convex in double
  }
  const std::size_t before = polygon.edges[(first + p - 1) % p];  // edge entering the run
  const std::size_t after = polygon.edges[last];                   // edge leaving it
  const std::optional<Point> enter = intersect(lines[before], lines[i]);
  const std::optional<Point> leave = intersect(lines[i], lines[after]);
  if (!enter || !leave) return false;
  Polygon& next = scratch.next;
  next.edges.clear();
  next.vertices.clear();
  next.edges.push_back(after);
  next.vertices.push_back(*leave);
  for (std::size_t k = (last + 1) % p; k != first; k = (k + 1) % p) {
    next.edges.push_back(polygon.edges[k]);
    next.vertices.push_back(polygon.vertices[k]);
  }
  // edges now ends with `before` (the edge from the last kept vertex); then line i.
  next.edges.push_back(i);
  next.vertices.push_back(*enter);
  std::swap(polygon, next);  // both keep their capacity for the next line
  return polygon.edges.size() >= 3;
}

// The box [-r, r]^2 as four lines appended to `lines`, and the polygon of it.
Polygon box_polygon(std::vector<Line>& lines, double r) {
  const std::size_t first = lines.size();
  // Counter-clockwise with inward normals: bottom, right, top, left.
  lines.push_back(Line{0.0, 1.0, r});
  lines.push_back(Line{-1.0, 0.0, r});
  lines.push_back(Line{0.0, -1.0, r});
  lines.push_back(Line{1.0, 0.0, r});
  Polygon polygon;
  polygon.edges = {first, first + 1, first + 2, first + 3};
  polygon.vertices = {Point{-r, -r}, Point{r, -r}, Point{r, r}, Point{-r, r}};
  return polygon;
}

double max_norm(const Point& x) { return std::max(std::fabs(x[0]), std::fabs(x[1])); }

// Bounded, proved from a polygon whose every edge lies on a cell line (it
// never reached the box): each edge's normal turns counter-clockwise by less
// than pi to the next one's, cyclically, i.e. det(a_k, a_k+1) > 0 for every
// k (exact signs; double proposed the order). Normals in one closed half-
// plane, an arc of at most pi, could not do that: each step would move
// strictly forward within the arc and never come back. So they positively
// span the plane, and no d != 0 has a . d >= 0 for all of them: the closure
// has no recession direction. nullopt when a sign fails.
std::optional<bool> bounded_by_edges(const Rows& rows, const Polygon& polygon,
                                     const std::vector<std::size_t>& representative) {
  const std::size_t p = polygon.edges.size();
  if (p < 3) return std::nullopt;
  for (std::size_t e = 0; e < p; ++e)
    if (normal_determinant_sign(rows, representative[polygon.edges[e]], representative[polygon.edges[(e + 1) % p]]) <= 0)
      return std::nullopt;
  return true;
}

}  // namespace

std::optional<PlaneCell> describe_plane_cell(const std::vector<PlaneRow>& exact_rows) {
  const std::size_t m = exact_rows.size();
  if (m == 0) throw usage_error("describe_plane_cell: no rows");
  Rows rows{exact_rows, std::vector<double>(3 * m)};
  std::vector<Line> all(m);
  for (std::size_t i = 0; i < m; ++i) {
    const PlaneRow& row = exact_rows[i];
    if (sgn(row.a0) == 0 && sgn(row.a1) == 0) throw usage_error("describe_plane_cell: a row with a zero normal");
    double* image = rows.images.data() + 3 * i;
    image[0] = filter_image(row.a0);
    image[1] = filter_image(row.a1);
    image[2] = filter_image(row.c);
    const double norm = std::fabs(image[0]) + std::fabs(image[1]);
    all[i] = Line{image[0] / norm, image[1] / norm, image[2] / norm};
    if (!std::isfinite(all[i].a0) || !std::isfinite(all[i].a1) || !std::isfinite(all[i].c)) return std::nullopt;
  }

  // Classes of positive multiples: equal scaled normals screen, integers decide.
  std::vector<std::size_t> order(m);
  for (std::size_t i = 0; i < m; ++i) order[i] = i;
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return all[a].a0 < all[b].a0; });
  std::vector<std::size_t> root(m);
  for (std::size_t i = 0; i < m; ++i) root[i] = i;
  constexpr double screen = FilterTolerances::fast_path_multiple_screen;
  for (std::size_t a = 0; a < m; ++a) {
    const std::size_t i = order[a];
    for (std::size_t b = a + 1; b < m && all[order[b]].a0 - all[i].a0 <= screen; ++b) {
      const std::size_t j = order[b];
      if (std::fabs(all[i].a1 - all[j].a1) > screen || !is_positive_multiple(exact_rows[i], exact_rows[j])) continue;
      std::size_t ri = i, rj = j;
      while (root[ri] != ri) ri = root[ri];
      while (root[rj] != rj) rj = root[rj];
      if (ri != rj) root[std::max(ri, rj)] = std::min(ri, rj);
    }
  }
  PlaneCell cell;
  std::vector<std::size_t> group_of(m);
  std::vector<std::size_t> representative;  // per group
  for (std::size_t i = 0; i < m; ++i) {
    std::size_t r = i;
    while (root[r] != r) r = root[r];
    if (r == i) {
      group_of[i] = cell.groups.size();
      cell.groups.push_back(PlaneGroup{{i}, false, {}, {}});
      representative.push_back(i);
    } else {
      group_of[i] = group_of[r];
      cell.groups[group_of[r]].rows.push_back(i);
    }
  }
  const std::size_t g = representative.size();

  // The polygon: a large box clipped by every representative (line index =
  // group index; the box's lines follow).
  std::vector<Line> lines(g);
  for (std::size_t k = 0; k < g; ++k) lines[k] = all[representative[k]];
  constexpr double box = 0x1p26;
  Polygon polygon = box_polygon(lines, box);
  ClipScratch scratch;
  for (std::size_t k = 0; k < g; ++k)
    if (!clip(polygon, lines, k, scratch)) return std::nullopt;
  const std::size_t p = polygon.edges.size();
  const auto is_cell_edge = [&](std::size_t k) { return polygon.edges[k % p] < g; };
  const auto is_true_vertex = [&](std::size_t k) { return is_cell_edge((k + p - 1) % p) && is_cell_edge(k); };

  // The part near the vertices when the cell reaches the box (unbounded or huge).
  bool reaches_box = false;
  double extent = 0.0;
  bool has_true_vertex = false;
  for (std::size_t k = 0; k < p; ++k) {
    if (!is_cell_edge(k)) reaches_box = true;
    if (is_true_vertex(k)) {
      has_true_vertex = true;
      extent = std::max(extent, max_norm(polygon.vertices[k]));
    }
  }
  if (!reaches_box) cell.bounded = bounded_by_edges(rows, polygon, representative);
  Polygon near = polygon;
  if (reaches_box) {
    if (!has_true_vertex)
      for (std::size_t k = 0; k < p; ++k) {
        if (!is_cell_edge(k)) continue;
        const Line& line = lines[polygon.edges[k]];
        const double square = line.a0 * line.a0 + line.a1 * line.a1;
        extent = std::max(extent, max_norm(Point{-line.c * line.a0 / square, -line.c * line.a1 / square}));
      }
    const double radius = 1.0 + 2.0 * extent;
    if (!(radius < box / 4)) return std::nullopt;
    Polygon clipped = box_polygon(lines, radius);  // appends four lines; `near` is the cell cut by them
    (void)clipped;
    for (std::size_t k = lines.size() - 4; k < lines.size(); ++k)
      if (!clip(near, lines, k, scratch)) return std::nullopt;
  }

  // The interior point: the vertex average of `near`, rounded within 1/16 of
  // its least scaled slack.
  Point centre{0.0, 0.0};
  for (const Point& v : near.vertices) {
    centre[0] += v[0];
    centre[1] += v[1];
  }
  centre[0] /= static_cast<double>(near.vertices.size());
  centre[1] /= static_cast<double>(near.vertices.size());
  double least = std::numeric_limits<double>::infinity();
  for (std::size_t k = 0; k < g; ++k) least = std::min(least, lines[k].slack(centre));
  if (!(least > 0.0)) return std::nullopt;
  const auto is_strictly_inside = [&](const RationalVector& x) {
    ScaledPoint scaled(x);
    for (std::size_t k = 0; k < g; ++k)
      if (sign_at(rows, representative[k], scaled) <= 0) return false;
    return true;  // group members are positive multiples of their representative
  };
  for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
    RationalVector x(2);  // filled in place: no copies of the coordinates
    x[0] = detail::short_rational_near(centre[0], least * shrink);
    x[1] = detail::short_rational_near(centre[1], least * shrink);
    if (is_strictly_inside(x)) {
      cell.interior = std::move(x);
      break;
    }
  }
  if (cell.interior.empty()) return std::nullopt;

  // Facets: every cell edge of the polygon, proved by an exact point on its
  // line (the edge's middle in `near` when it has one there) where every other
  // representative is > 0.
  std::vector<char> has_edge(g, 0);
  const auto facet_point = [&](std::size_t k, const Polygon& shape) -> bool {
    const std::size_t q = shape.edges.size();
    std::size_t at = q;
    for (std::size_t e = 0; e < q; ++e)
      if (shape.edges[e] == k) at = e;
    if (at == q) return false;
    const Point& from = shape.vertices[at];
    const Point& to = shape.vertices[(at + 1) % q];
    if (!(max_norm(Point{to[0] - from[0], to[1] - from[1]}) > FilterTolerances::plane_short_edge * (1.0 + max_norm(from))))
      return false;
    const Point middle{(from[0] + to[0]) / 2, (from[1] + to[1]) / 2};
    double margin = 1.0;
    for (std::size_t other = 0; other < g; ++other)
      if (other != k) margin = std::min(margin, lines[other].slack(middle));
    if (!(margin > 0.0)) return false;
    // Round the coordinate with the smaller |a| and solve the line for the
    // other (|a_solved| >= |a_other|: the point moves by at most the radius).
    const PlaneRow& row = exact_rows[representative[k]];
    const bool solve_first = abs(row.a0) >= abs(row.a1);
    const Integer& solved_a = solve_first ? row.a0 : row.a1;
    const Integer& other_a = solve_first ? row.a1 : row.a0;
    const double other_value = solve_first ? middle[1] : middle[0];
    for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
      // a_s x_s + a_o (p / q) + c = 0  =>  x_s = -(c q + a_o p) / (a_s q),
      // written straight into the point's coordinates (no temporaries).
      RationalVector x(2);
      Rational& other = x[solve_first ? 1 : 0];
      Rational& solved = x[solve_first ? 0 : 1];
      other = detail::short_rational_near(other_value, margin * shrink);
      mpz_ptr numerator = mpq_numref(solved.get_mpq_t());
      mpz_mul(numerator, row.c.get_mpz_t(), other.get_den_mpz_t());
      mpz_addmul(numerator, other_a.get_mpz_t(), other.get_num_mpz_t());
      mpz_neg(numerator, numerator);
      mpz_mul(mpq_denref(solved.get_mpq_t()), solved_a.get_mpz_t(), other.get_den_mpz_t());
      solved.canonicalize();  // a_s != 0 (|a_s| >= |a_o|, not both 0); the sign moves to the numerator
      ScaledPoint scaled(x);
      bool holds = true;
      for (std::size_t o = 0; o < g && holds; ++o)
        if (o != k) holds = sign_at(rows, representative[o], scaled) > 0;
      if (holds) {
        cell.groups[k].is_facet = true;
        cell.groups[k].point = std::move(x);
        return true;
      }
    }
    return false;
  };
  for (std::size_t e = 0; e < p; ++e)
    if (is_cell_edge(e)) {
      const std::size_t k = polygon.edges[e];
      if (has_edge[k]) return std::nullopt;  // a line twice on a convex polygon: inconsistent
      has_edge[k] = 1;
      if (!facet_point(k, near) && !facet_point(k, polygon)) return std::nullopt;
    }

  // Non-facets: the true vertex where the line's slack is least (a redundant
  // line's minimum over a pointed cell is at a vertex: its two edges support
  // it); without vertices (a strip or half-plane) an edge with a parallel normal.
  for (std::size_t k = 0; k < g; ++k) {
    if (has_edge[k]) continue;
    PlaneGroup& group = cell.groups[k];
    const std::size_t j = representative[k];
    if (has_true_vertex) {
      std::size_t best = p;
      double least_slack = std::numeric_limits<double>::infinity();
      for (std::size_t v = 0; v < p; ++v) {
        if (!is_true_vertex(v)) continue;
        const double value = lines[k].slack(polygon.vertices[v]);
        if (value < least_slack) {
          least_slack = value;
          best = v;
        }
      }
      const std::size_t s1 = representative[polygon.edges[(best + p - 1) % p]];
      const std::size_t s2 = representative[polygon.edges[best]];
      if (!is_redundant_by_two(rows, j, std::min(s1, s2), std::max(s1, s2))) return std::nullopt;
      group.support = {std::min(s1, s2), std::max(s1, s2)};
      continue;
    }
    bool proved = false;
    for (std::size_t e = 0; e < p && !proved; ++e) {
      if (!is_cell_edge(e)) continue;
      const std::size_t s = representative[polygon.edges[e]];
      if (is_redundant_by_one(rows, j, s)) {
        group.support = {s, s};
        proved = true;
      }
    }
    if (!proved) return std::nullopt;
  }
  return cell;
}

std::optional<bool> is_plane_cell_bounded(std::span<const PlaneRow> exact_rows) {
  const std::size_t m = exact_rows.size();
  if (m == 0) throw usage_error("is_plane_cell_bounded: no rows");
  Rows rows{exact_rows, std::vector<double>(3 * m)};
  std::vector<std::pair<double, std::size_t>> angles;
  angles.reserve(m);
  for (std::size_t i = 0; i < m; ++i) {
    double* image = rows.images.data() + 3 * i;
    image[0] = filter_image(exact_rows[i].a0);
    image[1] = filter_image(exact_rows[i].a1);
    image[2] = filter_image(exact_rows[i].c);
    const double angle = std::atan2(image[1], image[0]);
    if (!std::isfinite(angle)) return std::nullopt;
    angles.emplace_back(angle, i);
  }
  const auto proposal = detail::propose_plane_boundedness(std::move(angles));
  if (!proposal) return std::nullopt;
  if (proposal->after_gap) {
    // Every normal lies within pi counter-clockwise of b (the normal after the
    // gap), so d = b turned by a right angle has a_i . d >= 0: a recession direction.
    const PlaneRow& b = exact_rows[*proposal->after_gap];
    const Integer d0 = -b.a1;
    const Integer d1 = b.a0;
    const double d[2] = {filter_image(d0), filter_image(d1)};
    for (std::size_t i = 0; i < m; ++i) {
      std::optional<int> sign = filtered_affine_sign(rows.image(i), d, 2, 0.0);
      if (!sign) sign = sgn(Integer(exact_rows[i].a0 * d0 + exact_rows[i].a1 * d1));
      if (*sign < 0) return std::nullopt;
    }
    return false;
  }
  // Three normals around the circle, each within pi of the next, have
  // Stiemke multipliers y = (det(a2,a3), det(a3,a1), det(a1,a2)) > 0.
  const auto [r0, r1, r2] = proposal->around;
  if (normal_determinant_sign(rows, r1, r2) <= 0 || normal_determinant_sign(rows, r2, r0) <= 0 ||
      normal_determinant_sign(rows, r0, r1) <= 0)
    return std::nullopt;
  return true;
}

}  // namespace pleat::lp
