// Survey files (format pleat-survey/1, shared/spec/outputs.md "Surveys"): a
// header line with the configuration, then one JSON line per finished sample
// in any order. Reading, resuming, shards and merging; the statistics
// themselves are enumerate/survey.hpp's.
#pragma once

#include "cli/common.hpp"
#include "cli/formats/output_file.hpp"
#include "enumerate/survey.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace pleat::cli {

// Some shards of one split of the samples into `count` shards; shard I holds
// the samples i with i % count == I. Written "I/M" for one shard, "0,2/4" for
// several; a complete set is normalised to "0/1" (the whole survey).
struct ShardSet {
  std::vector<std::uint64_t> indices{0};  // sorted, distinct, each < count
  std::uint64_t count = 1;

  bool contains(std::uint64_t sample) const;
  bool is_whole() const { return count == 1; }
};

// "I/M" or "I1,I2,.../M". Throws input_error naming `what`.
ShardSet parse_shard(std::string_view text, std::string_view what);
std::string format_shard(const ShardSet& shard);
// For messages: "task 1 of 3", "tasks 0,2 of 4", "the whole survey".
std::string describe_tasks(const ShardSet& shard);

// The header line's document: format, generator, arch, init, digits, seed,
// samples, domain, shard.
Json survey_header_json(const SurveyConfiguration& configuration, const ShardSet& shard);

// The first key (in header order) whose value differs between two headers,
// ignoring "shard"; "" when they describe the same survey.
std::string header_difference(const Json& first, const Json& second);

// One sample line's document and its inverse (`where` prefixes messages).
Json sample_json(const SurveySample& sample);
SurveySample sample_from_json(const Json& line, const std::string& where);

struct SurveyFile {
  Json header;                       // null when the file holds no complete header line
  std::vector<SurveySample> samples;  // in file order
  std::uintmax_t complete_bytes = 0;  // length of the prefix made of whole, valid lines
  bool has_partial_line = false;      // a last line cut short (a killed run), not in `samples`
};

// Reads a survey file. Only the last line may be broken (no newline at the
// end, or not JSON): it is reported as partial and left out. Anything else
// wrong (a bad line in the middle, a wrong format, a repeated sample, a
// sample outside the header's range or shard) is an input_error naming the
// file and line.
SurveyFile read_survey_file(const std::string& path);

// The header of a file read_survey_file read, or an input_error: a file whose
// one line, with no newline, begins as pleat writes a survey header is 'a
// survey header cut short' (a survey killed while writing it) at FILE:1;
// anything else without a header is 'no header line'.
const Json& require_survey_header(const SurveyFile& file, const std::string& path);

// Whether `text` (a file's first bytes) can begin a survey header as pleat
// writes it: it starts with {"format":"pleat-survey/1" or is a prefix of it.
bool starts_like_survey_header(std::string_view text);

// The configuration back from a header (the domain rebuilt exactly).
SurveyConfiguration configuration_from_header(const Json& header, const std::string& where);
ShardSet shard_from_header(const Json& header, const std::string& where);

// What an existing survey file holds for a run whose header is `header`:
// its samples and the length of its whole lines (a last line cut short by a
// killed run is dropped, and said so). A missing or empty file (or one that
// is not regular, such as /dev/null) holds nothing, as does a header cut
// short; a one-line file that is no survey header is an input_error. A file of another survey
// or another shard is an input_error naming the first differing key.
struct SurveyResume {
  std::uintmax_t keep_bytes = 0;
  std::vector<SurveySample> samples;
  bool dropped_partial_line = false;
};
SurveyResume resume_survey_file(const std::string& path, const Json& header);

// Appends lines to a survey file, each written whole and flushed at once, so
// a killed run leaves at most one partial last line.
class SurveyWriter {
 public:
  // Opens `path` for appending after truncating it to `keep_bytes`; writes
  // `header` first when keep_bytes is 0.
  SurveyWriter(const std::string& path, std::uintmax_t keep_bytes, const Json& header);
  SurveyWriter(const SurveyWriter&) = delete;
  SurveyWriter& operator=(const SurveyWriter&) = delete;
  void write(const Json& line);

 private:
  std::optional<OutputFile> file_;
};

// "2,5,5,5,1" and "2-5-5-5-1" (for file names).
std::string architecture_text(const std::vector<std::size_t>& architecture, char separator = ',');

}  // namespace pleat::cli
