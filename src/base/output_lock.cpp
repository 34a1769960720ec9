#include "cullcast/base/output_lock.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/file.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <ctime>
#include <fstream>
#include <iterator>
#include <sstream>
#include <stdexcept>
#include <system_error>
#include <vector>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast {
namespace fs = std::filesystem;
namespace {

std::string host_name() {
  char buffer[256] = {};
  if (::gethostname(buffer, sizeof buffer - 1) != 0) return "unknown-host";
  return buffer;
}

// Start time of a process (clock ticks after boot) and whether it is a zombie,
// from /proc/<pid>/stat (proc(5): field 3 state, field 22 starttime).
struct ProcStat {
  long long start = -1;
  bool zombie = false;
};
ProcStat proc_stat(long pid) {
  std::ifstream in("/proc/" + std::to_string(pid) + "/stat");
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  const std::size_t close = text.rfind(')');  // the command name may hold spaces and parentheses
  if (close == std::string::npos) return {};
  std::istringstream fields(text.substr(close + 1));
  std::vector<std::string> f;
  for (std::string w; fields >> w;) f.push_back(w);
  ProcStat s;
  if (f.size() > 19) s.start = std::atoll(f[19].c_str());  // f[0] is field 3
  if (!f.empty()) s.zombie = f[0] == "Z" || f[0] == "X";
  return s;
}

std::string utc_now() {
  const std::time_t now = std::time(nullptr);
  std::tm tm{};
  ::gmtime_r(&now, &tm);
  char buffer[32];
  std::strftime(buffer, sizeof buffer, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buffer;
}

// Holds flock() on the folder while a lock is checked and replaced, so two
// runs that both find a stale lock cannot both take it over.
class FolderGuard {
 public:
  explicit FolderGuard(const fs::path& dir) : fd_(::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC)) {
    if (fd_ >= 0) ::flock(fd_, LOCK_EX);  // best effort: a file system without flock still gets the pid check
  }
  FolderGuard(const FolderGuard&) = delete;
  FolderGuard& operator=(const FolderGuard&) = delete;
  ~FolderGuard() noexcept {
    if (fd_ >= 0) ::close(fd_);  // closing releases the flock
  }

 private:
  int fd_;
};

std::string describe(const LockHolder& h) {
  std::string s = "process " + std::to_string(h.pid) + " on host " + h.host;
  if (!h.command.empty()) s += " (cullcast " + h.command + (h.started.empty() ? "" : ", since " + h.started) + ")";
  return s;
}

}  // namespace

LockHolder OutputLock::self(const std::string& command) {
  LockHolder h;
  h.pid = static_cast<long>(::getpid());
  h.host = host_name();
  h.started = utc_now();
  h.proc_start = proc_stat(h.pid).start;
  h.command = command;
  return h;
}

LockHolder OutputLock::read_holder(const fs::path& lock_file) {
  LockHolder h;
  std::ifstream in(lock_file);
  for (std::string line; std::getline(in, line);) {
    const std::size_t eq = line.find('=');
    if (eq == std::string::npos) continue;
    const std::string key = line.substr(0, eq), value = line.substr(eq + 1);
    if (key == "pid") h.pid = std::atol(value.c_str());
    else if (key == "host") h.host = value;
    else if (key == "started") h.started = value;
    else if (key == "proc_start") h.proc_start = std::atoll(value.c_str());
    else if (key == "command") h.command = value;
  }
  if (h.pid <= 0) h.pid = 0;
  return h;
}

bool OutputLock::holder_alive(const LockHolder& h) {
  if (h.pid <= 0) return false;                 // unreadable lock: nobody to wait for
  if (h.host != host_name()) return true;       // cannot look at another host's processes
  if (::kill(static_cast<pid_t>(h.pid), 0) != 0 && errno == ESRCH) return false;
  const ProcStat now = proc_stat(h.pid);
  if (now.zombie) return false;                 // exited, not yet reaped by its parent
  // The same pid with another start time is a later process that reused the number.
  if (h.proc_start >= 0 && now.start >= 0 && now.start != h.proc_start) return false;
  return true;
}

OutputLock OutputLock::acquire(const fs::path& dir, const std::string& command) {
  std::error_code error;
  fs::create_directories(dir, error);
  if (error) throw std::runtime_error("cannot create output folder " + dir.string() + ": " + error.message());
  const FolderGuard guard(dir);
  const fs::path file = dir / kFileName;
  std::string stale;
  if (fs::exists(file, error)) {
    const LockHolder h = read_holder(file);
    if (holder_alive(h)) {
      const bool remote = h.host != host_name();
      throw OutputBusyError(
          "output folder " + dir.string() + " is in use by another run: " + describe(h) +
          (remote ? " (another host: cannot check whether it still runs)" : "") +
          ". Wait for it to finish or set another [outputs] dir (--set outputs.dir=...); if that run is gone, "
          "delete " + file.string());
    }
    stale = "replaced a stale lock in " + dir.string() + ": " +
            (h.pid > 0 ? describe(h) + " is no longer running" : "the lock file was unreadable");
  }
  const LockHolder me = self(command);
  std::ostringstream text;
  text << "pid=" << me.pid << "\nhost=" << me.host << "\nstarted=" << me.started
       << "\nproc_start=" << me.proc_start << "\ncommand=" << me.command << "\n";
  try {
    write_text_atomically(file, text.str());
  } catch (const std::exception& e) {
    throw std::runtime_error("cannot write the lock file of output folder " + dir.string() + ": " + e.what());
  }
  return OutputLock(file, stale);
}

OutputLock::OutputLock(OutputLock&& other) noexcept
    : file_(std::move(other.file_)), stale_note_(std::move(other.stale_note_)) {
  other.file_.clear();
}

OutputLock::~OutputLock() noexcept {
  if (file_.empty()) return;
  try {
    const LockHolder h = read_holder(file_);
    if (h.pid == static_cast<long>(::getpid()) && h.host == host_name()) {
      std::error_code ignored;
      fs::remove(file_, ignored);
    }
  } catch (...) {
    // Leaving the file is safe: the next run finds this process gone and replaces it.
  }
}

}  // namespace cullcast
