// pleat report: one self-contained HTML page to explore a network's regions
// (2 inputs: the region map; 1 input: the graph; 3 inputs: an exact 2-D
// slice) with certify's result in its summary, or a survey's histogram.
// Everything computed here is exact (the walk, certify, the clipped
// polygons); cli/report_data.cpp turns it into the page's JSON and
// cli/report_page.cpp writes the page.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/figures/figure_scene.hpp"
#include "cli/progress.hpp"
#include "cli/report_data.hpp"
#include "cli/report_page.hpp"
#include "cli/signals.hpp"
#include "cli/formats/survey_file.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "core/stop.hpp"
#include "enumerate/claim.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/slice.hpp"
#include "enumerate/walker.hpp"

#include <fstream>
#include <iostream>
#include <optional>
#include <sstream>

namespace pleat::cli {
namespace {

// More slices than this is a mistake (each is a walk and a map in the page).
constexpr std::size_t max_slices = 64;

struct ReportArguments {
  std::string input_path;
  std::string output_path;
  DomainOptions domain;
  std::string slice_text;
  WalkLimitOptions limits;  // the time limit stops certify only
  std::uint64_t detail_limit = report_detail_limit;
  bool quiet = false;
};

// A survey file starts with a pleat-survey/1 header line, or with one cut
// short by a killed survey (its only line, no newline, past '{"format":"pleat-'
// where a network's first line would differ), which the survey reader names.
bool is_survey_file(const std::string& path) {
  std::ifstream in(path);
  std::string line;
  if (!in || !std::getline(in, line)) return false;
  const Json header = Json::parse(line, nullptr, false);
  if (header.is_object() && header.value("format", "") == "pleat-survey/1") return true;
  return in.eof() && line.size() > std::string_view(R"({"format":"pleat-)").size() && starts_like_survey_header(line);
}

std::string architecture_arrows(const Network& network) {
  std::string text = std::to_string(network.input_dim);
  for (const auto& layer : network.layers) text += " \u2192 " + std::to_string(layer.width());
  return text;
}

struct Walked {
  WalkSummary summary;
  std::vector<Region> regions;  // kept only when asked
};

Walked walk(const Network& network, const Domain& domain, const ReportArguments& arguments, bool keep,
            const std::atomic<bool>& interrupt, const std::string& what) {
  Walked walked;
  ProgressLine progress(arguments.quiet);
  WalkOptions options;
  options.threads = static_cast<unsigned>(arguments.limits.threads);
  options.interrupt = &interrupt;
  options.on_region = [&](const Region& region) {
    if (keep) walked.regions.push_back(region);
    return true;
  };
  options.on_progress = [&](const WalkProgress& state) {
    progress.update([&] {
      return what + ": " + std::to_string(state.regions) + " regions, frontier " + std::to_string(state.frontier);
    });
  };
  walked.summary = walk_regions(network, domain, options);
  progress.finish();
  if (walked.summary.stop_reason == StopReason::interrupted) throw Stopped(StopReason::interrupted);
  if (!walked.summary.complete)
    throw std::runtime_error(what + " stopped early (" + to_string(walked.summary.stop_reason) + ")");
  return walked;
}

FunctionalDimensionResult certify(const Network& network, const Domain& domain, const ReportArguments& arguments,
                                  const std::atomic<bool>& interrupt) {
  ProgressLine progress(arguments.quiet);
  FunctionalDimensionOptions options;
  apply_walk_limits(arguments.limits, interrupt, options.walk);
  options.walk.on_progress = [&](const WalkProgress& state) {
    progress.update([&] { return "certify: " + std::to_string(state.regions) + " regions walked"; });
  };
  FunctionalDimensionResult result = certify_functional_dimension(network, domain, options);
  progress.finish();
  if (result.stop_reason == StopReason::interrupted) throw Stopped(StopReason::interrupted);
  return result;
}

// The view: the box, the bounding box of a bounded polytope, or the view
// fitted to the walk's vertices (the part of R^n where the regions meet).
struct ChosenView {
  View view;
  bool is_fitted_bulk = false;
};
ChosenView choose_view(const Domain& domain, const std::vector<Region>& regions) {
  if (domain.kind == Domain::Kind::box) {
    const View box{domain.lower, domain.upper};
    refuse_undrawable_view(box, "--box");
    return {box, false};
  }
  if (domain.kind == Domain::Kind::polytope)
    if (auto view = bounding_view(domain)) {
      refuse_undrawable_view(*view, "the --domain's bounding box");
      return {*view, false};
    }
  const FittedView fitted = fitted_view(regions, domain.dim);
  return {fitted.view, fitted.is_bulk};
}

std::string view_text(const View& view) {
  std::string text;
  for (std::size_t i = 0; i < view.lower.size(); ++i)
    text += (i ? " \u00d7 " : "") + std::string("[") + format_rational(view.lower[i]) + ", " +
            format_rational(view.upper[i]) + "]";
  return text;
}

std::string neuron_list(const std::vector<std::size_t>& neurons) {
  std::string text;
  for (std::size_t i = 0; i < neurons.size(); ++i) text += (i ? ", " : "") + std::to_string(neurons[i]);
  return text;
}

// The summary's certify rows, from exact results only.
void add_certify_rows(const Network& network, const FunctionalDimensionResult& result, std::vector<SummaryRow>& rows) {
  rows.push_back({"parametric dimension", std::to_string(result.parametric_dimension)});
  rows.push_back({"scaling bound", std::to_string(result.scaling_bound) + "  (D minus the rank of the " +
                                       std::to_string(network.hidden_neuron_count()) +
                                       " hidden neurons' scaling directions)"});
  if (result.certified) {
    rows.push_back({"functional dimension", std::to_string(*result.functional_dimension) + "  certified"});
    std::string evidence;
    if (result.certified_by_points)
      evidence = "lower bound: the rows of the regions of " + count_of(result.witness_points.size(), "exact point") +
                 " (of " + std::to_string(result.points_drawn) +
                 " drawn) have a nonsingular minor mod p; upper bound: the scaling directions";
    else if (result.early_stop || !result.walk_complete)
      evidence = "lower bound: the rows of " + count_of(result.regions_contributing, "region") +
                 " have a nonsingular minor mod p; upper bound: the scaling directions";
    else
      evidence = "lower bound: exact rank of the rows of " + count_of(result.regions_contributing, "region") +
                 "; upper bound: an exact kernel checked on every smooth region";
    rows.push_back({"evidence", evidence});
  } else {
    rows.push_back({"functional dimension", "between " + std::to_string(result.lower_bound) + " and " +
                                                std::to_string(result.upper_bound) + "  NOT certified (stopped: " +
                                                to_string(result.stop_reason) + ")"});
  }
  const std::vector<MechanismGroup> groups = mechanism_groups(result);
  if (!result.certified && groups.empty()) return;
  std::string extra = result.extra_kernel.empty() ? std::string("none beyond the scaling ones")
                                                  : std::to_string(result.extra_kernel.size()) + " beyond the scaling ones:";
  for (std::size_t i = 0; i < groups.size(); ++i)
    extra += (i ? ";" : "") + std::string(" ") + (groups[i].mechanism == Mechanism::none ? std::string("no recognised mechanism")
                                                                      : std::string(mechanism_word(groups[i].mechanism))) +
             (groups[i].neurons.empty() ? ""
                                        : std::string(groups[i].neurons.size() == 1 ? " (neuron " : " (neurons ") +
                                              neuron_list(groups[i].neurons) + ")") + ": " +
             count_of(groups[i].directions, "direction");
  if (const auto limit = region_limit(network, result))
    extra += "; too few regions: " + std::to_string(limit->smooth_regions) + " smooth regions of " +
             count_of(limit->rows_per_region, "row") + " each";
  rows.push_back({"extra flat directions", extra});
}

void add_walk_rows(const WalkSummary& summary, const std::string& domain_text, std::vector<SummaryRow>& rows) {
  rows.push_back({"domain", domain_text});
  rows.push_back({"regions", std::to_string(summary.regions) + " (" + std::to_string(summary.bounded_regions) +
                                 " bounded), " + std::to_string(summary.linear_regions) + " linear regions" +
                                 (summary.certified ? ", every one certified" : "")});
  std::string per_layer;
  for (std::size_t k = 0; k < summary.regions_per_layer.size(); ++k)
    per_layer += (k ? ", " : "") + std::to_string(summary.regions_per_layer[k]);
  per_layer += "  (distinct pattern prefixes up to each layer)";
  rows.push_back({"regions per layer", per_layer});
  std::string nonsmooth = std::to_string(summary.nonsmooth_regions.size());
  rows.push_back({"non-smooth regions", nonsmooth + (summary.nonsmooth_regions.empty() ? "" : " (a neuron identically zero with a nonzero backward signal)")});
}

// "x3=1/2", "3=1/2" or "x3=-1/2,0,1/2" (several slices) for --slice; the
// default is the last axis at the domain centre's coordinate.
struct SliceChoice {
  std::size_t axis = 0;
  RationalVector values;
};
SliceChoice parse_slice(const std::string& text, const Domain& domain) {
  if (text.empty()) return {domain.dim - 1, {domain_centre(domain)[domain.dim - 1]}};
  const std::size_t equals = text.find('=');
  const std::string usage = "--slice: expected AXIS=VALUE[,VALUE...] such as x3=0 or x1=-1/2,0,1/2, found '" + text + "'";
  if (equals == std::string::npos) throw input_error(usage);
  std::string axis_text = text.substr(0, equals);
  const std::string axis_usage = "--slice: the axis must be x1 to x" + std::to_string(domain.dim) + ", found '" + axis_text + "'";
  if (!axis_text.empty() && axis_text[0] == 'x') axis_text = axis_text.substr(1);
  std::uint64_t axis = 0;
  try {
    axis = parse_unsigned(axis_text, "--slice");
  } catch (const input_error&) {  // 'X3', 'y': the axis, not 'a non-negative integer below 2^64'
    throw input_error(axis_usage);
  }
  if (axis < 1 || axis > domain.dim) throw input_error(axis_usage);
  RationalVector values = parse_number_list(text.substr(equals + 1), "--slice");
  if (values.empty() || values.size() > max_slices)
    throw input_error("--slice: give 1 to " + std::to_string(max_slices) + " values, found " + std::to_string(values.size()));
  for (std::size_t j = 1; j < values.size(); ++j)  // the same plane twice: two slider steps showing one slice
    for (std::size_t i = 0; i < j; ++i)
      if (values[i] == values[j])
        throw input_error("--slice: value " + std::to_string(j + 1) + " (" + format_rational_brief(values[j]) +
                          ") repeats value " + std::to_string(i + 1) + ": give each plane once");
  return {static_cast<std::size_t>(axis - 1), std::move(values)};
}

void write_page(const ReportArguments& arguments, const std::string& title, const std::vector<SummaryRow>& rows,
                const Json& data) {
  write_output(arguments.output_path, report_html(title, rows, data));
}

int report_network(const ReportArguments& arguments, const std::atomic<bool>& interrupt) {
  const Network network = read_network_input(arguments.input_path);
  refuse_unwritable_output(arguments.output_path);  // the page is written after the walk: tried before it
  const std::size_t dim = network.input_dim;
  if (dim < 1 || dim > 3)
    throw input_error("report: the network has " + std::to_string(dim) +
                      " inputs; report shows 1 (the graph), 2 (the region map) or 3 (a 2-D slice)");
  const Domain domain = make_domain(arguments.domain, dim);
  if (!arguments.slice_text.empty() && dim != 3) throw input_error("--slice is for networks with 3 inputs");
  const auto slice = dim == 3 ? std::optional(parse_slice(arguments.slice_text, domain)) : std::nullopt;

  const FunctionalDimensionResult result = certify(network, domain, arguments, interrupt);
  const Walked whole = walk(network, domain, arguments, dim != 3, interrupt, "walk");

  std::vector<SummaryRow> rows{{"network", arguments.input_path + "  (" + architecture_arrows(network) + ")"}};
  add_walk_rows(whole.summary, domain.describe(), rows);
  add_certify_rows(network, result, rows);

  Json data;
  data["format"] = "pleat-report/1";
  data["network"] = report_network_json(network, arguments.input_path);
  data["walk"] = report_walk_json(network, domain, whole.summary);
  data["certify"] = report_certify_json(network, result);
  std::size_t shown = 0;
  bool has_details = true;
  if (dim == 3) {
    const std::size_t axis = slice->axis;
    data["kind"] = "slice";
    data["slices"] = Json::array();
    std::string counts;
    for (const Rational& value : slice->values) {
      const Network plane_network = restrict_to_slice(network, axis, value);
      const Domain plane_domain = slice_domain(domain, axis, value);
      const Walked section = walk(plane_network, plane_domain, arguments, true, interrupt, "slice walk");
      const ChosenView chosen = choose_view(plane_domain, section.regions);
      Json map = plane_map_json(plane_network, section.regions, chosen.view,
                                plane_domain.kind != Domain::Kind::whole_space, network, arguments.detail_limit);
      const std::size_t in_view = map["regions_shown"].get<std::size_t>();
      shown += in_view;
      has_details = has_details && map["has_details"].get<bool>();
      counts += (counts.empty() ? "" : "; ") + format_rational(value) + ": " + count_of(section.summary.regions, "region") +
                (in_view < section.summary.regions ? " (" + std::to_string(section.summary.regions - in_view) + " outside the view " + view_text(chosen.view) + ")" : "");
      data["slices"].push_back({{"axis", axis}, {"value", format_rational(value)}, {"value_double", to_double(value)},
                                {"regions", section.summary.regions}, {"map", std::move(map)}});
    }
    std::vector<std::string> names;
    for (std::size_t i = 0; i < 3; ++i)
      if (i != axis) names.push_back("x" + std::to_string(i + 1));
    data["axes"] = names;
    rows.push_back({slice->values.size() == 1 ? "slice" : "slices",
                    "x" + std::to_string(axis + 1) + " = " + counts +
                        " (each an exact 2-D walk of the network restricted to the plane)"});
  } else {
    const ChosenView chosen = choose_view(domain, whole.regions);
    const bool clipped = domain.kind != Domain::Kind::whole_space;
    if (dim == 2) {
      data["kind"] = "plane";
      data["map"] = plane_map_json(network, whole.regions, chosen.view, clipped, network, arguments.detail_limit);
      data["axes"] = {"x1", "x2"};
    } else {
      data["kind"] = "line";
      data["map"] = line_graph_json(network, whole.regions, chosen.view, arguments.detail_limit);
      data["axes"] = {"x"};
    }
    shown = data["map"]["regions_shown"].get<std::size_t>();
    has_details = data["map"]["has_details"].get<bool>();
    rows.push_back({"view", view_text(chosen.view) +
                                (shown < whole.summary.regions
                                     ? "  (" + std::to_string(whole.summary.regions - shown) + " of " +
                                           std::to_string(whole.summary.regions) + " regions lie outside it)"
                                     : "")});
  }
  rows.push_back({"embedded", count_of(shown, "region") +
                                  (has_details ? " with their details (hover or search)"
                                               : " as shapes only: above " + std::to_string(arguments.detail_limit) +
                                                     " regions the page leaves out per-region details")});
  data["summary"] = Json::array();
  for (const auto& row : rows) data["summary"].push_back({{"label", row.label}, {"text", row.text}});
  write_page(arguments, "pleat report: " + arguments.input_path, rows, data);
  for (const auto& row : rows) std::cout << row.label << std::string(row.label.size() < 22 ? 22 - row.label.size() : 1, ' ') << row.text << "\n";
  std::cout << "written               " << arguments.output_path << "\n";
  return 0;
}

std::string exact_with_decimal(const std::optional<Rational>& value) {
  return value ? format_rational_readable(*value) : std::string("none");
}

// The survey's summary rows: every statistic exact (summarize_survey).
std::vector<SummaryRow> survey_rows(const SurveyRecord& record, const SurveySummary& summary) {
  const Json& h = record.header;
  std::vector<SummaryRow> rows;
  rows.push_back({"survey", architecture_text(h["arch"].get<std::vector<std::size_t>>()) + "  (init " +
                                h["init"].get<std::string>() + ", " + std::to_string(h["digits"].get<int>()) +
                                " digits, seed " + std::to_string(h["seed"].get<std::uint64_t>()) + ", domain " +
                                configuration_from_header(h, record.source).domain.describe() + ")"});
  rows.push_back({"file", record.source});
  const std::uint64_t missing = missing_samples(record);
  rows.push_back({"samples", std::to_string(summary.samples) + " of " + std::to_string(summary.samples + missing) +
                                 ": " + std::to_string(summary.certified) + " certified, " +
                                 std::to_string(summary.uncertified) + " cut short (bounds only, not in the histogram)" +
                                 (missing ? ", " + std::to_string(missing) + " not run yet" : "")});
  rows.push_back({"scaling bound", summary.scaling_bound ? std::to_string(*summary.scaling_bound) : "differs between samples"});
  rows.push_back({"mean", exact_with_decimal(summary.mean)});
  rows.push_back({"variance (n-1)", exact_with_decimal(summary.variance)});
  std::string modes;
  for (std::size_t i = 0; i < summary.modes.size(); ++i) modes += (i ? ", " : "") + std::to_string(summary.modes[i]);
  rows.push_back({"modes", modes.empty() ? "none" : modes});
  rows.push_back({"at the scaling bound", std::to_string(summary.at_scaling_bound) + " of " +
                                              std::to_string(summary.certified) + " certified samples" +
                                              (summary.at_scaling_bound_fraction
                                                   ? ": " + format_rational_readable(*summary.at_scaling_bound_fraction)
                                                   : std::string())});
  return rows;
}

int report_survey(const ReportArguments& arguments) {
  if (!arguments.domain.box_text.empty() || !arguments.domain.domain_path.empty() || !arguments.slice_text.empty())
    throw input_error("report: a survey file carries its own domain; --box, --domain and --slice are for networks");
  SurveyFile file = read_survey_file(arguments.input_path);
  require_survey_header(file, arguments.input_path);
  if (file.has_partial_line)  // as survey summary says it (the page was silent)
    std::cerr << "pleat: " << arguments.input_path << ": ignoring a last line cut short (rerun the survey to complete it)\n";
  const SurveyRecord record{std::move(file.header), std::move(file.samples), arguments.input_path};
  const SurveySummary summary = summarize_survey(record.samples);
  Json data;
  data["format"] = "pleat-report/1";
  data["kind"] = "survey";
  data["survey"] = survey_report_json(record, summary);
  data["survey"]["domain_text"] = configuration_from_header(record.header, record.source).domain.describe();
  std::vector<SummaryRow> rows = survey_rows(record, summary);
  data["summary"] = Json::array();
  for (const auto& row : rows) data["summary"].push_back({{"label", row.label}, {"text", row.text}});
  write_page(arguments, "pleat report: " + arguments.input_path, rows, data);
  print_summary(record, summary, std::cout);
  std::cout << "written               " << arguments.output_path << "\n";
  return 0;
}

int run_report(const ReportArguments& arguments) {
  const InterruptGuard interrupt;
  const StopRequest stop(&interrupt.flag(), 0);
  const StopScope scope(stop);
  try {
    if (is_survey_file(arguments.input_path)) return report_survey(arguments);
    return report_network(arguments, interrupt.flag());
  } catch (const Stopped&) {
    std::cerr << "pleat: report interrupted; no page written\n";
    return 130;
  }
}

}  // namespace

void register_report(CommandTable& commands) {
  auto arguments = std::make_shared<ReportArguments>();
  CLI::App& command = commands.add(
      "report", "Write an interactive HTML report of a network's regions or of a survey",
      "One self-contained HTML file (no network access needed to open it) to explore by\n"
      "pointing. For a network: a summary (the walk's counts, the certified functional\n"
      "dimension with its evidence, or bounds when cut short) and, with 2 inputs, the region\n"
      "map (pan and zoom; hover a region for its pattern, exact interior point, exact area,\n"
      "affine map and the rows it adds to the rank; a layer's lines on or off; a neuron's\n"
      "bent hyperplane highlighted; search by pattern); with 1 input the graph (hover a\n"
      "piece for its exact slope and intercept); with 3 inputs the exact 2-D slices at\n"
      "--slice (the network restricted to each plane, walked as a 2-input network; a slider\n"
      "picks the slice). For a survey file (pleat survey -o): the histogram with exact mean,\n"
      "variance, modes and the fraction at the scaling bound; hovering a bar lists its\n"
      "samples. Above 20000 regions (--detail-limit) the page embeds shapes only (counts stay\n"
      "exact). --time-limit cuts short only certify: the walks behind the map run to the end\n"
      "(Ctrl-C stops the whole report and writes nothing).\n"
      "The embedded JSON: docs/formats.md.\n\n"
      "Examples:\n"
      "  pleat report data/fold2d.json --box -3,3 -o fold2d.html\n"
      "  pleat report data/sensor3d.json --box -1,1 --slice x3=-1/2,0,1/2 -o sensor.html\n"
      "  pleat report survey.jsonl -o survey.html",
      [arguments] { return run_report(*arguments); });
  command.add_option("input", arguments->input_path, "Network file (pleat-network/1 JSON or .onnx) or survey file (pleat-survey/1)")
      ->required();
  command.add_option("-o,--out", arguments->output_path, "The HTML file to write")->required()->type_name("FILE.html");
  add_domain_options(command, arguments->domain);
  command.add_option("--slice", arguments->slice_text,
                     "3 inputs: the planes shown, one input held at one or more values (x3=0, x1=-1/2,0,1/2: a "
                     "slider picks one); default: the last input at the domain's centre")
      ->type_name("xK=V[,V...]");
  add_unsigned_option(command, "--detail-limit", arguments->detail_limit,
                      "Above this many regions in the view the page holds their shapes only (no hover details, "
                      "no search; the counts stay exact). Default 20000",
                      0, 10000000);
  add_walk_limit_options(command, arguments->limits, "Worker threads for the walks (default: all cores)",
                         "--time-limit",
                         "Stop certify after this many seconds: the page then shows bounds, not a certified value");
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
