#include "progress.hpp"

#include <cmath>
#include <cstdlib>
#include <iostream>
#include <sstream>

#include <unistd.h>

namespace stipple::cli {

std::string clock_text(double seconds) {
  const long s = std::lround(seconds);
  std::ostringstream out;
  out << s / 60 << ":" << (s % 60 < 10 ? "0" : "") << s % 60;
  return out.str();
}

namespace {

double delay_from_environment() {
  const char* text = std::getenv("STIPPLE_PROGRESS_DELAY");
  if (text == nullptr) return 2.0;
  char* end = nullptr;
  const double value = std::strtod(text, &end);
  return end != text && *end == '\0' && value >= 0.0 ? value : 2.0;
}

}  // namespace

TerminalProgress::TerminalProgress(std::string label)
    : label_(std::move(label)),
      terminal_(::isatty(STDERR_FILENO) != 0),
      delay_s_(delay_from_environment()),
      start_(std::chrono::steady_clock::now()),
      last_(start_) {}

TerminalProgress::~TerminalProgress() {
  if (shown_) std::cerr << "\r" << std::string(label_.size() + 60, ' ') << "\r" << std::flush;
}

std::function<void(std::size_t, std::size_t)> TerminalProgress::callback() {
  if (!terminal_) return {};
  return [this](std::size_t done, std::size_t total) { update(done, total); };
}

void TerminalProgress::update(std::size_t done, std::size_t total) {
  const auto now = std::chrono::steady_clock::now();
  const double elapsed = std::chrono::duration<double>(now - start_).count();
  if (elapsed < delay_s_ || (done < total && now - last_ < std::chrono::milliseconds(200))) return;
  last_ = now;
  shown_ = true;
  const double eta = done > 0 ? elapsed / static_cast<double>(done) * static_cast<double>(total - done) : 0.0;
  const std::size_t width = 30;
  const std::size_t filled = total > 0 ? width * done / total : width;
  std::cerr << "\r" << label_ << " [" << std::string(filled, '#') << std::string(width - filled, ' ') << "] " << done
            << "/" << total << ", ETA " << clock_text(eta) << "   " << std::flush;
}

}  // namespace stipple::cli
