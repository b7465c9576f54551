#include "cli/survey_report.hpp"

#include "cli/figures/figure.hpp"
#include "cli/formats/survey_file.hpp"

#include <algorithm>
#include <cmath>
#include <iomanip>
#include <sstream>

namespace pleat::cli {
namespace {

std::string decimal(const Rational& value, int digits = 6) {
  std::ostringstream out;
  out << std::setprecision(digits) << to_double(value);
  return out.str();
}

Json optional_rational(const std::optional<Rational>& value) {
  return value ? Json(format_rational(*value)) : Json(nullptr);
}

// The values the histogram spans: smallest to largest certified value, with
// the scaling bound included so its marker always has a place.
std::pair<std::size_t, std::size_t> histogram_range(const SurveySummary& summary) {
  std::size_t low = SIZE_MAX, high = 0;
  if (!summary.histogram.empty()) {
    low = summary.histogram.begin()->first;
    high = summary.histogram.rbegin()->first;
  }
  if (summary.scaling_bound) {
    low = std::min(low, *summary.scaling_bound);
    high = std::max(high, *summary.scaling_bound);
  }
  return {low, high};
}

std::string describe_configuration(const Json& header) {
  // "box:(-1,1)x(-1,1)" as the other commands print it.
  const std::string domain = header["domain"].is_string() ? header["domain"].get<std::string>()
                                                          : configuration_from_header(header, "survey").domain.describe();
  std::string text = "init " + header["init"].get<std::string>() + ", " + std::to_string(header["digits"].get<int>()) +
                     " digits, seed " + std::to_string(header["seed"].get<std::uint64_t>()) + ", domain " + domain;
  if (header["shard"] != "0/1") text += ", " + describe_tasks(parse_shard(header["shard"].get<std::string>(), "shard"));
  return text;
}

// A round step (1, 2 or 5 times a power of ten) giving about five ticks.
std::size_t tick_step(std::size_t maximum) {
  std::size_t step = 1;
  while (true) {
    for (std::size_t factor : {1, 2, 5})
      if (maximum / (step * factor) <= 5) return step * factor;
    step *= 10;
  }
}

}  // namespace

std::uint64_t missing_samples(const SurveyRecord& record) {
  const ShardSet shard = shard_from_header(record.header, record.source);
  const std::uint64_t total = record.header["samples"].get<std::uint64_t>();
  std::uint64_t planned = 0;
  for (std::uint64_t index : shard.indices)
    if (index < total) planned += (total - index + shard.count - 1) / shard.count;
  return planned - record.samples.size();
}

Json summary_to_json(const SurveyRecord& record, const SurveySummary& summary) {
  Json out;
  out["format"] = "pleat-survey-summary/1";
  for (const char* key : {"arch", "init", "digits", "seed", "domain", "shard"}) out[key] = record.header[key];
  out["samples_planned"] = record.header["samples"];
  out["samples"] = summary.samples;
  out["missing"] = missing_samples(record);
  out["certified"] = summary.certified;
  out["uncertified"] = summary.uncertified;
  Json histogram = Json::object();
  for (const auto& [value, count] : summary.histogram) histogram[std::to_string(value)] = count;
  out["histogram"] = histogram;
  out["mean"] = optional_rational(summary.mean);
  out["variance"] = optional_rational(summary.variance);
  out["modes"] = summary.modes;
  out["scaling_bound"] = summary.scaling_bound ? Json(*summary.scaling_bound) : Json(nullptr);
  out["at_scaling_bound"] = optional_rational(summary.at_scaling_bound_fraction);
  out["at_scaling_bound_count"] = summary.at_scaling_bound;
  Json cut = Json::array();
  for (const SurveySample& s : summary.uncertified_samples)
    cut.push_back({{"sample", s.sample},
                   {"lower_bound", s.lower_bound},
                   {"upper_bound", s.upper_bound},
                   {"stop_reason", stop_reason_json(s.stop_reason)}});
  out["uncertified_samples"] = cut;
  double seconds = 0;
  for (const SurveySample& s : record.samples) seconds += s.seconds;
  out["sample_seconds"] = seconds;
  return out;
}

void print_summary(const SurveyRecord& record, const SurveySummary& summary, std::ostream& out) {
  const auto& header = record.header;
  out << "survey                " << architecture_text(header["arch"].get<std::vector<std::size_t>>()) << "  ("
      << describe_configuration(header) << ")\n";
  out << "samples               " << summary.samples << " of " << summary.samples + missing_samples(record) << ": "
      << summary.certified << " certified, " << summary.uncertified << " cut short by the time limit\n";
  if (summary.scaling_bound) out << "scaling bound         " << *summary.scaling_bound << "\n";
  if (summary.histogram.empty()) {
    out << "no certified samples yet\n";
  } else {
    out << "functional dimension  count\n";
    std::size_t most = 0;
    for (const auto& [value, count] : summary.histogram) most = std::max(most, count);
    for (const auto& [value, count] : summary.histogram) {
      const std::size_t bar = (count * 40 + most - 1) / most;
      out << "  " << std::setw(6) << value << "  " << std::setw(8) << count << "  " << std::string(bar, '#')
          << (summary.scaling_bound && value == *summary.scaling_bound ? "  <- scaling bound" : "") << "\n";
    }
    out << "mean                  " << format_rational(*summary.mean) << "  (" << decimal(*summary.mean) << ")\n";
    if (summary.variance)
      out << "variance (n-1)        " << format_rational(*summary.variance) << "  (" << decimal(*summary.variance)
          << ")\n";
    out << "modes                ";
    for (std::size_t mode : summary.modes) out << " " << mode;
    out << "\n";
    out << "at the scaling bound  " << summary.at_scaling_bound << " of " << summary.certified
        << " certified samples (" << decimal(*summary.at_scaling_bound_fraction * 100, 4) << "%)\n";
  }
  // Bounds that meet in a run cut short (stopped while naming, or as the
  // walk's last region came) are said once, with why it is not certified.
  for (const SurveySample& s : summary.uncertified_samples) {
    const std::string reason = s.stop_reason == StopReason::none ? "stopped" : to_string(s.stop_reason);
    out << "cut short             sample " << s.sample << ": ";
    if (s.lower_bound == s.upper_bound)
      out << s.lower_bound << " (its proved bounds meet; not certified: the run was cut short, " << reason << ")\n";
    else
      out << "between " << s.lower_bound << " and " << s.upper_bound << " (" << reason << ")\n";
  }
}

void print_grid(const std::vector<SurveyRecord>& records, const std::vector<SurveySummary>& summaries,
                std::ostream& out) {
  out << std::left << std::setw(20) << "arch" << std::right << std::setw(9) << "samples" << std::setw(11)
      << "certified" << std::setw(11) << "cut short" << std::setw(12) << "mean" << std::setw(12) << "variance"
      << std::setw(10) << "modes" << std::setw(9) << "bound" << std::setw(10) << "at bound"
      << "\n";
  for (std::size_t k = 0; k < records.size(); ++k) {
    const SurveySummary& s = summaries[k];
    std::string modes;
    for (std::size_t mode : s.modes) {
      if (!modes.empty()) modes += ',';
      modes += std::to_string(mode);
    }
    out << std::left << std::setw(20) << architecture_text(records[k].header["arch"].get<std::vector<std::size_t>>())
        << std::right << std::setw(9) << s.samples << std::setw(11) << s.certified << std::setw(11) << s.uncertified
        << std::setw(12) << (s.mean ? decimal(*s.mean) : "-") << std::setw(12)
        << (s.variance ? decimal(*s.variance) : "-") << std::setw(10) << (modes.empty() ? "-" : modes)
        << std::setw(9) << (s.scaling_bound ? std::to_string(*s.scaling_bound) : "-") << std::setw(10)
        << (s.at_scaling_bound_fraction ? decimal(*s.at_scaling_bound_fraction, 4) : "-") << "\n";
  }
  out << "(decimals rounded; --json gives the exact rationals)\n";
}

std::string histogram_svg(const SurveyRecord& record, const SurveySummary& summary) {
  const std::uint64_t missing = missing_samples(record);  // a survey still running, or a task of several
  // The house style (docs/figure-style.md): no gridlines and no count axis,
  // each bar carries its count; bars in the palette's deep slate, the scaling
  // bound as a thin ink rule with its value; a detached range-frame value
  // axis; what was surveyed in a quiet caption under the axis, not a subtitle.
  const std::string bar = bar_colour();
  constexpr const char* ink = "#1f1d2b";
  constexpr const char* quiet = "#5c5a66";
  constexpr double width = 720, height = 380;
  constexpr double left = 40, right = 40, top = 40, bottom = 86;
  const double plot_width = width - left - right, plot_height = height - top - bottom;

  const auto [low, high] = histogram_range(summary);
  const bool has_values = low <= high;
  const std::size_t bins = has_values ? high - low + 1 : 1;
  std::size_t most = 1;
  for (const auto& [value, count] : summary.histogram) most = std::max(most, count);
  const double bin_width = plot_width / static_cast<double>(bins);
  // low passed by value: clang 14 cannot capture a structured binding.
  auto x_of = [&, first = low](std::size_t value) {
    return left + (static_cast<double>(value - first) + 0.5) * bin_width;
  };
  // The tallest bar fills the plot height less room for its count.
  auto y_of = [&](double count) { return top + plot_height * (1 - 0.92 * count / static_cast<double>(most)); };

  std::ostringstream svg;
  svg << std::fixed << std::setprecision(1);
  svg << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << width << "\" height=\"" << height
      << "\" viewBox=\"0 0 " << width << " " << height
      << "\" font-family=\"Charter, 'Bitstream Charter', 'DejaVu Serif', Georgia, serif\" font-size=\"11\">\n";
  svg << "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n";
  const std::string arch = architecture_text(record.header["arch"].get<std::vector<std::size_t>>());
  svg << "<text x=\"" << left << "\" y=\"20\" font-style=\"italic\" fill=\"" << quiet << "\">samples per value</text>\n";

  // Bars, touching but for a hairline, each with its count above.
  const double base = top + plot_height;
  for (const auto& [value, count] : summary.histogram) {
    const double x = x_of(value) - 0.47 * bin_width, y = y_of(static_cast<double>(count));
    svg << "<rect x=\"" << x << "\" y=\"" << y << "\" width=\"" << 0.94 * bin_width << "\" height=\"" << base - y
        << "\" fill=\"" << bar << "\"><title>" << value << ": " << count << "</title></rect>\n";
    if (bins <= 40 || count == most)  // many bins: the tallest still gives the scale
      svg << "<text x=\"" << x_of(value) << "\" y=\"" << y - 4 << "\" font-size=\"10\" text-anchor=\"middle\" fill=\""
          << ink << "\">" << count << "</text>\n";
  }
  // The value axis: detached from the bars, first to last value, ticks up.
  const double axis_y = base + 7;
  if (has_values) {
    svg << "<line x1=\"" << x_of(low) << "\" y1=\"" << axis_y << "\" x2=\"" << x_of(high) << "\" y2=\"" << axis_y
        << "\" stroke=\"" << ink << "\" stroke-width=\"0.8\"/>\n";
    // Every value when few, else the multiples of a round step.
    const std::size_t value_step = bins <= 24 ? 1 : tick_step(bins / 2);
    for (std::size_t value = low; value <= high; ++value) {
      if (value % value_step != 0) continue;
      svg << "<line x1=\"" << x_of(value) << "\" y1=\"" << axis_y << "\" x2=\"" << x_of(value) << "\" y2=\""
          << axis_y - 4 << "\" stroke=\"" << ink << "\" stroke-width=\"0.8\"/>"
          << "<text x=\"" << x_of(value) << "\" y=\"" << axis_y + 14 << "\" text-anchor=\"middle\" fill=\"" << quiet
          << "\">" << value << "</text>\n";
    }
  }
  svg << "<text x=\"" << width - right << "\" y=\"" << axis_y + 34 << "\" font-size=\"12.5\" text-anchor=\"end\" fill=\""
      << ink << "\">certified functional dimension \u2192</text>\n";
  svg << "<text x=\"" << left << "\" y=\"" << height - 12 << "\" font-size=\"9.5\" fill=\"" << quiet << "\">"
      << escape_xml(arch) << ": " << summary.certified << " of " << summary.samples + missing << " samples certified; "
      << escape_xml(describe_configuration(record.header));
  if (summary.uncertified) svg << "; " << summary.uncertified << " cut short by the time limit, not shown";
  if (missing) svg << "; " << missing << " not run yet";
  svg << "</text>\n";
  if (summary.scaling_bound) {
    const double x = x_of(*summary.scaling_bound) + 0.5 * bin_width;
    svg << "<line x1=\"" << x << "\" y1=\"" << top - 6 << "\" x2=\"" << x << "\" y2=\"" << base << "\" stroke=\""
        << ink << "\" stroke-width=\"1\"/>\n";
    svg << "<text x=\"" << x - 5 << "\" y=\"" << top + 2 << "\" text-anchor=\"end\" font-style=\"italic\" fill=\""
        << ink << "\">scaling bound " << *summary.scaling_bound << "</text>\n";
  }
  svg << "</svg>\n";
  return svg.str();
}

std::string histogram_csv(const SurveySummary& summary) {
  std::ostringstream csv;
  csv << "functional_dimension,count,is_scaling_bound\n";
  const auto [low, high] = histogram_range(summary);
  for (std::size_t value = low; low <= high && value <= high; ++value) {
    const auto found = summary.histogram.find(value);
    csv << value << "," << (found == summary.histogram.end() ? 0 : found->second) << ","
        << (summary.scaling_bound && value == *summary.scaling_bound ? "true" : "false") << "\n";
  }
  return csv.str();
}

}  // namespace pleat::cli
