// certify's matrix files, one exact row per line, comma-separated.
#pragma once

#include "cli/formats/output_file.hpp"
#include "core/matrix.hpp"
#include "enumerate/functional_dimension.hpp"

#include <optional>
#include <string>

namespace pleat::cli {

// The matrix, one row per line, entries comma-separated.
void write_matrix(const std::string& path, const RationalMatrix& matrix);

// A file not written this run: says why on stderr, and when PATH holds an
// earlier run's file, that the file there is that run's (not overwritten).
void say_not_written(const std::string& what, const std::string& path, const std::string& why);

// --kernel-out: the kernel basis of a certified value; nothing for bounds
// (said on stderr): a file would read as a kernel that was never proved.
void write_kernel(const std::string& path, const FunctionalDimensionResult& result);

// --rows-out: the exact rows of the regions that contributed, written as
// certify forms them (FunctionalDimensionOptions::on_region_rows: add), each
// region's text at once, to a temporary file put in place by finish
// (StagedFile), so that memory holds one region's rows, not the file. Of a
// run not certified (stopped, or its bounds apart) they are those found
// before it ended, of rank the proved lower bound: the file's first line
// says so (a comment, "# partial: ..."), and so does stderr (the file read
// as a complete run's). stopped_in_batch: certify --points stopped in its
// batch stage, before the walk; the line says that no region was walked
// instead. A Ctrl-C while the rows were formed (result.rows_interrupted;
// polled between regions, unless a Ctrl-C stopped the run: then its rows are
// written whole, as documented) leaves the rows of the regions done before
// it, under a line that says so, whether or not the value was certified;
// then finish returns true (the command exits 130). A write that fails while
// the run goes on (a full disk) does not end the run: the temporary file is
// removed at once, add returns false from then on (no more rows are formed),
// the run's value is still printed, and finish throws that output_error
// (exit 1); call it after the result is printed.
class RowsOut {
 public:
  explicit RowsOut(const std::string& path) : file_(std::in_place, path) {}
  // Returns false once the file is dropped (a write failed): certify then
  // forms no more rows (FunctionalDimensionOptions::on_region_rows).
  bool add(const RationalMatrix& region_rows);
  bool finish(const FunctionalDimensionResult& result, bool stopped_in_batch = false);

 private:
  std::optional<StagedFile> file_;  // empty once a write failed
  std::string failure_;             // that write's output_error
};

// --witness-out: the exact points whose regions' rows raised the rank (a
// points file: re-check with --points). Of a run not certified they prove
// only the lower bound: a first line "# partial: ..." says so, and stderr
// the same (the file read as a certified run's evidence); stopped_in_batch as
// for write_rows (no points then).
void write_witnesses(const std::string& path, const FunctionalDimensionResult& result, bool stopped_in_batch = false);

}  // namespace pleat::cli
