#pragma once
// Error kinds shared by every module. Each kind maps to one documented exit
// code of the program (see docs/exit-codes.md); messages carry operation,
// object and cause, e.g. "cannot read variable 'u' in currents/day03.nc: ...".
#include <stdexcept>
#include <string>

namespace cullcast {

enum class ExitCode : int {
  ok = 0,
  runtime_failure = 1,  // a stage failed for a reason other than its input
  usage = 2,            // the command line is wrong
  bad_input = 3,        // a scenario, currents, reef or survey file is wrong
  not_built = 4,        // the stage exists in the interface but is not built yet
  interrupted = 5,      // stopped by a signal; outputs left untouched
  busy = 6,             // the output folder is in use by another run
};

// A problem with something the user gave us: a file, a field, a value.
class InputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// A stage that the command line offers but this version does not implement.
class NotBuiltError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// The output folder is locked by another live run (base/output_lock.hpp).
class OutputBusyError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// The study needs more memory or disk than there is (or than --max-memory
// allows); refused before the work starts. Exit code 1 (runtime failure).
class ResourceError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace cullcast
