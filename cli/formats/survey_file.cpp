#include "cli/formats/survey_file.hpp"

#include "cli/formats/line_input.hpp"
#include "cli/formats/region_json.hpp"
#include "core/domain_io.hpp"

#include <algorithm>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <limits>
#include <set>
#include <type_traits>

namespace pleat::cli {

bool ShardSet::contains(std::uint64_t sample) const {
  return std::binary_search(indices.begin(), indices.end(), sample % count);
}

ShardSet parse_shard(std::string_view text, std::string_view what) {
  const std::string prefix = std::string(what) + ": ";
  const std::size_t slash = text.find('/');
  if (slash == std::string_view::npos)
    throw input_error(prefix + "expected I/M (shard I of M, 0 <= I < M), got '" + std::string(text) + "'");
  ShardSet shard;
  shard.count = parse_unsigned(text.substr(slash + 1), what);
  if (shard.count == 0) throw input_error(prefix + "the number of shards M must be positive");
  shard.indices.clear();
  std::string_view list = text.substr(0, slash);
  while (true) {
    const std::size_t comma = list.find(',');
    const std::uint64_t index = parse_unsigned(list.substr(0, comma), what);
    if (index >= shard.count)
      throw input_error(prefix + "shard index " + std::to_string(index) + " is not below " +
                        std::to_string(shard.count) + " (shards are numbered from 0)");
    shard.indices.push_back(index);
    if (comma == std::string_view::npos) break;
    list = list.substr(comma + 1);
  }
  std::sort(shard.indices.begin(), shard.indices.end());
  if (std::adjacent_find(shard.indices.begin(), shard.indices.end()) != shard.indices.end())
    throw input_error(prefix + "a shard index is repeated");
  if (shard.indices.size() == shard.count) shard = ShardSet{};  // every shard: the whole survey
  return shard;
}

std::string describe_tasks(const ShardSet& shard) {
  if (shard.is_whole()) return "the whole survey";
  const std::string text = format_shard(shard);
  return (shard.indices.size() == 1 ? "task " : "tasks ") + text.substr(0, text.find('/')) + " of " +
         std::to_string(shard.count);
}

std::string format_shard(const ShardSet& shard) {
  std::string text;
  for (std::size_t k = 0; k < shard.indices.size(); ++k) {
    if (k) text += ',';
    text += std::to_string(shard.indices[k]);
  }
  return text + "/" + std::to_string(shard.count);
}

std::string architecture_text(const std::vector<std::size_t>& architecture, char separator) {
  std::string text;
  for (std::size_t k = 0; k < architecture.size(); ++k) {
    if (k) text += separator;
    text += std::to_string(architecture[k]);
  }
  return text;
}

Json survey_header_json(const SurveyConfiguration& configuration, const ShardSet& shard) {
  Json header;
  header["format"] = "pleat-survey/1";
  header["generator"] = "pleat-random/1";
  header["arch"] = configuration.architecture;
  header["init"] = std::string(initialization_name(configuration.init));
  header["digits"] = configuration.digits;
  header["seed"] = configuration.seed;
  header["samples"] = configuration.samples;
  header["domain"] = domain_to_json(configuration.domain);
  header["shard"] = format_shard(shard);
  return header;
}

std::string header_difference(const Json& first, const Json& second) {
  for (const auto& [key, value] : first.items())
    if (key != "shard" && (!second.contains(key) || second[key] != value)) return key;
  for (const auto& [key, value] : second.items())
    if (key != "shard" && !first.contains(key)) return key;
  return "";
}

Json sample_json(const SurveySample& sample) {
  Json line;
  line["sample"] = sample.sample;
  line["functional_dimension"] = sample.functional_dimension ? Json(*sample.functional_dimension) : Json(nullptr);
  line["certified"] = sample.certified;
  line["lower_bound"] = sample.lower_bound;
  line["upper_bound"] = sample.upper_bound;
  line["scaling_bound"] = sample.scaling_bound;
  line["parametric_dimension"] = sample.parametric_dimension;
  line["regions"] = sample.regions;
  line["early_stop"] = sample.early_stop;
  line["stop_reason"] = stop_reason_json(sample.stop_reason);
  line["seconds"] = sample.seconds;
  return line;
}

namespace {

template <typename T>
struct is_vector : std::false_type {};
template <typename T>
struct is_vector<std::vector<T>> : std::true_type {};

// Whether value holds a T exactly. nlohmann's get converts any number to an
// integer type unchecked (a float out of the type's range, such as a header's
// "digits": 3.3e54, is undefined behaviour), so integers are checked here;
// strings, booleans and doubles are checked by get itself.
template <typename T>
bool holds_exactly(const Json& value) {
  if constexpr (is_vector<T>::value) {
    return value.is_array() &&
           std::all_of(value.begin(), value.end(), [](const Json& item) { return holds_exactly<typename T::value_type>(item); });
  } else if constexpr (std::is_integral_v<T> && !std::is_same_v<T, bool>) {
    if (value.is_number_unsigned())
      return value.get<std::uint64_t>() <= static_cast<std::uint64_t>(std::numeric_limits<T>::max());
    if (!value.is_number_integer()) return false;
    const std::int64_t number = value.get<std::int64_t>();
    return std::is_signed_v<T> && number >= static_cast<std::int64_t>(std::numeric_limits<T>::min()) &&
           number <= static_cast<std::int64_t>(std::numeric_limits<T>::max());
  } else {
    return true;
  }
}

template <typename T>
T required(const Json& document, const char* key, const std::string& where) {
  if (!document.contains(key)) throw input_error(where + ": missing key '" + key + "'");
  const std::string wrong = where + ": key '" + key + "' has the wrong type";
  if (!holds_exactly<T>(document.at(key))) throw input_error(wrong + " (or a value out of range)");
  try {
    return document.at(key).get<T>();
  } catch (const Json::exception&) {
    throw input_error(wrong);
  }
}

// The StopReason whose spec word (to_string) is `word`; "" is none, as
// written by a survey that kept the empty string.
StopReason stop_reason_named(const std::string& word, const std::string& where) {
  for (StopReason reason : {StopReason::none, StopReason::time_limit, StopReason::max_regions,
                            StopReason::interrupted, StopReason::requested})
    if (to_string(reason) == word) return reason;
  throw input_error(where + ": unknown \"stop_reason\" \"" + word + "\"");
}

}  // namespace

SurveySample sample_from_json(const Json& line, const std::string& where) {
  if (!line.is_object()) throw input_error(where + ": expected a JSON object");
  SurveySample sample;
  sample.sample = required<std::uint64_t>(line, "sample", where);
  if (line.contains("functional_dimension") && !line["functional_dimension"].is_null())
    sample.functional_dimension = required<std::size_t>(line, "functional_dimension", where);
  sample.certified = required<bool>(line, "certified", where);
  if (sample.certified != sample.functional_dimension.has_value())
    throw input_error(where + ": 'certified' and 'functional_dimension' disagree");
  sample.lower_bound = required<std::size_t>(line, "lower_bound", where);
  sample.upper_bound = required<std::size_t>(line, "upper_bound", where);
  sample.scaling_bound = required<std::size_t>(line, "scaling_bound", where);
  sample.parametric_dimension = required<std::size_t>(line, "parametric_dimension", where);
  sample.regions = required<std::size_t>(line, "regions", where);
  sample.early_stop = required<bool>(line, "early_stop", where);
  if (line.contains("stop_reason") && !line["stop_reason"].is_null())
    sample.stop_reason = stop_reason_named(required<std::string>(line, "stop_reason", where), where);
  sample.seconds = required<double>(line, "seconds", where);
  return sample;
}

SurveyConfiguration configuration_from_header(const Json& header, const std::string& where) {
  if (!header.is_object() || !header.contains("format") || header["format"] != "pleat-survey/1")
    throw input_error(where + ": not a survey file (the first line should have \"format\": \"pleat-survey/1\")");
  SurveyConfiguration configuration;
  configuration.architecture = required<std::vector<std::size_t>>(header, "arch", where);
  if (configuration.architecture.size() < 2) throw input_error(where + ": 'arch' needs at least two widths");
  for (std::size_t width : configuration.architecture)
    if (width == 0 || width > (std::size_t{1} << 20))
      throw input_error(where + ": 'arch' width " + std::to_string(width) + " is not between 1 and 2^20");
  configuration.init = parse_initialization(required<std::string>(header, "init", where));
  configuration.digits = required<int>(header, "digits", where);
  configuration.seed = required<std::uint64_t>(header, "seed", where);
  configuration.samples = required<std::uint64_t>(header, "samples", where);
  const std::size_t dim = configuration.architecture.front();
  const Json domain = header.contains("domain") ? header["domain"] : Json(nullptr);
  if (domain.is_string() && domain.get<std::string>() == "R^" + std::to_string(dim)) {
    configuration.domain = make_whole_space(dim);
  } else if (domain.is_object() && domain.contains("box")) {
    RationalVector lower, upper;
    const Json& box = domain["box"];
    if (!box.is_array()) throw input_error(where + ": the domain's 'box' is not a list of intervals");
    for (const Json& interval : box) {
      // Each interval is ["lo", "hi"], exact numbers as strings (pleat survey writes them so).
      if (!interval.is_array() || interval.size() != 2 || !interval[0].is_string() || !interval[1].is_string())
        throw input_error(where + ": a 'box' interval is not a pair of exact numbers as strings [\"lo\", \"hi\"]");
      try {
        lower.push_back(parse_rational(interval[0].get<std::string>()));
        upper.push_back(parse_rational(interval[1].get<std::string>()));
      } catch (const input_error& error) {
        throw input_error(where + ": a 'box' bound: " + error.what());
      }
    }
    if (lower.size() != dim) throw input_error(where + ": the box's dimension differs from the input width");
    try {
      configuration.domain = make_box(lower, upper);
    } catch (const input_error& error) {
      throw input_error(where + ": the domain's 'box': " + error.what());
    }
  } else if (domain.is_object() && domain.contains("constraints")) {
    const PolytopeDocument document = parse_domain(domain.dump());
    std::vector<lp::Constraint> constraints;
    for (const auto& [normal, offset] : document.constraints) constraints.push_back(lp::Constraint{normal, offset});
    configuration.domain = make_polytope(dim, std::move(constraints));
  } else {
    throw input_error(where + ": unreadable 'domain'");
  }
  return configuration;
}

ShardSet shard_from_header(const Json& header, const std::string& where) {
  return parse_shard(required<std::string>(header, "shard", where), where + ": shard");
}

namespace {

// Survey lines are a few hundred bytes; a header with a large polytope more.
constexpr std::size_t max_survey_line_bytes = std::size_t{16} << 20;

// What the architecture allows: D = sum (n_{k-1} + 1) n_k parameters, and
// the scaling bound D - rank(scaling directions) lies in [D - H, D] for H
// hidden neurons (one rescaling direction each).
struct ArchitectureLimits {
  std::size_t parametric_dimension = 0;
  std::size_t hidden_neurons = 0;
};

ArchitectureLimits limits_of(const std::vector<std::size_t>& architecture) {
  ArchitectureLimits limits;
  for (std::size_t k = 1; k < architecture.size(); ++k) {
    limits.parametric_dimension += (architecture[k - 1] + 1) * architecture[k];
    if (k + 1 < architecture.size()) limits.hidden_neurons += architecture[k];
  }
  return limits;
}

// A line that claims what no run can produce is refused, not summarised.
void check_sample_consistency(const SurveySample& sample, const ArchitectureLimits& limits, const std::string& where) {
  const auto refuse = [&](const std::string& what) {
    throw input_error(where + ": impossible sample line: " + what);
  };
  const std::string d = std::to_string(limits.parametric_dimension);
  if (sample.parametric_dimension != limits.parametric_dimension)
    refuse("parametric_dimension " + std::to_string(sample.parametric_dimension) + ", but the header's architecture has " +
           d + " parameters");
  if (sample.scaling_bound > limits.parametric_dimension ||
      sample.scaling_bound + limits.hidden_neurons < limits.parametric_dimension)
    refuse("scaling_bound " + std::to_string(sample.scaling_bound) + " is outside [" +
           std::to_string(limits.parametric_dimension - limits.hidden_neurons) + ", " + d +
           "] (the parameters less at most one rescaling per hidden neuron)");
  if (sample.upper_bound > sample.scaling_bound)
    refuse("upper_bound " + std::to_string(sample.upper_bound) + " is above the scaling bound " +
           std::to_string(sample.scaling_bound));
  if (sample.lower_bound > sample.upper_bound)
    refuse("lower_bound " + std::to_string(sample.lower_bound) + " is above upper_bound " +
           std::to_string(sample.upper_bound));
  if (sample.certified && sample.lower_bound != sample.upper_bound) refuse("certified with unequal bounds");
  // A run stopped after its bounds met (naming the extra directions, or the
  // walk's last region) is not certified: stopped, never certified.
  if (!sample.certified && sample.lower_bound == sample.upper_bound && sample.stop_reason == StopReason::none)
    refuse("the bounds meet but the line is not certified, and the run was not stopped");
  if (sample.functional_dimension && *sample.functional_dimension != sample.lower_bound)
    refuse("functional_dimension " + std::to_string(*sample.functional_dimension) + " differs from its bounds " +
           std::to_string(sample.lower_bound));
  if (sample.early_stop && !(sample.certified && sample.lower_bound == sample.scaling_bound))
    refuse("early_stop without reaching the scaling bound");
  if (!(sample.seconds >= 0) || sample.seconds > 1e12) refuse("seconds is not a time");
}

}  // namespace

SurveyFile read_survey_file(const std::string& path) {
  LineInput input(path, "survey file", max_survey_line_bytes);
  SurveyFile file;
  SurveyConfiguration configuration;
  ArchitectureLimits limits;
  ShardSet shard;
  std::set<std::uint64_t> seen;
  std::string line;
  while (input.next(line)) {
    const std::size_t number = input.line_number();
    const std::string where = input.path() + ":" + std::to_string(number);
    Json document = Json::parse(line, nullptr, false);
    if (!input.last_had_newline() || document.is_discarded()) {
      // A run killed while writing leaves one cut line at the very end, and
      // a cut line has no newline (each line is written with its newline).
      // A whole line that is no JSON was not cut by pleat: resuming would
      // drop it and run its sample again, so it is refused, not dropped.
      if (input.at_end() && !input.last_had_newline()) {
        file.has_partial_line = true;
        break;
      }
      throw input_error(where + (input.last_had_newline()
                                     ? ": not a JSON line (a whole line, ended by a newline: not cut short by an "
                                       "interrupted run; mend or delete it)"
                                     : ": not a JSON line (only the last line of a survey file may be cut short)"));
    }
    if (number == 1) {
      configuration = configuration_from_header(document, where);
      limits = limits_of(configuration.architecture);
      shard = shard_from_header(document, where);
      file.header = std::move(document);
    } else {
      SurveySample sample = sample_from_json(document, where);
      if (sample.sample >= configuration.samples)
        throw input_error(where + ": sample " + std::to_string(sample.sample) + " is beyond the survey's " +
                          std::to_string(configuration.samples) + " samples");
      if (!shard.contains(sample.sample))
        throw input_error(where + ": sample " + std::to_string(sample.sample) + " does not belong to " +
                          describe_tasks(shard) + " (header \"shard\": \"" + format_shard(shard) + "\")");
      if (!seen.insert(sample.sample).second)
        throw input_error(where + ": sample " + std::to_string(sample.sample) + " appears twice");
      check_sample_consistency(sample, limits, where);
      file.samples.push_back(std::move(sample));
    }
    file.complete_bytes = input.bytes_read();
  }
  return file;
}

namespace {

constexpr std::string_view survey_header_start = R"({"format":"pleat-survey/1")";

// Whether a file whose only line is cut short is a survey killed while
// writing its header: it starts as every survey header does (or is a cut of
// that start). Anything else (a one-line file of something else, such as a
// network json.dump wrote without a newline) is not a survey to start over.
bool is_cut_survey_header(const std::string& path) {
  std::ifstream file(path, std::ios::binary);
  std::string text(survey_header_start.size(), '\0');
  file.read(text.data(), static_cast<std::streamsize>(text.size()));
  text.resize(static_cast<std::size_t>(file.gcount()));
  return starts_like_survey_header(text);
}

}  // namespace

bool starts_like_survey_header(std::string_view text) {
  const std::size_t n = std::min(text.size(), survey_header_start.size());
  return text.compare(0, n, survey_header_start, 0, n) == 0;
}

const Json& require_survey_header(const SurveyFile& file, const std::string& path) {
  if (!file.header.is_null()) return file.header;
  if (file.has_partial_line && is_cut_survey_header(path))
    throw input_error(path + ":1: a survey header cut short (the survey was killed while writing it: it holds no "
                      "samples; run the survey again)");
  throw input_error(path + ": no header line (not a survey file, or empty)");
}

SurveyResume resume_survey_file(const std::string& path, const Json& header) {
  SurveyResume resume;
  // Only a regular file can hold earlier samples (-o /dev/null is fine too).
  if (path.empty() || !std::filesystem::is_regular_file(path) || std::filesystem::file_size(path) == 0) return resume;
  SurveyFile existing = read_survey_file(path);
  if (existing.header.is_null()) {
    if (!is_cut_survey_header(path))
      throw input_error(path + ": is not a survey file (its one line, with no newline, is no pleat-survey/1 "
                        "header) and would be replaced; use another -o");
    return resume;
  }
  const std::string difference = header_difference(existing.header, header);
  if (!difference.empty())
    throw input_error(path + ": holds a different survey ('" + difference + "' is " +
                      existing.header[difference].dump() + " there, " + header[difference].dump() +
                      " here); use another -o, or delete the file to start over");
  if (existing.header["shard"] != header["shard"])
    throw input_error(path + ": holds " + describe_tasks(parse_shard(existing.header["shard"].get<std::string>(), path)) +
                      ", this command runs " + describe_tasks(parse_shard(header["shard"].get<std::string>(), "--task-index")));
  resume.keep_bytes = existing.complete_bytes;
  resume.samples = std::move(existing.samples);
  resume.dropped_partial_line = existing.has_partial_line;
  return resume;
}

SurveyWriter::SurveyWriter(const std::string& path, std::uintmax_t keep_bytes, const Json& header) {
  std::error_code error;
  if (keep_bytes > 0) std::filesystem::resize_file(path, keep_bytes, error);
  if (error) throw input_error(path + ": cannot truncate the cut last line: " + error.message());
  file_.emplace(path, keep_bytes > 0 ? OutputFile::Mode::append : OutputFile::Mode::truncate);
  if (keep_bytes == 0) write(header);
}

void SurveyWriter::write(const Json& line) {
  // Flushed line by line: an interrupted survey keeps every finished sample.
  file_->write(json_text(line, false));
  file_->flush();
}

}  // namespace pleat::cli
