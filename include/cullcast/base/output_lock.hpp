#pragma once
// One run at a time per output folder. The lock is a small text file
// `.cullcast.lock` in the folder naming its holder (process id, host, start
// time). A second run is refused while the holder lives; a lock whose holder
// is gone (same host, no such process, or the process id now belongs to a
// process started later) is stale: it is reported and replaced. A lock from
// another host cannot be checked and is always honoured.
#include <filesystem>
#include <string>

namespace cullcast {

struct LockHolder {
  long pid = 0;                // process id
  std::string host;            // host name (gethostname)
  std::string started;         // UTC wall time the lock was taken, ISO 8601 (for people)
  long long proc_start = -1;   // process start, clock ticks after boot (/proc/<pid>/stat field 22); -1 unknown
  std::string command;         // what the holder runs, e.g. "disperse"
};

class OutputLock {
 public:
  static constexpr const char* kFileName = ".cullcast.lock";

  // Creates `dir` if needed and takes its lock. Throws OutputBusyError naming
  // the folder, the holder's pid and host when another live run holds it, and
  // std::runtime_error when the lock file cannot be written. When a stale
  // lock was replaced, stale_note() describes it (for a warning).
  static OutputLock acquire(const std::filesystem::path& dir, const std::string& command);

  OutputLock(OutputLock&& other) noexcept;
  OutputLock& operator=(OutputLock&&) = delete;
  OutputLock(const OutputLock&) = delete;
  OutputLock& operator=(const OutputLock&) = delete;
  ~OutputLock() noexcept;  // removes the lock file if it is still ours

  const std::filesystem::path& file() const { return file_; }
  const std::string& stale_note() const { return stale_note_; }

  // The holder written in a lock file; pid 0 when it is missing or unreadable.
  static LockHolder read_holder(const std::filesystem::path& lock_file);
  // Whether that holder still runs (true when it cannot be told: other host).
  static bool holder_alive(const LockHolder& holder);
  // The calling process as a holder.
  static LockHolder self(const std::string& command);

 private:
  OutputLock(std::filesystem::path file, std::string stale_note)
      : file_(std::move(file)), stale_note_(std::move(stale_note)) {}
  std::filesystem::path file_;  // empty after a move
  std::string stale_note_;
};

}  // namespace cullcast
