#include "cli/formats/line_input.hpp"

#include "core/rational.hpp"  // input_error

#include <cerrno>
#include <cstring>
#include <filesystem>

namespace pleat::cli {

std::string byte_size_text(std::uintmax_t bytes) {
  if (bytes >= (std::uintmax_t{1} << 30) && bytes % (std::uintmax_t{1} << 30) == 0)
    return std::to_string(bytes >> 30) + " GiB";
  if (bytes >= (std::uintmax_t{1} << 20) && bytes % (std::uintmax_t{1} << 20) == 0)
    return std::to_string(bytes >> 20) + " MiB";
  if (bytes >= 1024 && bytes % 1024 == 0) return std::to_string(bytes >> 10) + " KiB";
  return std::to_string(bytes) + " bytes";
}

LineInput::LineInput(const std::string& path, std::string kind, std::size_t max_line_bytes)
    : path_(path), kind_(std::move(kind)), max_line_bytes_(max_line_bytes) {
  if (path == "-") {
    file_ = stdin;
    path_ = "<stdin>";
    return;
  }
  std::error_code error;
  if (std::filesystem::is_directory(path, error))
    throw input_error(path + ": is a directory, not a " + kind_);
  file_ = std::fopen(path.c_str(), "rb");
  if (!file_) throw input_error(path + ": cannot open (" + std::strerror(errno) + ")");
  owns_file_ = true;
}

LineInput::~LineInput() {
  if (owns_file_) std::fclose(file_);
}

bool LineInput::refill() {
  begin_ = 0;
  end_ = std::fread(buffer_, 1, sizeof buffer_, file_);
  if (end_ == 0 && std::ferror(file_)) throw input_error(path_ + ": cannot read (" + std::strerror(errno) + ")");
  return end_ > 0;
}

bool LineInput::at_end() { return begin_ == end_ && !refill(); }

// Copies whole chunks up to the next newline, checking each for NUL bytes and
// the line cap before it is kept.
bool LineInput::next(std::string& line) {
  line.clear();
  last_had_newline_ = false;
  if (begin_ == end_ && !refill()) return false;
  ++line_number_;
  while (true) {
    const char* chunk = buffer_ + begin_;
    const std::size_t available = end_ - begin_;
    const char* newline = static_cast<const char*>(std::memchr(chunk, '\n', available));
    const std::size_t length = newline ? static_cast<std::size_t>(newline - chunk) : available;
    if (const void* nul = std::memchr(chunk, '\0', length))
      throw input_error(path_ + ": line " + std::to_string(line_number_) + ": a NUL byte (byte " +
                        std::to_string(bytes_read_ + static_cast<std::size_t>(static_cast<const char*>(nul) - chunk) + 1) +
                        " of the file): not a " + kind_);
    if (line.size() + length > max_line_bytes_)
      throw input_error(path_ + ": line " + std::to_string(line_number_) + " is longer than " +
                        byte_size_text(max_line_bytes_) + ", the limit for one line of a " + kind_);
    line.append(chunk, length);
    bytes_read_ += length;
    begin_ += length;
    if (newline) {
      ++begin_;
      ++bytes_read_;
      last_had_newline_ = true;
      break;
    }
    if (!refill()) break;
  }
  if (!line.empty() && line.back() == '\r') line.pop_back();
  return true;
}

}  // namespace pleat::cli
