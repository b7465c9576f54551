// The data `pleat report` embeds in its page (format pleat-report/1,
// docs/formats.md): JSON built from exact results. Exact values are strings
// ("-3/8"); each has a decimal beside it for reading and drawing only.
// Nothing here walks or certifies: the caller hands over what the walker
// and certify decided.
#pragma once

#include "cli/common.hpp"
#include "cli/figures/figure_scene.hpp"
#include "cli/survey_report.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace pleat::cli {

// Above this many regions the page embeds each region's polygon (or
// interval) and colour only: no per-region hover panel, no pattern search;
// the counts in the summary stay exact.
inline constexpr std::size_t report_detail_limit = 20000;

// What the page's summary says about the network and the walk.
Json report_network_json(const Network& network, const std::string& source);
Json report_walk_json(const Network& network, const Domain& domain, const WalkSummary& summary);

// certify's result: the certified value and its evidence, or the proved
// bounds when cut short (functional_dimension null, certified false), and the
// extra flat directions grouped by mechanism.
Json report_certify_json(const Network& network, const FunctionalDimensionResult& result);

// Two inputs: every region clipped to the view as an exact polygon (regions
// whose section has no area are left out), the bent-hyperplane pieces with
// their neurons and layer, a proper colouring, and per region (up to
// detail_limit regions) its pattern, exact interior point, exact area in the
// view, affine map and the rows it adds to the rank of rows_network's
// parameter Jacobian (the network itself, or for a slice the network it was
// cut from: a slice region's pattern is that of the region it cuts). Exact
// except the drawing coordinates.
Json plane_map_json(const Network& network, const std::vector<Region>& regions, const View& view,
                    bool with_domain_sides, const Network& rows_network,
                    std::size_t detail_limit = report_detail_limit);

// One input: each piece of the graph in the view, its exact ends, slope and
// intercept (first output) and its values at the ends.
Json line_graph_json(const Network& network, const std::vector<Region>& regions, const View& view,
                     std::size_t detail_limit = report_detail_limit);

// A survey: its summary (pleat-survey-summary/1) and, per value of the
// histogram, the certified samples that have it.
Json survey_report_json(const SurveyRecord& record, const SurveySummary& summary);

}  // namespace pleat::cli
