// Exact region geometry of networks: regions meeting at a point, rank
// contributions, and walked regions clipped to a box. Expected values are
// worked out by hand in the comments (elementary geometry), or are exact
// invariants (areas of a tiling sum to the tiled rectangle).
#include "enumerate/region_geometry.hpp"

#include "core/network_io.hpp"
#include "enumerate/walker.hpp"
#include "tests/support/network_builders.hpp"

#include <gtest/gtest.h>

#include <map>
#include <set>

namespace pleat {
namespace {

using test::make_layer;

constexpr auto v = test::integers;

// Neurons x1 and x2 (the coordinate axes), output x1 + 2 x2 after the ReLUs.
Network axes_network() {
  Network network;
  network.input_dim = 2;
  network.layers.push_back(make_layer({v({1, 0}), v({0, 1})}, v({0, 0}), Activation::relu));
  network.layers.push_back(make_layer({v({1, 2})}, v({0}), Activation::linear));
  return network;
}

TEST(RegionsAtPoint, AxesMeetInFourRegionsAndLinesInTwo) {
  const Network network = axes_network();
  const Domain plane = make_whole_space(2);
  const PointIncidence origin = regions_at_point(network, plane, v({0, 0}));
  EXPECT_EQ(origin.vanishing_neurons, (std::vector<std::size_t>{0, 1}));
  EXPECT_EQ(origin.regions.size(), 4u);
  const PointIncidence on_axis = regions_at_point(network, plane, v({0, 3}));
  EXPECT_EQ(on_axis.vanishing_neurons, (std::vector<std::size_t>{0}));
  ASSERT_EQ(on_axis.regions.size(), 2u);
  for (const auto& pattern : on_axis.regions) EXPECT_EQ(pattern.states[1], NeuronState::on);
  const PointIncidence inside = regions_at_point(network, plane, v({1, 1}));
  EXPECT_EQ(inside.regions.size(), 1u);
  // On a box corner only the quadrant inside the box remains.
  const Domain box = make_box(v({0, 0}), v({1, 1}));
  EXPECT_EQ(regions_at_point(network, box, v({0, 0})).regions.size(), 1u);
  EXPECT_THROW((void)regions_at_point(network, box, v({2, 0})), input_error);
}

// 17 neurons through the origin (x1 - k x2 for k = 0..16): more than the 16
// vanishing neurons regions_at_point enumerates (2^16 candidate patterns) is a
// documented limit (limit_error, exit 1), not bad input. (16 are accepted but
// take seconds to enumerate, so the accepted case here has fewer.)
Network lines_through_origin(long count) {
  std::vector<RationalVector> rows;
  for (long k = 0; k < count; ++k) rows.push_back(v({1, -k}));
  Network network;
  network.input_dim = 2;
  network.layers.push_back(make_layer(rows, RationalVector(static_cast<std::size_t>(count)), Activation::relu));
  network.layers.push_back(make_layer({RationalVector(static_cast<std::size_t>(count), Rational(1))}, v({0}),
                                      Activation::linear));
  return network;
}

TEST(RegionsAtPoint, MoreThanSixteenVanishingNeuronsIsADocumentedLimit) {
  const Domain plane = make_whole_space(2);
  EXPECT_THROW((void)regions_at_point(lines_through_origin(17), plane, v({0, 0})), limit_error);
  // 5 distinct lines through a point cut the plane into 10 sectors, each one region.
  EXPECT_EQ(regions_at_point(lines_through_origin(5), plane, v({0, 0})).regions.size(), 10u);
}

TEST(RankContribution, AllOnGivesEveryCoefficientAllOffOnlyTheBias) {
  const Network network = axes_network();
  // All on: F = x1 + 2 x2 with c, A[0,0], A[0,1] independent in theta: 3 rows.
  EXPECT_EQ(rank_contribution(network, *region_pattern_at(network, v({1, 1}))), 3u);
  // All off: F = b2, only dc/db2 is nonzero: 1 row.
  EXPECT_EQ(rank_contribution(network, *region_pattern_at(network, v({-1, -1}))), 1u);
}

// The invariant the drawing rests on: clipped polygons of a walk on a box
// tile it, so their exact areas add up to the box's area.
TEST(ClipRectangle, WalkedRegionsOfTheExampleTileTheBoxExactly) {
  const Network network = read_network_file(std::string(PLEAT_SOURCE_DIR) + "/data/fold2d.json");
  const RationalVector lower{Rational(-2), Rational(-3, 2)}, upper{Rational(5, 2), Rational(2)};
  WalkOptions options;
  options.threads = 1;
  Rational total = 0;
  std::size_t regions = 0;
  options.on_region = [&](const Region& region) {
    std::vector<lp::Constraint> half_planes;
    for (const auto& facet : region.facets)
      if (!facet.domain_side) half_planes.push_back(lp::Constraint{facet.normal, facet.offset});
    const lp::Polygon polygon = lp::clip_rectangle(lower, upper, half_planes);
    const Rational area = lp::polygon_area(polygon);
    EXPECT_GT(area, 0) << format_pattern(network, region.pattern);
    total += area;
    ++regions;
    return true;
  };
  walk_regions(network, make_box(lower, upper), options);
  EXPECT_GT(regions, 10u);
  EXPECT_EQ(total, (upper[0] - lower[0]) * (upper[1] - lower[1]));
}

}  // namespace
}  // namespace pleat
