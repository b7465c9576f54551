// Fuzzes the region file readers (pleat-regions/1): `pleat verify` and
// `pleat draw --from`, on the example network data/fold2d.json. A region
// file is never trusted, so neither may do more than refuse it.
#include "fuzz/fuzz_support.hpp"

#include <cstdint>
#include <cstdio>

namespace pleat::cli {
void register_verify(CommandTable& commands);
void register_draw(CommandTable& commands);
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace pleat::fuzz;
  const InputFile regions(data, size);
  const std::string network = source_file("data/fold2d.json");
  run_subcommand(pleat::cli::register_verify, {"verify", network, regions.path()});
  const std::string figure = scratch_path("figure.svg");
  run_subcommand(pleat::cli::register_draw, {"draw", network, "--from", regions.path(), "--out", figure, "-q"});
  std::remove(figure.c_str());
  return 0;
}
