// One run per output folder (base/output_lock.hpp): live holders refused,
// stale ones (process gone, or garbled lock) replaced, other hosts honoured.
// The holders are real processes: a sleeping child (/bin/sleep) and a child
// that has exited and been reaped.
#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <string>

#include "cullcast/base/error.hpp"
#include "cullcast/base/output_lock.hpp"
#include "../support/scratch_folder.hpp"

namespace fs = std::filesystem;
using cullcast::OutputBusyError;
using cullcast::OutputLock;
using Catch::Matchers::Contains;

namespace {

// This process's scratch folders, removed when the test program ends
// (children here exec or _exit, so only this process removes it).
const cullcast::test::ScratchFolder scratch_root("lock");

fs::path scratch(const std::string& name) {
  const fs::path dir = scratch_root.dir / name;
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

void write_lock(const fs::path& dir, long pid, const std::string& host) {
  std::ofstream(dir / OutputLock::kFileName) << "pid=" << pid << "\nhost=" << host
                                             << "\nstarted=2026-12-02T01:00:00Z\ncommand=disperse\n";
}

// A child process that sleeps until killed.
struct SleepingChild {
  pid_t pid = ::fork();
  SleepingChild() {
    if (pid == 0) {
      ::execl("/bin/sleep", "sleep", "600", static_cast<char*>(nullptr));
      ::_exit(127);
    }
  }
  ~SleepingChild() {
    ::kill(pid, SIGKILL);
    ::waitpid(pid, nullptr, 0);
  }
};

// The pid of a process that has exited and been reaped: nobody holds it now
// (unless the system reuses the number within microseconds).
long gone_pid() {
  const pid_t pid = ::fork();
  if (pid == 0) ::_exit(0);
  ::waitpid(pid, nullptr, 0);
  return pid;
}

std::string this_host() { return OutputLock::self("test").host; }

}  // namespace

TEST_CASE("an output folder is locked while a run holds it and released after") {
  const fs::path dir = scratch("basic") / "out";  // created by acquire
  {
    const OutputLock lock = OutputLock::acquire(dir, "disperse");
    REQUIRE(fs::exists(dir / OutputLock::kFileName));
    CHECK(lock.stale_note().empty());
    const auto holder = OutputLock::read_holder(lock.file());
    CHECK(holder.pid == ::getpid());
    CHECK(holder.command == "disperse");
    CHECK(holder.proc_start >= 0);
    // A second run (here: this process again) is refused while the lock is held.
    CHECK_THROWS_AS(OutputLock::acquire(dir, "connect"), OutputBusyError);
  }
  CHECK_FALSE(fs::exists(dir / OutputLock::kFileName));
  CHECK_NOTHROW(OutputLock::acquire(dir, "connect"));
}

TEST_CASE("a lock held by a live process is refused with the folder and the pid") {
  const fs::path dir = scratch("live");
  SleepingChild child;
  REQUIRE(child.pid > 0);
  write_lock(dir, child.pid, this_host());
  try {
    (void)OutputLock::acquire(dir, "run");
    FAIL("the lock of a live process was taken");
  } catch (const OutputBusyError& e) {
    CHECK_THAT(e.what(), Contains(dir.string()));
    CHECK_THAT(e.what(), Contains("process " + std::to_string(child.pid)));
    CHECK_THAT(e.what(), Contains(this_host()));
  }
  // The holder's lock is left alone.
  CHECK(OutputLock::read_holder(dir / OutputLock::kFileName).pid == child.pid);
}

TEST_CASE("a lock whose process has ended is reported and replaced") {
  const fs::path dir = scratch("stale");
  const long pid = gone_pid();
  write_lock(dir, pid, this_host());
  const OutputLock lock = OutputLock::acquire(dir, "disperse");
  CHECK_THAT(lock.stale_note(), Contains("stale"));
  CHECK_THAT(lock.stale_note(), Contains("process " + std::to_string(pid)));
  CHECK(OutputLock::read_holder(lock.file()).pid == ::getpid());
}

TEST_CASE("a killed holder that is not yet reaped (zombie) counts as gone") {
  const fs::path dir = scratch("zombie");
  const pid_t pid = ::fork();
  if (pid == 0) ::_exit(0);
  // Wait until the child has exited, without reaping it.
  siginfo_t info{};
  REQUIRE(::waitid(P_PID, static_cast<id_t>(pid), &info, WEXITED | WNOWAIT) == 0);
  write_lock(dir, pid, this_host());
  CHECK_NOTHROW(OutputLock::acquire(dir, "disperse"));
  ::waitpid(pid, nullptr, 0);
}

TEST_CASE("a pid reused by a later process does not keep a lock alive") {
  const fs::path dir = scratch("reused");
  SleepingChild child;
  // The lock names the live child's pid but another process start time.
  std::ofstream(dir / OutputLock::kFileName) << "pid=" << child.pid << "\nhost=" << this_host()
                                             << "\nproc_start=1\ncommand=run\n";
  CHECK_NOTHROW(OutputLock::acquire(dir, "disperse"));
}

TEST_CASE("a lock from another host is honoured, and a garbled lock is replaced") {
  const fs::path dir = scratch("remote");
  write_lock(dir, 12345, "another-host.invalid");
  CHECK_THROWS_WITH(OutputLock::acquire(dir, "run"), Contains("another-host.invalid"));
  std::ofstream(dir / OutputLock::kFileName) << "not a lock file\n";
  const OutputLock lock = OutputLock::acquire(dir, "run");
  CHECK_THAT(lock.stale_note(), Contains("unreadable"));
}
