// The page `pleat report` writes: one self-contained HTML file (inline CSS,
// script and SVG; no network access) holding the report's data as JSON in a
// <script type="application/json" id="pleat-data"> element, and the page's
// own script, which draws the region map, graph or histogram from it. The
// summary is static HTML (readable without the script and in print).
#pragma once

#include "cli/common.hpp"

#include <string>
#include <vector>

namespace pleat::cli {

// One summary row: a label and its text (plain; escaped when written).
struct SummaryRow {
  std::string label;
  std::string text;
};

// data: the pleat-report/1 document (its "kind" picks the view).
std::string report_html(const std::string& title, const std::vector<SummaryRow>& summary, const Json& data);

}  // namespace pleat::cli
