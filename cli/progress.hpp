// A one-line progress display on standard error, only when it is a terminal.
#pragma once

#include <string>

namespace pleat::cli {

class ProgressLine {
 public:
  explicit ProgressLine(bool is_quiet);
  ~ProgressLine();
  bool is_shown() const { return shown_; }
  // Replaces the current line (rate-limited to about 5 updates a second).
  void update(const std::string& text);
  // Clears the line so that later output starts clean.
  void finish();

 private:
  bool shown_ = false;
  bool dirty_ = false;
  double last_ = -1;
};

}  // namespace pleat::cli
