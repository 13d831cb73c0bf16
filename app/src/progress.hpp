#pragma once
// A progress line on stderr for long runs: shown only when stderr is a terminal and the run has
// lasted more than a second; erased when the run ends.

#include <fmt/core.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <string>

namespace fxmimo::cli {

class progress_line {
 public:
  explicit progress_line(std::string what) : what_(std::move(what)), start_(clock::now()), tty_(isatty(2) != 0) {}
  progress_line(const progress_line&) = delete;
  progress_line& operator=(const progress_line&) = delete;
  ~progress_line() {
    if (shown_) fmt::print(stderr, "\r{:<78}\r", "");
  }

  void update(std::size_t done, std::size_t total) {
    if (!tty_) return;
    const double elapsed = std::chrono::duration<double>(clock::now() - start_).count();
    if (elapsed < 1.0 && done < total) return;
    const double rate = elapsed > 0 ? static_cast<double>(done) / elapsed : 0.0;
    const double left = rate > 0 ? static_cast<double>(total - done) / rate : 0.0;
    fmt::print(stderr, "\r{} {}/{}  {:.1f}/s  {:.0f} s left   ", what_, done, total, rate, left);
    std::fflush(stderr);
    shown_ = true;
  }

 private:
  using clock = std::chrono::steady_clock;
  std::string what_;
  clock::time_point start_;
  bool tty_;
  bool shown_ = false;
};

/// A one-line status on stderr (only when it is a terminal), overwritten by the next one;
/// show_status("") clears it.
inline void show_status(const std::string& text) {
  if (isatty(2) != 0) fmt::print(stderr, "\r{:<60}\r", text);
}

}  // namespace fxmimo::cli
