// Shared by pleat draw and pleat report: views, cells, colouring, rank rows
// (cli/figures/figure_scene.hpp).
#include "cli/figures/figure_scene.hpp"

#include "core/errors.hpp"
#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "core/stop.hpp"
#include "enumerate/region_geometry.hpp"

#include <algorithm>
#include <cmath>
#include <utility>

namespace pleat::cli {
namespace {

// The distinct vertices of the arrangement: those of the pointed regions
// (every breakpoint for one input).
std::vector<RationalVector> arrangement_vertices(const std::vector<Region>& regions) {
  std::set<RationalVector> vertices;
  for (const auto& region : regions) {
    poll_stop();
    const lp::VertexRepresentation rep = lp::vertex_representation(closed_cell(region, true), region.interior.point);
    if (rep.lines.empty())  // pointed: its points are vertices of the arrangement
      vertices.insert(rep.points.begin(), rep.points.end());
  }
  return {vertices.begin(), vertices.end()};
}

// [lo, hi] per axis with a margin, rounded outwards to a tick step. The
// step (1, 2 or 5 times a power of ten) is built exactly from its exponent,
// and the tick counts are doubles' integers read exactly: a view of vertices
// near 1e50 came out near 3e49 when the step was read back from its decimal
// text and the counts cast to long.
View rounded_view(const std::vector<double>& low, const std::vector<double>& high) {
  View view;
  for (std::size_t i = 0; i < low.size(); ++i) {
    const double margin = std::max(0.2 * (high[i] - low[i]), 0.5);
    const double lo = low[i] - margin, hi = high[i] + margin;
    const std::vector<double> ticks = nice_ticks(lo, hi);
    const double step = ticks.size() >= 2 ? ticks[1] - ticks[0] : 1.0;
    const int exponent = static_cast<int>(std::floor(std::log10(step) + 1e-9));
    const auto mantissa = static_cast<long>(std::lround(step / std::pow(10.0, exponent)));
    mpz_class power;
    mpz_ui_pow_ui(power.get_mpz_t(), 10, static_cast<unsigned long>(std::abs(exponent)));
    const Rational exact_step = exponent >= 0 ? Rational(mantissa * Rational(power)) : Rational(Rational(mantissa) / power);
    view.lower.push_back(exact_step * rational_from_double(std::floor(lo / step)));
    view.upper.push_back(exact_step * rational_from_double(std::ceil(hi / step)));
  }
  return view;
}


// The shortest interval [values[k], values[k + count - 1]] of sorted values.
std::pair<double, double> shortest_interval(const std::vector<double>& values, std::size_t count) {
  std::size_t best = 0;
  for (std::size_t k = 1; k + count <= values.size(); ++k)
    if (values[k + count - 1] - values[k] < values[best + count - 1] - values[best]) best = k;
  return {values[best], values[best + count - 1]};
}

}  // namespace

void refuse_undrawable_view(const View& view, const std::string& given_by) {
  for (std::size_t i = 0; i < view.lower.size(); ++i) {
    const double lo = to_double(view.lower[i]), hi = to_double(view.upper[i]);
    const std::string axis = given_by + ": x" + std::to_string(i + 1) + " from " + format_rational_brief(view.lower[i]) +
                             " to " + format_rational_brief(view.upper[i]);
    if (!std::isfinite(lo) || !std::isfinite(hi) || !std::isfinite(hi - lo))
      throw input_error(axis + " reaches beyond the float64 range a drawing is laid out in; give a smaller rectangle");
    const double largest = std::max(std::abs(lo), std::abs(hi));
    const double step = std::nextafter(largest, HUGE_VAL) - largest;  // float64's spacing there
    if (!(hi - lo >= std::ldexp(step, 20)))
      throw input_error(axis + " is too narrow for the float64 coordinates a drawing is laid out in (fewer than 2^20 "
                        "of their steps across it); give a wider rectangle");
  }
}

std::string describe_view(const View& view) {
  std::string text;
  for (std::size_t i = 0; i < view.lower.size(); ++i) {
    if (i > 0) text += 'x';
    text += '[';
    text += format_rational(view.lower[i]);
    text += ',';
    text += format_rational(view.upper[i]);
    text += ']';
  }
  return text;
}

lp::Polyhedron closed_cell(const Region& region, bool with_domain_sides) {
  lp::Polyhedron cell{region.interior.point.size(), {}};
  for (const auto& facet : region.facets)
    if (with_domain_sides || !facet.domain_side) cell.constraints.push_back(lp::Constraint{facet.normal, facet.offset});
  return cell;
}

// The vertex coordinate of axis i that is largest (or, `lowest`, smallest).
static Rational vertices_extreme(const std::vector<RationalVector>& vertices, std::size_t i, bool lowest) {
  Rational best = vertices.front()[i];
  for (const auto& p : vertices)
    if (lowest ? p[i] < best : p[i] > best) best = p[i];
  return best;
}

// The default view. A trained network's hyperplanes meet mostly near the data
// but a few nearly parallel ones meet hundreds of units away; a view around
// every vertex then crushes the structure into a dot. Per axis the bulk is the
// shortest interval holding half of the vertices' coordinates, widened by its
// own length on each side (at least a third of the shortest interval holding
// three quarters, so that coincident vertices do not shrink it to a point); where
// every vertex fits within 1.5 times that, the axis holds them all, else the
// bulk (and the caller says what lies outside).
FittedView fitted_view(const std::vector<Region>& regions, std::size_t dim) {
  std::vector<RationalVector> vertices = arrangement_vertices(regions);
  if (vertices.empty())  // no vertex at all (parallel hyperplanes): points on the facets
    for (const auto& region : regions)
      for (const auto& facet : region.facets)
        if (!facet.relative_interior.point.empty()) vertices.push_back(facet.relative_interior.point);
  FittedView fitted;
  fitted.vertices = vertices.size();
  std::vector<double> low(dim, 0), high(dim, 0), bulk_low(dim, 0), bulk_high(dim, 0);
  for (std::size_t i = 0; i < dim && !vertices.empty(); ++i) {
    std::vector<double> values;
    for (const auto& p : vertices) values.push_back(to_double(p[i]));
    std::sort(values.begin(), values.end());
    if (!std::isfinite(values.front()) || !std::isfinite(values.back()))
      throw input_error("the arrangement's vertices reach x" + std::to_string(i + 1) + " = " +
                        format_rational_brief(std::isfinite(values.front()) ? vertices_extreme(vertices, i, false)
                                                                            : vertices_extreme(vertices, i, true)) +
                        ", beyond the float64 range a drawing uses; give the rectangle to show (draw --view, "
                        "report --box or --domain)");
    low[i] = values.front();
    high[i] = values.back();
    const auto [first, last] = shortest_interval(values, (values.size() + 1) / 2);
    const auto [first_3, last_3] = shortest_interval(values, (3 * values.size() + 3) / 4);
    const double length = std::max(last - first, (last_3 - first_3) / 3);
    bulk_low[i] = std::max(low[i], first - length);
    bulk_high[i] = std::min(high[i], last + length);
    if (high[i] - low[i] > 1.5 * (bulk_high[i] - bulk_low[i])) fitted.is_bulk = true;
    else bulk_low[i] = low[i], bulk_high[i] = high[i];
  }
  fitted.every_vertex = rounded_view(low, high);
  fitted.view = fitted.is_bulk ? rounded_view(bulk_low, bulk_high) : fitted.every_vertex;
  for (const auto& p : vertices)
    for (std::size_t i = 0; i < dim; ++i)
      if (p[i] < fitted.view.lower[i] || p[i] > fitted.view.upper[i]) {
        ++fitted.vertices_outside;
        break;
      }
  if (fitted.vertices_outside == 0) {  // the rounded bulk holds them all after all
    fitted.view = fitted.every_vertex;
    fitted.is_bulk = false;
  }
  return fitted;
}

// Smallest-last greedy colouring: remove a vertex of least remaining degree
// until none is left, colour in the reverse order. A planar graph always has a
// vertex of degree <= 5, so each vertex meets at most 5 coloured neighbours and
// one of `colours` (>= 6) is free; of the free ones the least used is taken,
// so the figure uses the whole palette evenly (a region map is often
// 2-colourable, which would make a dull figure).
std::vector<std::size_t> smallest_last_colouring(const std::vector<std::set<std::size_t>>& adjacent,
                                                 std::size_t colours) {
  const std::size_t n = adjacent.size();
  std::vector<std::size_t> degree(n);
  for (std::size_t i = 0; i < n; ++i) degree[i] = adjacent[i].size();
  std::vector<char> removed(n, 0);
  std::vector<std::size_t> order;
  std::set<std::pair<std::size_t, std::size_t>> queue;
  for (std::size_t i = 0; i < n; ++i) queue.emplace(degree[i], i);
  while (!queue.empty()) {
    const std::size_t v = queue.begin()->second;
    queue.erase(queue.begin());
    removed[v] = 1;
    order.push_back(v);
    for (std::size_t w : adjacent[v])
      if (!removed[w]) {
        queue.erase({degree[w], w});
        queue.emplace(--degree[w], w);
      }
  }
  std::vector<std::size_t> colour(n, 0);
  std::vector<char> coloured(n, 0);
  std::vector<std::size_t> uses(colours, 0);
  for (auto it = order.rbegin(); it != order.rend(); ++it) {
    std::set<std::size_t> used;
    for (std::size_t w : adjacent[*it])
      if (coloured[w]) used.insert(colour[w]);
    std::size_t best = colours;
    for (std::size_t c = 0; c < colours; ++c)
      if (!used.count(c) && (best == colours || uses[c] < uses[best])) best = c;
    if (best == colours) {  // not planar after all: open a new colour
      best = uses.size();
      while (used.count(best)) ++best;
      uses.resize(best + 1, 0);
    }
    ++uses[best];
    colour[*it] = best;
    coloured[*it] = 1;
  }
  return colour;
}

FigurePoint point_of(const RationalVector& p) { return FigurePoint{to_double(p[0]), p.size() > 1 ? to_double(p[1]) : 0}; }
// Per region (in the order given), how many of its coefficient-block rows
// raise the rank of all rows of the regions before it in walk order (by id):
// on a trained network every region has the same rank of its own, but few
// add anything new. Counted modulo a prime: rows kept are independent over Q
// too (a nonsingular minor mod p), so the counts add up to a lower bound of
// the rank; a non-smooth region has no rows.
std::vector<std::size_t> new_rows_in_walk_order(const Network& network, const std::vector<const Region*>& regions) {
  std::vector<std::size_t> order(regions.size()), rows(regions.size(), 0);
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return regions[a]->id < regions[b]->id; });
  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  ModularRowBasis basis(modular.prime, network.parametric_dimension());
  for (std::size_t i : order) {
    poll_stop();
    if (!regions[i]->nonsmooth_neurons.empty() || basis.rank() == basis.columns()) continue;
    const ModularMatrix block = coefficient_blocks_mod(modular, regions[i]->pattern);
    for (std::size_t r = 0; r < block.rows(); ++r) rows[i] += basis.add_row(block.row(r)) ? 1 : 0;
  }
  return rows;
}

