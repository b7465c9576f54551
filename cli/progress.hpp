// A one-line progress display on standard error, only when it is a terminal.
#pragma once

#include <string>
#include <type_traits>

namespace pleat::cli {

class ProgressLine {
 public:
  explicit ProgressLine(bool is_quiet);
  ~ProgressLine();
  bool is_shown() const { return shown_; }
  // Replaces the current line (rate-limited to about 5 updates a second).
  void update(const std::string& text);
  // The same with the text made only when it is shown: for callbacks run
  // per region or per chunk, which under --quiet, or between two updates,
  // then build no text.
  template <typename MakeText>
    requires std::is_invocable_r_v<std::string, MakeText>
  void update(MakeText&& make_text) {
    if (is_due()) show(make_text());
  }
  // Clears the line so that later output starts clean.
  void finish();

 private:
  bool is_due() const;
  void show(const std::string& text);

  bool shown_ = false;
  bool dirty_ = false;
  double last_ = -1;
};

}  // namespace pleat::cli
