#pragma once
// Progress of a long single command on a terminal: a bar with an ETA on standard error,
// shown only when standard error is a terminal and the work has run for two seconds
// (short runs stay quiet), redrawn at most five times a second. The environment variable
// STIPPLE_PROGRESS_DELAY (seconds) changes the two seconds; the tests set it to 0.

#include <chrono>
#include <cstddef>
#include <functional>
#include <string>

namespace stipple::cli {

class TerminalProgress {
 public:
  explicit TerminalProgress(std::string label);
  ~TerminalProgress();
  TerminalProgress(const TerminalProgress&) = delete;
  TerminalProgress& operator=(const TerminalProgress&) = delete;
  /// The callback to give the library: (done, total). Empty when standard error is not a terminal.
  [[nodiscard]] std::function<void(std::size_t, std::size_t)> callback();

 private:
  void update(std::size_t done, std::size_t total);
  std::string label_;
  bool terminal_ = false;
  double delay_s_ = 2.0;
  bool shown_ = false;
  std::chrono::steady_clock::time_point start_;
  std::chrono::steady_clock::time_point last_;
};

/// "1:05": minutes and seconds.
[[nodiscard]] std::string clock_text(double seconds);

}  // namespace stipple::cli
