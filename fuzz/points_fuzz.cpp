// Fuzzes the points files: as text through `pleat certify NET --points FILE`
// (read, then the exact batch rank, on the example network data/fold2d.json,
// 2 inputs), and as a .npy file through the reader itself (the extension
// decides the format).
#include "cli/formats/points_file.hpp"
#include "fuzz/fuzz_support.hpp"

#include <cstdint>
#include <cstdio>
#include <fstream>

namespace pleat::cli {
void register_certify(CommandTable& commands);
}

namespace {

void fuzz_npy(const std::uint8_t* data, std::size_t size) {
  const std::string path = pleat::fuzz::scratch_path("points.npy");
  std::ofstream(path, std::ios::binary).write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  for (std::size_t dimension = 1; dimension <= 2; ++dimension) {
    try {
      const pleat::cli::PointsFile file = pleat::cli::read_points_file(path, dimension);
      for (const auto& point : file.points)
        if (point.size() != dimension) std::abort();
    } catch (const pleat::input_error&) {
    }
  }
  std::remove(path.c_str());
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const pleat::fuzz::InputFile points(data, size);
  pleat::fuzz::run_subcommand(pleat::cli::register_certify,
                              {"certify", pleat::fuzz::source_file("data/fold2d.json"), "--points", points.path()});
  fuzz_npy(data, size);
  return 0;
}
