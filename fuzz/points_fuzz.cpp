// Fuzzes the points file of `pleat certify NET --points FILE` (CSV, one
// point a line) together with the exact batch rank that follows, on the
// example network data/fold2d.json (2 inputs).
#include "fuzz/fuzz_support.hpp"

#include <cstdint>

namespace pleat::cli {
void register_certify(CommandTable& commands);
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const pleat::fuzz::InputFile points(data, size);
  pleat::fuzz::run_subcommand(pleat::cli::register_certify,
                              {"certify", pleat::fuzz::source_file("data/fold2d.json"), "--points", points.path()});
  return 0;
}