// The bounding box of a bounded polytope domain; nullopt when unbounded.
std::optional<View> bounding_view(const Domain& domain) {
  const lp::VertexRepresentation rep =
      lp::vertex_representation(lp::Polyhedron{domain.dim, domain.constraints}, domain_centre(domain));
  if (!rep.is_bounded() || rep.points.empty()) return std::nullopt;
  View view{rep.points.front(), rep.points.front()};
  for (const auto& p : rep.points)
    for (std::size_t i = 0; i < domain.dim; ++i) {
      view.lower[i] = std::min(view.lower[i], p[i]);
      view.upper[i] = std::max(view.upper[i], p[i]);
    }
  return view;
}

std::vector<LinePiece> line_pieces(const std::vector<Region>& regions, const View& view) {
  std::vector<LinePiece> pieces;
  for (const auto& region : regions) {
    poll_stop();
    LinePiece piece{&region, view.lower[0], view.upper[0]};
    for (const auto& facet : region.facets) {
      const Rational end = -facet.offset / facet.normal[0];
      if (facet.normal[0] > 0) piece.low = std::max(piece.low, end);
      else piece.high = std::min(piece.high, end);
    }
    if (piece.low < piece.high) pieces.push_back(piece);
  }
  std::sort(pieces.begin(), pieces.end(), [](const LinePiece& a, const LinePiece& b) { return a.low < b.low; });
  return pieces;
}

}  // namespace pleat::cli
