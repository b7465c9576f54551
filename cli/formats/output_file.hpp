// Files a command writes, with failures that name the file and the system's
// reason ("regions.jsonl: cannot write (No space left on device)").
//
// Opening fails with input_error (the path given is unusable: exit 2);
// writing fails with output_error (the input was fine, the result is lost:
// exit 1). Nothing here prints.
#pragma once

#include <cstdio>
#include <memory>
#include <stdexcept>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace pleat::cli {

class RemovedIfKilled;  // cli/signals.hpp

// A result could not be written (a full disk, a closed pipe, /dev/full).
struct output_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

class OutputFile {
 public:
  enum class Mode { truncate, append };
  // Opens `path`; throws input_error "NAME: cannot open for writing (REASON)".
  // Messages name `name` (default: the path).
  explicit OutputFile(const std::string& path, Mode mode = Mode::truncate, const std::string& name = "");
  ~OutputFile();  // closes; errors there are lost, so call close() to see them
  OutputFile(const OutputFile&) = delete;
  OutputFile& operator=(const OutputFile&) = delete;

  // Throws output_error "PATH: cannot write (REASON)".
  void write(std::string_view text);
  // Pushes buffered text to the system (after each line of a long run, so
  // that an interrupted run keeps what it found); throws as write.
  void flush();
  // Flushes and closes; throws as write. Idempotent.
  void close();
  const std::string& path() const { return path_; }

 private:
  [[noreturn]] void fail(int error_number);
  std::string path_;
  std::string name_;
  std::FILE* file_ = nullptr;
};

// A file this command read (its network, or `what` it is: "points file",
// "region file", ...): opening an OutputFile on it, or write_file_atomically
// over it, is refused (input_error "PATH: is the network this command read
// (INPUT); write the output elsewhere"), so that a slip like `pleat walk
// net.json -o net.json` cannot replace the network with the walk.
void note_input_file(const std::string& path, const std::string& what = "network");
// The same refusal, asked before a long run rather than when its result is written.
void refuse_overwriting_input(const std::string& path);

// Two outputs of one command on one file: the later would replace the
// earlier, and the "written" line of the earlier would be false. Throws
// input_error "OPTION: FILE is also OTHER's file; give each output its own"
// for the first such pair, before the run, and "OPTION: standard output is
// also OTHER's; ..." for two "-" (their lines would be interleaved);
// `outputs` are (option, path), empty paths left out.
void refuse_shared_outputs(const std::vector<std::pair<std::string, std::string>>& outputs);

// An output a long run writes at its end, tried before the run: a path
// whose directory is missing or not writable, a directory, or a file this
// process may not replace throws input_error "PATH: cannot open for
// writing (REASON)" now, as writing it would after the run (by then the
// run's work was done, and certify --rows-out's result was not even
// printed). Nothing is left behind (a hidden file is made and removed
// beside the path); standard output "-", a device or a pipe are not tried.
void refuse_unwritable_output(const std::string& path);

// Throws output_error when standard output cannot be written (after
// flushing it): "cannot write to standard output (No space left on device)".
// The reason is the first failed write's once keep_standard_output_errors ran.
void check_standard_output();

// Keeps the reason (errno) of the first failed write to std::cout for
// check_standard_output: a write that fails mid-run (its text past the stdio
// buffer) leaves only the stream's error flag, and errno is long gone by the
// check ("Input/output error" was said for /dev/full and a closed stdout
// alike). Call once, at the start of main; the writes still go through stdio.
void keep_standard_output_errors();

// Writes `text` to a temporary file next to `path` and renames it over
// `path`, so that a reader of `path` sees the old or the new content, never
// a truncated one, and a failed write leaves `path` as it was. The new file
// keeps the mode of the one it replaces; a file this process may not write
// is refused (input_error), as opening it in place would be.
void write_file_atomically(const std::string& path, std::string_view text);

// A file written a piece at a time and put in place whole by commit: the
// pieces go to a temporary file next to `path` (made at the first write),
// renamed over it as write_file_atomically does, when `path` is a regular
// file or does not exist yet; otherwise (standard output "-", a device, a
// pipe) they are held and written at commit. So memory holds one piece, and
// until commit `path` keeps its earlier content. commit(first_line) puts the
// line before the pieces (the temporary file is then copied after it into a
// second one). Destroyed without commit, it removes its temporary file, and
// so does a repeated Ctrl-C that ends the process (cli/signals.hpp).
class StagedFile {
 public:
  explicit StagedFile(const std::string& path);
  ~StagedFile();
  StagedFile(const StagedFile&) = delete;
  StagedFile& operator=(const StagedFile&) = delete;
  // Throws as OutputFile and write_file_atomically do.
  void write(std::string_view text);
  void commit(std::string_view first_line = {});
  const std::string& path() const { return path_; }

 private:
  std::string path_;    // as given
  std::string target_;  // the file renamed over (through links); empty: written in place at commit
  std::string held_;    // the pieces when written in place
  std::string temporary_;
  std::unique_ptr<OutputFile> file_;  // the temporary file, once made
  std::unique_ptr<RemovedIfKilled> removed_if_killed_;  // temporary_, if a repeated Ctrl-C ends the process
};

// A whole result file (a bundle, a kernel, a figure, a table, a network):
// write_file_atomically when `path` is a regular file or does not exist yet,
// so that a full disk or a kill while writing cannot leave a truncated file
// where a good one was; written in place otherwise (a device, a pipe).
void write_whole_file(const std::string& path, std::string_view text);

}  // namespace pleat::cli
