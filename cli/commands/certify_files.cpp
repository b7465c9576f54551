// certify's matrix files: --rows-out and --kernel-out (see certify_files.hpp).
#include "cli/commands/certify_files.hpp"

#include "cli/common.hpp"
#include "cli/formats/points_file.hpp"
#include "core/errors.hpp"

#include <filesystem>
#include <iostream>
#include <sstream>

namespace pleat::cli {

namespace {

// The rows' text, one per line.
void rows_text(const RationalMatrix& matrix, std::ostringstream& out) {
  for (std::size_t r = 0; r < matrix.rows(); ++r) {
    for (std::size_t c = 0; c < matrix.cols(); ++c) out << (c ? "," : "") << format_rational(matrix(r, c));
    out << "\n";
  }
}

// Why a run was not certified, as its files' first lines say it.
std::string not_certified_why(const FunctionalDimensionResult& result) {
  return result.stop_reason == StopReason::none ? "its bounds do not meet"
                                                : "stopped: " + to_string(result.stop_reason);
}

// The file's text after a first line "# LINE" when line is not empty; stderr
// says the line too (the file read as a complete run's).
void commit_with_first_line(StagedFile& file, const std::string& line) {
  file.commit(line.empty() ? line : "# " + line + "\n");
  if (!line.empty()) std::cerr << "pleat: " << file.path() << ": " << line << "\n";
}

void write_with_first_line(const std::string& path, const std::string& line, const std::string& text) {
  write_output(path, line.empty() ? text : "# " + line + "\n" + text);
  if (!line.empty()) std::cerr << "pleat: " << path << ": " << line << "\n";
}

// The first line of a run not certified (stopped, or its bounds apart).
std::string not_certified_line(const FunctionalDimensionResult& result, bool stopped_in_batch) {
  const std::string why = not_certified_why(result);
  if (stopped_in_batch)
    return "partial: the run was not certified (" + why +
           " in the --points batch stage, before the walk); no region was walked, so no rows: the batch's "
           "proved bounds are in the output, not here";
  return "partial: the run was not certified (" + why + "); the exact rows of the " +
         std::to_string(result.regions_contributing) + " regions that contributed before it ended, of rank " +
         std::to_string(result.lower_bound) + ", the proved lower bound";
}

}  // namespace

void write_matrix(const std::string& path, const RationalMatrix& matrix) {
  std::ostringstream out;
  rows_text(matrix, out);
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

bool RowsOut::add(const RationalMatrix& region_rows) {
  if (!file_) return false;
  std::ostringstream text;
  rows_text(region_rows, text);
  const auto drop = [this](const std::exception& error) {
    failure_ = error.what();
    file_.reset();  // its temporary file removed now: the disk may be full
  };
  try {
    file_->write(text.view());
  } catch (const output_error& error) {
    drop(error);
  } catch (const input_error& error) {
    // Its temporary file could not be made at the first write: certify
    // tried the path before the run, but its directory may have gone since.
    drop(error);
  }
  return file_.has_value();
}

bool RowsOut::finish(const FunctionalDimensionResult& result, bool stopped_in_batch) {
  if (!file_) throw output_error(failure_ + "; no rows file written (the printed result stands)");
  std::string line;
  if (result.rows_interrupted)
    line = "partial: interrupted while the rows were formed; the exact rows of the first " +
           std::to_string(result.rows_regions) + " of the " + std::to_string(result.regions_contributing) +
           " regions that contributed (the printed value or bounds stand)";
  else if (!result.certified)
    line = not_certified_line(result, stopped_in_batch);
  commit_with_first_line(*file_, line);
  return result.rows_interrupted;
}

void write_witnesses(const std::string& path, const FunctionalDimensionResult& result, bool stopped_in_batch) {
  std::string line;
  if (!result.certified && stopped_in_batch)
    line = "partial: the run was not certified (stopped: " + to_string(result.stop_reason) +
           " in the --points batch stage, before the walk); no points were drawn, so none follow: the batch's "
           "proved bounds are in the output, not here";
  else if (!result.certified)
    line = "partial: the run was not certified (" + not_certified_why(result) + "); the " +
           std::to_string(result.witness_points.size()) +
           " points whose regions' rows raised the rank before it ended, to " + std::to_string(result.lower_bound) +
           ", the proved lower bound, not the functional dimension";
  const std::string comment = "witness points: exact, strictly inside the domain, one per region whose rows raised the rank";
  write_with_first_line(path, line, points_text(result.witness_points, comment));
}

}  // namespace pleat::cli
