#pragma once
// One-line progress on a terminal (stderr), redrawn in place; silent when
// stderr is not a terminal or under --quiet.
#include <chrono>
#include <iosfwd>
#include <string>

#include "cullcast/currents/calendar.hpp"
#include "cullcast/drift/drift_run.hpp"

namespace cullcast::cli {

class ProgressDisplay {
 public:
  ProgressDisplay(std::ostream& err, bool enabled, currents::Calendar calendar)
      : err_(err), enabled_(enabled), calendar_(calendar) {}
  ~ProgressDisplay();
  void operator()(const drift::DriftProgress& p);
  void finish();  // clears the line

 private:
  std::ostream& err_;
  bool enabled_;
  currents::Calendar calendar_;
  bool drawn_ = false;
};

std::string with_thousands(std::uint64_t value);
std::string format_duration(double seconds);

}  // namespace cullcast::cli
