// certify's matrix files: --rows-out and --kernel-out (see certify_files.hpp).
#include "cli/commands/certify_files.hpp"

#include "cli/common.hpp"

#include <filesystem>
#include <iostream>
#include <sstream>

namespace pleat::cli {

void write_matrix(const std::string& path, const RationalMatrix& matrix, const std::string& comment) {
  std::ostringstream out;
  if (!comment.empty()) out << "# " << comment << "\n";
  for (std::size_t r = 0; r < matrix.rows(); ++r) {
    for (std::size_t c = 0; c < matrix.cols(); ++c) out << (c ? "," : "") << format_rational(matrix(r, c));
    out << "\n";
  }
  write_output(path, out.str());
}

void say_not_written(const std::string& what, const std::string& path, const std::string& why) {
  std::cerr << "pleat: no " << what << " written to " << path << ": " << why << "\n";
  if (std::filesystem::exists(path))
    std::cerr << "pleat: " << path << " is an earlier run's " << what << ", not this run's (not overwritten)\n";
}

// The kernel basis of a certified value; nothing for bounds (said on stderr):
// an empty or partial file would read as a kernel that was never proved.
void write_kernel(const std::string& path, const FunctionalDimensionResult& result) {
  if (!result.certified) {
    say_not_written("kernel", path, "the functional dimension was not certified (bounds only)");
    return;
  }
  write_matrix(path, result.kernel);
}

bool rows_cut_short(const FunctionalDimensionResult& result) {
  return result.rows_interrupted;
}

void write_rows(const std::string& path, const FunctionalDimensionResult& result, bool stopped_in_batch) {
  if (rows_cut_short(result)) {
    const std::string partial = "partial: interrupted while the rows were formed; the exact rows of the first " +
                                std::to_string(result.rows_regions) + " of the " +
                                std::to_string(result.regions_contributing) +
                                " regions that contributed (the printed value or bounds stand)";
    write_matrix(path, result.rows, partial);
    std::cerr << "pleat: " << path << ": " << partial << "\n";
    return;
  }
  if (result.certified) return write_matrix(path, result.rows);
  const std::string why = result.stop_reason == StopReason::none ? "its bounds do not meet"
                                                                  : "stopped: " + to_string(result.stop_reason);
  const std::string partial =
      stopped_in_batch
          ? "partial: the run was not certified (" + why +
                " in the --points batch stage, before the walk); no region was walked, so no rows: the batch's "
                "proved bounds are in the output, not here"
          : "partial: the run was not certified (" + why + "); the exact rows of the " +
                std::to_string(result.regions_contributing) + " regions that contributed before it ended, of rank " +
                std::to_string(result.lower_bound) + ", the proved lower bound";
  write_matrix(path, result.rows, partial);
  std::cerr << "pleat: " << path << ": " << partial << "\n";
}

}  // namespace pleat::cli
