#include "cli/formats/output_file.hpp"

#include "cli/signals.hpp"
#include "core/rational.hpp"

#include <sys/stat.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <limits>
#include <iostream>
#include <mutex>
#include <streambuf>
#include <system_error>
#include <vector>

namespace pleat::cli {

namespace {

struct InputFile {
  std::string path;  // as given
  std::string what;  // "network", "points file", ...
};
std::mutex input_files_mutex;
std::vector<InputFile> input_files;  // note_input_file's

void refuse_overwriting(const std::string& path, const std::string& name) {
  const std::lock_guard lock(input_files_mutex);
  std::error_code error;
  for (const InputFile& input : input_files)
    if (std::filesystem::equivalent(path, input.path, error))
      throw input_error(name + ": is the " + input.what + " this command read (" + input.path +
                        "); write the output elsewhere");
}

// A regular file or nothing yet: written by rename, so that a failed or
// interrupted write leaves an earlier file whole. Anything else (a device
// such as /dev/null or /dev/full, a pipe) is written in place.
bool is_replaceable(const std::string& path) {
  std::error_code error;
  const auto status = std::filesystem::status(path, error);
  return status.type() == std::filesystem::file_type::not_found ||
         status.type() == std::filesystem::file_type::regular;
}

// The file a chain of symbolic links ends at (itself when it is none),
// existing or not.
std::string link_target(const std::string& path) {
  std::filesystem::path target(path);
  std::error_code error;
  for (int hops = 0; hops < 40 && std::filesystem::is_symlink(std::filesystem::symlink_status(target, error)); ++hops) {
    const std::filesystem::path next = std::filesystem::read_symlink(target, error);
    if (error) break;
    target = next.is_absolute() ? next : target.parent_path() / next;
  }
  return target.string();
}

// The process's umask, read without setting it: umask() sets it too, and
// another thread creating a file meanwhile would get the wrong mode.
mode_t current_umask() {
  std::ifstream status("/proc/self/status");
  std::string key;
  while (status >> key) {
    if (key == "Umask:") {
      std::string octal;
      status >> octal;
      return static_cast<mode_t>(std::strtoul(octal.c_str(), nullptr, 8));
    }
    status.ignore(std::numeric_limits<std::streamsize>::max(), '\n');
  }
  return 022;  // no /proc: the usual default
}

// The mode of the file that replaces `path`: the mode `path` has (a file its
// owner made private stays private), else a new file's (0666 less the
// umask; mkstemp's 0600 would hide it from the group). A file this process
// may not write is refused, as writing it in place was.
mode_t replacement_mode(const std::string& path) {
  struct stat existing {};
  if (stat(path.c_str(), &existing) != 0) return 0666 & ~current_umask();
  if (access(path.c_str(), W_OK) != 0)
    throw input_error(path + ": cannot open for writing (" + std::strerror(errno) + ")");
  return existing.st_mode & 0777;
}

}  // namespace

void note_input_file(const std::string& path, const std::string& what) {
  const std::lock_guard lock(input_files_mutex);
  input_files.push_back({path, what});
}

void write_whole_file(const std::string& path, std::string_view text) {
  if (is_replaceable(path)) {
    // Through a symbolic link to the file it names, as writing in place did
    // (renaming over the path would replace the link itself).
    write_file_atomically(link_target(path), text);
    return;
  }
  OutputFile file(path);
  file.write(text);
  file.close();
}

namespace {

// Whether two paths name one file, existing or not (through links and "..").
bool is_same_file(const std::string& first, const std::string& second) {
  std::error_code error;
  if (first == second || std::filesystem::equivalent(first, second, error)) return true;
  const auto first_path = std::filesystem::weakly_canonical(link_target(first), error);
  if (error) return false;
  const auto second_path = std::filesystem::weakly_canonical(link_target(second), error);
  return !error && first_path == second_path;
}

}  // namespace

void refuse_shared_outputs(const std::vector<std::pair<std::string, std::string>>& outputs) {
  for (std::size_t i = 0; i < outputs.size(); ++i)
    for (std::size_t j = 0; j < i; ++j) {
      const auto& [option, path] = outputs[i];
      const auto& [other_option, other_path] = outputs[j];
      if (path.empty() || other_path.empty()) continue;
      if (path == "-" && other_path == "-")
        throw input_error(option + ": standard output is also " + other_option + "'s; give each output its own");
      if (path == "-" || other_path == "-") continue;
      if (is_same_file(path, other_path))
        throw input_error(option + ": " + path + " is also " + other_option + "'s file; give each output its own");
    }
}

void refuse_overwriting_input(const std::string& path) {
  if (!path.empty() && path != "-") refuse_overwriting(path, path);
}

OutputFile::OutputFile(const std::string& path, Mode mode, const std::string& name)
    : path_(path), name_(name.empty() ? path : name) {
  refuse_overwriting(path, name_);
  file_ = std::fopen(path.c_str(), mode == Mode::append ? "ab" : "wb");
  if (!file_) throw input_error(name_ + ": cannot open for writing (" + std::strerror(errno) + ")");
}

OutputFile::~OutputFile() {
  if (file_) std::fclose(file_);
}

void OutputFile::fail(int error_number) {
  throw output_error(name_ + ": cannot write (" + std::strerror(error_number) + ")");
}

void OutputFile::write(std::string_view text) {
  if (!file_) throw output_error(name_ + ": write after close");
  errno = 0;
  if (std::fwrite(text.data(), 1, text.size(), file_) != text.size()) fail(errno ? errno : EIO);
}

void OutputFile::flush() {
  if (!file_) return;
  errno = 0;
  if (std::fflush(file_) != 0 || std::ferror(file_)) fail(errno ? errno : EIO);
}

void OutputFile::close() {
  if (!file_) return;
  flush();
  std::FILE* file = file_;
  file_ = nullptr;
  errno = 0;
  if (std::fclose(file) != 0) fail(errno ? errno : EIO);
}

namespace {

// Passes every write on to std::cout's own buffer (stdio's: the same
// locking, the same order with anything else written there) and notes errno
// when one fails, before later calls overwrite it.
class ErrorKeepingBuffer : public std::streambuf {
 public:
  explicit ErrorKeepingBuffer(std::streambuf* inner) : inner_(inner) {}
  int first_error() const { return first_error_.load(); }

