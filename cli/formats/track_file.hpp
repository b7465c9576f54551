// Track files (format pleat-track/1, docs/formats.md): a header line naming
// the run, then one JSON line per finished checkpoint, read back to resume.
#pragma once

#include "cli/common.hpp"
#include "core/network.hpp"

#include <cstddef>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace pleat::cli {

// One checkpoint's line.
struct TrackRow {
  std::size_t index = 0;
  std::string checkpoint;
  std::string network;  // network_fingerprint of the checkpoint as certified
  std::size_t parametric_dimension = 0;
  std::size_t scaling_bound = 0;
  std::optional<std::size_t> functional_dimension;  // set only when certified
  std::size_t lower_bound = 0;
  std::size_t upper_bound = 0;
  std::size_t regions = 0;  // a lower bound unless walk_complete
  // Only when walk_complete: a cut walk's pieces may be joined by regions not
  // found, so their count bounds nothing.
  std::optional<std::size_t> linear_regions;
  bool walk_complete = false;
  double seconds = 0;
};

Json track_row_json(const TrackRow& row);

// What a resumed row is checked against: the checkpoint file's network now.
struct CheckpointFacts {
  std::string fingerprint;  // network_fingerprint
  std::size_t parametric_dimension = 0;
  std::size_t scaling_bound = 0;
};
CheckpointFacts checkpoint_facts(const Network& network);

// FNV-1a (64 bits) of the network's canonical pleat-network/1 text.
std::string network_fingerprint(const Network& network);

// The rows already in a track file (resuming), by index, after checking that
// its header is `header` (the same run) and that every row could have been
// written for its checkpoint's network (`checkpoints`, one per header
// checkpoint): fingerprint, dimensions, bounds in order, certified exactly
// when its value is given, the linear regions exactly when the walk is
// complete, each checkpoint once. A last line cut short by a killed run is
// truncated away (a header cut short too); a missing or non-regular file
// holds no rows. Anything else is an input_error naming the file and line,
// and the file is left as it was. dropped_cut_line: set to whether a cut
// line was truncated away (the caller says so: nothing is dropped silently).
std::map<std::size_t, TrackRow> read_finished_rows(const std::string& path, const Json& header,
                                                   const std::vector<CheckpointFacts>& checkpoints,
                                                   bool* dropped_cut_line = nullptr);

}  // namespace pleat::cli
