// Fuzzes the track file reader (pleat-track/1, `pleat track -o FILE`): the
// input is the file a rerun resumes from, for a run of two checkpoints of a
// one-input network (each certified in microseconds when its row is absent).
// The reader truncates a cut last line and the run appends rows, so the input
// is copied to a scratch file first.
#include "fuzz/fuzz_support.hpp"

#include <cstdint>
#include <cstdio>
#include <fstream>

namespace pleat::cli {
void register_track(CommandTable& commands);
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace pleat::fuzz;
  const std::string track = scratch_path("track.jsonl");
  std::ofstream(track, std::ios::binary).write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  const std::string ramp = source_file("data/ramp1d.json");
  const std::string zero_row = source_file("tests/data/zero_row1d.json");
  run_subcommand(pleat::cli::register_track, {"track", ramp, zero_row, "--box", "-1,1", "-o", track, "-q", "--threads", "1"});
  std::remove(track.c_str());
  return 0;
}
