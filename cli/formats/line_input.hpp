// Reading a text file one line at a time, never holding more than one line:
// region, points and survey files may be large, and a file that is not text
// at all (a directory, NUL bytes, one endless line) must fail at once rather
// than after reading it whole.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <string>

namespace pleat::cli {

class LineInput {
 public:
  // Opens `path` ("-" is standard input). Throws input_error naming the path
  // when it is a directory or cannot be opened. `kind` names the file in
  // messages ("region file"); `max_line_bytes` caps one line.
  LineInput(const std::string& path, std::string kind, std::size_t max_line_bytes);
  ~LineInput();
  LineInput(const LineInput&) = delete;
  LineInput& operator=(const LineInput&) = delete;

  // The next line without its '\n' (and without a '\r' before it); false at
  // the end of the file. Throws input_error naming the path and line for a
  // NUL byte, a line longer than the cap, or a read error.
  bool next(std::string& line);
  // True when no byte follows the line last returned.
  bool at_end();
  std::size_t line_number() const { return line_number_; }  // of the line last returned
  bool last_had_newline() const { return last_had_newline_; }
  std::uintmax_t bytes_read() const { return bytes_read_; }  // through the line last returned
  const std::string& path() const { return path_; }

 private:
  bool refill();  // false at the end of the file
  std::string path_;
  std::string kind_;
  std::size_t max_line_bytes_;
  std::FILE* file_ = nullptr;
  bool owns_file_ = false;
  char buffer_[1 << 16];
  std::size_t begin_ = 0, end_ = 0;
  std::size_t line_number_ = 0;
  bool last_had_newline_ = false;
  std::uintmax_t bytes_read_ = 0;
};

// "64 MiB" for messages.
std::string byte_size_text(std::uintmax_t bytes);

}  // namespace pleat::cli
