#include "cli/formats/track_file.hpp"

#include "cli/formats/line_input.hpp"
#include "core/jacobian.hpp"
#include "core/network_io.hpp"

#include <cmath>
#include <cstdint>
#include <filesystem>
#include <iomanip>
#include <sstream>

namespace pleat::cli {

Json track_row_json(const TrackRow& row) {
  return Json{{"index", row.index},
              {"checkpoint", row.checkpoint},
              {"network_fingerprint", row.network},
              {"parametric_dimension", row.parametric_dimension},
              {"scaling_bound", row.scaling_bound},
              {"functional_dimension", row.functional_dimension ? Json(*row.functional_dimension) : Json(nullptr)},
              {"certified", row.functional_dimension.has_value()},
              {"lower_bound", row.lower_bound},
              {"upper_bound", row.upper_bound},
              {"regions", row.regions},
              {"linear_regions", row.linear_regions ? Json(*row.linear_regions) : Json(nullptr)},
              {"walk_complete", row.walk_complete},
              {"seconds", row.seconds}};
}

// Which network a row was certified for: FNV-1a (64-bit; offset basis and
// prime from the FNV specification) over its canonical text. A resumed run
// compares it with the checkpoint file as it is now, so a file overwritten
// since (a rerun of training) is not shown with another network's value.
std::string network_fingerprint(const Network& network) {
  std::uint64_t hash = 14695981039346656037ull;
  for (const char c : write_network(network)) {
    hash ^= static_cast<unsigned char>(c);
    hash *= 1099511628211ull;
  }
  std::ostringstream text;
  text << "fnv1a64:" << std::hex << std::setw(16) << std::setfill('0') << hash;
  return text.str();
}

CheckpointFacts checkpoint_facts(const Network& network) {
  return {network_fingerprint(network), network.parametric_dimension(), scaling_bound(network)};
}

namespace {

// The header names every checkpoint path; far below this.
constexpr std::size_t max_track_line_bytes = std::size_t{16} << 20;

// A count written as a JSON integer: nlohmann's get converts a float or a
// negative number to an unsigned type unchecked (-1 read as 2^64 - 1).
std::size_t count_at(const Json& line, const char* key, const std::string& where) {
  const Json& value = line.at(key);
  if (!value.is_number_unsigned())
    throw input_error(where + ": '" + key + "' is not a count (a non-negative integer): " + value.dump());
  return value.get<std::size_t>();
}

std::optional<std::size_t> count_or_null_at(const Json& line, const char* key, const std::string& where) {
  if (line.at(key).is_null()) return std::nullopt;
  return count_at(line, key, where);
}

TrackRow row_from_json(const Json& line, const std::string& where) {
  try {
    TrackRow row;
    row.index = count_at(line, "index", where);
    row.checkpoint = line.at("checkpoint").get<std::string>();
    row.network = line.at("network_fingerprint").get<std::string>();
    row.parametric_dimension = count_at(line, "parametric_dimension", where);
    row.scaling_bound = count_at(line, "scaling_bound", where);
    row.functional_dimension = count_or_null_at(line, "functional_dimension", where);
    if (line.at("certified").get<bool>() != row.functional_dimension.has_value())
      throw input_error(where + ": 'certified' and 'functional_dimension' disagree");
    row.lower_bound = count_at(line, "lower_bound", where);
    row.upper_bound = count_at(line, "upper_bound", where);
    row.regions = count_at(line, "regions", where);
    row.linear_regions = count_or_null_at(line, "linear_regions", where);
    row.walk_complete = line.at("walk_complete").get<bool>();
    row.seconds = line.at("seconds").get<double>();
    return row;
  } catch (const Json::exception& fault) {
    throw input_error(where + ": not a pleat-track/1 row (" + fault.what() + ")");
  }
}

// A row no run on this checkpoint can write is refused, not shown.
void check_row(const TrackRow& row, const Json& header, const std::vector<CheckpointFacts>& checkpoints,
               const std::string& where) {
  if (row.index >= checkpoints.size() || header["checkpoints"][row.index] != row.checkpoint)
    throw input_error(where + ": checkpoint " + std::to_string(row.index) + " is not in this run");
  const CheckpointFacts& facts = checkpoints[row.index];
  if (row.network != facts.fingerprint)
    throw input_error(where + ": " + row.checkpoint +
                      " holds another network than the one tracked there (the file changed since); give "
                      "another -o or remove the file");
  const auto refuse = [&](const std::string& what) { throw input_error(where + ": impossible row: " + what); };
  if (row.parametric_dimension != facts.parametric_dimension || row.scaling_bound != facts.scaling_bound)
    refuse("parametric_dimension " + std::to_string(row.parametric_dimension) + " and scaling_bound " +
           std::to_string(row.scaling_bound) + ", but the network has " + std::to_string(facts.parametric_dimension) +
           " and " + std::to_string(facts.scaling_bound));
  if (row.lower_bound > row.upper_bound || row.upper_bound > row.scaling_bound)
    refuse("the bounds " + std::to_string(row.lower_bound) + " <= " + std::to_string(row.upper_bound) +
           " <= scaling_bound " + std::to_string(row.scaling_bound) + " do not hold");
  // Bounds may meet in a run stopped after they did: not certified then.
  if (row.functional_dimension && (*row.functional_dimension != row.lower_bound || row.lower_bound != row.upper_bound))
    refuse("certified " + std::to_string(*row.functional_dimension) + " but bounded by [" +
           std::to_string(row.lower_bound) + ", " + std::to_string(row.upper_bound) + "]");
  if (row.walk_complete != row.linear_regions.has_value())
    refuse(row.walk_complete ? "a whole walk without its linear regions" : "linear regions of a walk cut short");
  if (!std::isfinite(row.seconds) || row.seconds < 0) refuse("'seconds' is not a time");
}

// A file whose only line is cut short is a track file killed while writing
// its header only when it starts as every header does; anything else (a
// one-line file of something else, such as a network json.dump wrote) is
// not truncated.
bool is_cut_track_header(const std::string& line) {
  static const std::string start = R"({"format":"pleat-track/1")";
  const std::size_t length = std::min(line.size(), start.size());
  return line.compare(0, length, start, 0, length) == 0;
}

}  // namespace

std::map<std::size_t, TrackRow> read_finished_rows(const std::string& path, const Json& header,
                                                   const std::vector<CheckpointFacts>& checkpoints,
                                                   bool* dropped_cut_line) {
  if (dropped_cut_line) *dropped_cut_line = false;
  std::map<std::size_t, TrackRow> rows;
  // Only a regular file holds earlier rows (/dev/full reads zeros forever; a folder fails on open for writing).
  if (!std::filesystem::is_regular_file(path)) return rows;
  LineInput input(path, "track file", max_track_line_bytes);
  std::uintmax_t complete_bytes = 0;
  std::string text;
  while (input.next(text)) {
    const std::size_t number = input.line_number();
    const std::string where = path + ":" + std::to_string(number);
    if (!input.last_had_newline()) {  // the run was killed while writing this last line: rewritten
      if (number == 1 && !is_cut_track_header(text))
        throw input_error(path + ": is not a track file (its one line, with no newline, is no pleat-track/1 header) "
                          "and would be replaced; give another -o");
      break;
    }
    const Json line = Json::parse(text, nullptr, false);
    if (line.is_discarded()) throw input_error(where + ": not a JSON line");
    if (number == 1) {
      for (const auto& [key, value] : header.items())
        if (!line.contains(key) || line[key] != value)
          throw input_error(path + ": written by a different run ('" + key +
                            "' differs); give another -o or remove the file");
    } else {
      TrackRow row = row_from_json(line, where);
      check_row(row, header, checkpoints, where);
      if (rows.contains(row.index))
        throw input_error(where + ": checkpoint " + std::to_string(row.index) + " appears twice");
      rows[row.index] = std::move(row);
    }
    complete_bytes = input.bytes_read();
  }
  if (complete_bytes < std::filesystem::file_size(path)) {
    std::filesystem::resize_file(path, complete_bytes);
    if (dropped_cut_line) *dropped_cut_line = true;
  }
  return rows;
}

}  // namespace pleat::cli
