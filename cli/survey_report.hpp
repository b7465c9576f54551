// What a survey's summary looks like: JSON (pleat-survey-summary/1), the
// terminal block and grid table, and the histogram as SVG or CSV. Writers
// only: every number comes from summarize_survey.
#pragma once

#include "cli/common.hpp"
#include "enumerate/survey.hpp"

#include <ostream>
#include <string>
#include <vector>

namespace pleat::cli {

// A survey as read or run: its header line and the samples it holds.
struct SurveyRecord {
  Json header;
  std::vector<SurveySample> samples;
  std::string source;  // the file it came from ("" when not saved)
};

// Samples the header's shard asks for that the record does not hold.
std::uint64_t missing_samples(const SurveyRecord& record);

Json summary_to_json(const SurveyRecord& record, const SurveySummary& summary);

// The full block for one survey.
void print_summary(const SurveyRecord& record, const SurveySummary& summary, std::ostream& out);

// One row per survey (decimals; the exact values are in the JSON).
void print_grid(const std::vector<SurveyRecord>& records, const std::vector<SurveySummary>& summaries,
                std::ostream& out);

// The histogram of certified values over every value from the smallest to the
// largest seen (the scaling bound included), empty bins drawn as zero.
// Bars in one dark colour with their counts on top, the scaling bound a
// dashed line with a label, so the figure reads the same in greyscale.
std::string histogram_svg(const SurveyRecord& record, const SurveySummary& summary);

// "functional_dimension,count,is_scaling_bound" then one row per value (same
// range as the SVG).
std::string histogram_csv(const SurveySummary& summary);

}  // namespace pleat::cli
