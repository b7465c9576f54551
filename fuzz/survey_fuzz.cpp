// Fuzzes the survey file reader (pleat-survey/1) through `pleat survey
// summary` (text and JSON) and `survey plot`, which read every line and
// compute the report and histogram from it.
#include "fuzz/fuzz_support.hpp"

#include <cstdint>
#include <cstdio>

namespace pleat::cli {
void register_survey(CommandTable& commands);
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace pleat::fuzz;
  const InputFile survey(data, size);
  run_subcommand(pleat::cli::register_survey, {"survey", "summary", survey.path()});
  run_subcommand(pleat::cli::register_survey, {"survey", "summary", "--json", survey.path()});
  const std::string plot = scratch_path("histogram.csv");
  run_subcommand(pleat::cli::register_survey, {"survey", "plot", survey.path(), "--out", plot});
  std::remove(plot.c_str());
  return 0;
}
