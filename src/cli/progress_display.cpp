#include "progress_display.hpp"

#include <cmath>
#include <cstdio>
#include <ostream>

namespace cullcast::cli {

std::string with_thousands(std::uint64_t value) {
  std::string digits = std::to_string(value), out;
  for (std::size_t i = 0; i < digits.size(); ++i) {
    if (i > 0 && (digits.size() - i) % 3 == 0) out += ',';
    out += digits[i];
  }
  return out;
}

std::string format_duration(double seconds) {
  if (!std::isfinite(seconds) || seconds < 0) return "--:--";
  const long s = std::lround(seconds);
  char buffer[32];
  if (s >= 3600) {
    std::snprintf(buffer, sizeof buffer, "%ld:%02ld:%02ld", s / 3600, (s / 60) % 60, s % 60);
  } else {
    std::snprintf(buffer, sizeof buffer, "%ld:%02ld", s / 60, s % 60);
  }
  return buffer;
}

ProgressDisplay::~ProgressDisplay() { finish(); }

void ProgressDisplay::operator()(const drift::DriftProgress& p) {
  if (!enabled_) return;
  const double done = (p.event_index + p.event_fraction) / std::max<std::size_t>(1, p.event_count);
  const double eta = done > 0 ? p.elapsed_s * (1 - done) / done : -1;
  constexpr int kWidth = 20;
  const int filled = static_cast<int>(p.event_fraction * kWidth);
  std::string bar(filled, '#');
  bar += std::string(kWidth - filled, '.');
  const std::string when = format_iso8601(calendar_.to_civil(p.model_time_s)).substr(0, 16);
  char speed[32];
  std::snprintf(speed, sizeof speed, "%.1f M steps/s", p.particle_steps_per_s / 1e6);
  err_ << "\r\033[K" << "event " << p.event_index + 1 << '/' << p.event_count << " [" << bar
       << "] " << when << "  alive " << with_thousands(p.alive) << "  settled "
       << with_thousands(p.settled) << "  " << speed << "  ETA " << format_duration(eta)
       << std::flush;
  drawn_ = true;
}

void ProgressDisplay::finish() {
  if (drawn_) err_ << "\r\033[K" << std::flush;
  drawn_ = false;
}

}  // namespace cullcast::cli