 protected:
  int_type overflow(int_type c) override {
    if (traits_type::eq_int_type(c, traits_type::eof())) return sync() == 0 ? traits_type::not_eof(c) : c;
    const int saved = begin_write();
    const int_type result = inner_->sputc(traits_type::to_char_type(c));
    end_write(traits_type::eq_int_type(result, traits_type::eof()), saved);
    return result;
  }
  std::streamsize xsputn(const char* text, std::streamsize count) override {
    const int saved = begin_write();
    const std::streamsize written = inner_->sputn(text, count);
    end_write(written < count, saved);
    return written;
  }
  int sync() override {
    const int saved = begin_write();
    const int result = inner_->pubsync();
    end_write(result != 0, saved);
    return result;
  }

 private:
  // errno cleared for the write, so that a stale value is not taken for its
  // reason, and restored after a write that did not fail (the caller's errno kept).
  static int begin_write() {
    const int saved = errno;
    errno = 0;
    return saved;
  }
  void end_write(bool has_failed, int saved) {
    int none = 0;
    if (has_failed && errno) first_error_.compare_exchange_strong(none, errno);
    if (!has_failed) errno = saved;
  }
  std::streambuf* inner_;
  std::atomic<int> first_error_{0};
};

ErrorKeepingBuffer* standard_output_buffer = nullptr;  // keep_standard_output_errors's

}  // namespace

void keep_standard_output_errors() {
  if (standard_output_buffer) return;
  // Never destroyed: std::cout is flushed after static objects are gone.
  standard_output_buffer = new ErrorKeepingBuffer(std::cout.rdbuf());
  std::cout.rdbuf(standard_output_buffer);
}

void check_standard_output() {
  errno = 0;
  std::cout.flush();
  const bool is_stream_bad = !std::cout;
  const int stream_errno = errno;
  errno = 0;
  const bool is_stdio_bad = std::fflush(stdout) != 0 || std::ferror(stdout);
  const int kept_errno = standard_output_buffer ? standard_output_buffer->first_error() : 0;
  const int error_number = kept_errno ? kept_errno : stream_errno ? stream_errno : (errno ? errno : EIO);
  if (is_stream_bad || is_stdio_bad)
    throw output_error(std::string("cannot write to standard output (") + std::strerror(error_number) + ")");
}

namespace {

// A new empty hidden file next to `path` (".NAME.XXXXXX"), refused as
// opening `path` would be.
std::string temporary_beside(const std::string& path) {
  refuse_overwriting(path, path);
  const std::filesystem::path target(path);
  const std::filesystem::path directory = target.has_parent_path() ? target.parent_path() : ".";
  // The name built by append, not "." + string: GCC 12 warns falsely (-Wrestrict) on that form.
  std::string hidden_name(".");
  hidden_name.append(target.filename().string()).append(".XXXXXX");
  std::string temporary = (directory / hidden_name).string();
  (void)replacement_mode(path);  // a file this process may not write is refused before anything is written
  const int descriptor = mkstemp(temporary.data());
  if (descriptor < 0) throw input_error(path + ": cannot open for writing (" + std::strerror(errno) + ")");
  ::close(descriptor);
  return temporary;
}

// The written temporary file renamed over `path`, with the mode `path` had
// (or a new file's); the temporary file is removed when that fails.
void put_in_place(const std::string& temporary, const std::string& path) {
  try {
    // Once written: the mode may forbid writing (a 0444 file its owner may replace).
    if (chmod(temporary.c_str(), replacement_mode(path)) != 0)
      throw output_error(path + ": cannot set its mode (" + std::string(std::strerror(errno)) + ")");
  } catch (...) {
    std::remove(temporary.c_str());
    throw;
  }
  if (std::rename(temporary.c_str(), path.c_str()) != 0) {
    const int error_number = errno;
    std::remove(temporary.c_str());
    throw output_error(path + ": cannot replace (" + std::string(std::strerror(error_number)) + ")");
  }
}

}  // namespace

void refuse_unwritable_output(const std::string& path) {
  if (path.empty() || path == "-") return;
  std::error_code error;
  if (std::filesystem::is_directory(path, error))
    throw input_error(path + ": cannot open for writing (" + std::strerror(EISDIR) + ")");
  if (!is_replaceable(path)) return;  // a device or a pipe: written in place
  const std::string temporary = temporary_beside(link_target(path));
  const RemovedIfKilled removed_if_killed(temporary);
  std::remove(temporary.c_str());
}

void write_file_atomically(const std::string& path, std::string_view text) {
  const std::string temporary = temporary_beside(path);
  const RemovedIfKilled removed_if_killed(temporary);
  try {
    OutputFile file(temporary, OutputFile::Mode::truncate, path);
    file.write(text);
    file.close();
  } catch (...) {
    std::remove(temporary.c_str());
    throw;
  }
  put_in_place(temporary, path);
}

StagedFile::StagedFile(const std::string& path) : path_(path) {
  if (path != "-" && is_replaceable(path)) target_ = link_target(path);
}

StagedFile::~StagedFile() {
  file_.reset();
  if (!temporary_.empty()) std::remove(temporary_.c_str());
}

void StagedFile::write(std::string_view text) {
  if (target_.empty()) {
    held_.append(text);
    return;
  }
  if (!file_) {
    temporary_ = temporary_beside(target_);
    removed_if_killed_ = std::make_unique<RemovedIfKilled>(temporary_);
    file_ = std::make_unique<OutputFile>(temporary_, OutputFile::Mode::truncate, path_);
  }
  file_->write(text);
}

void StagedFile::commit(std::string_view first_line) {
  if (!file_) {  // nothing written to a temporary file: the whole text at once
    std::string text(first_line);
    text += held_;
    if (path_ == "-") {
      std::cout << text;
      check_standard_output();
    } else {
      write_whole_file(path_, text);
    }
    held_.clear();
    return;
  }
  file_->close();
  std::string written = std::move(temporary_);
  temporary_.clear();
  std::unique_ptr<RemovedIfKilled> written_if_killed = std::move(removed_if_killed_);
  try {
    if (!first_line.empty()) {
      // The line, then the pieces copied after it, into a second file.
      temporary_ = temporary_beside(target_);
      removed_if_killed_ = std::make_unique<RemovedIfKilled>(temporary_);
      OutputFile lined(temporary_, OutputFile::Mode::truncate, path_);
      lined.write(first_line);
      std::ifstream pieces(written, std::ios::binary);
      std::vector<char> buffer(std::size_t{1} << 20);
      while (pieces.read(buffer.data(), static_cast<std::streamsize>(buffer.size())) || pieces.gcount() > 0)
        lined.write(std::string_view(buffer.data(), static_cast<std::size_t>(pieces.gcount())));
      if (pieces.bad()) throw output_error(path_ + ": cannot read back its temporary file " + written);
      lined.close();
      std::remove(written.c_str());
      written = std::move(temporary_);
      temporary_.clear();
      written_if_killed = std::move(removed_if_killed_);
    }
  } catch (...) {
    std::remove(written.c_str());
    throw;
  }
  file_.reset();
  put_in_place(written, target_);
}

}  // namespace pleat::cli
