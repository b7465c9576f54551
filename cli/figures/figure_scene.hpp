// What `pleat draw` and `pleat report` share before anything is written: the
// view rectangle (and the default one fitted to a walk's vertices), a region's
// closed cell, a proper colouring of the region map, and the rows each region
// adds to the rank in walk order. Exact where it decides (cells, vertices,
// ranks); the fitted view's bounds are chosen in double and rounded out to
// exact tick multiples.
#pragma once

#include "cli/figures/figure.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"
#include "lp/polyhedron.hpp"

#include <cstddef>
#include <optional>
#include <set>
#include <string>
#include <vector>

namespace pleat::cli {

// A rectangle (box) of the input space, per axis [lower_i, upper_i]; exact.
struct View {
  RationalVector lower, upper;
};

// The region's closed cell: its facets' half-spaces, the domain's sides
// only when with_domain_sides. Exact.
// The view as text: [x0,x1]x[y0,y1] (exact numbers).
std::string describe_view(const View& view);

lp::Polyhedron closed_cell(const Region& region, bool with_domain_sides);

// The bounding box of a bounded polytope domain (exact vertices); nullopt
// when it is unbounded.
std::optional<View> bounding_view(const Domain& domain);

// Throws input_error, naming `given_by` (e.g. "--view") and the axis, when a
// drawing cannot place the view: figures are laid out in float64, so an axis
// beyond its range, or narrower than 2^20 of its steps, gave NaN coordinates.
void refuse_undrawable_view(const View& view, const std::string& given_by);

// The default view of a walk (see fitted_view in figure_scene.cpp): the bulk
// of the arrangement's vertices, or every vertex when they are not spread out.
struct FittedView {
  View view;
  View every_vertex;     // around every vertex (the view when they are not spread out)
  bool is_bulk = false;  // view is narrower than every_vertex
  std::size_t vertices = 0, vertices_outside = 0;
};
FittedView fitted_view(const std::vector<Region>& regions, std::size_t dim);

// A proper colouring of a planar adjacency graph with `colours` (>= 6)
// colours, used evenly (smallest-last greedy); a colour index per vertex.
std::vector<std::size_t> smallest_last_colouring(const std::vector<std::set<std::size_t>>& adjacent,
                                                 std::size_t colours = 6);

// The first two coordinates as doubles, for drawing only.
FigurePoint point_of(const RationalVector& p);

// Per region (in the order given), how many of its coefficient-block rows
// raise the rank of the rows of the regions before it in walk order (by id).
// Counted modulo a prime, so the counts add up to a lower bound of the rank
// (exact as a bound; certify gives the value); a non-smooth region adds none.
std::vector<std::size_t> new_rows_in_walk_order(const Network& network, const std::vector<const Region*>& regions);

// One input: each region's interval [low, high] clipped to the view, empty
// ones left out, in increasing order along the axis. Exact. Polls the stop
// request.
struct LinePiece {
  const Region* region;
  Rational low, high;
};
std::vector<LinePiece> line_pieces(const std::vector<Region>& regions, const View& view);

}  // namespace pleat::cli
