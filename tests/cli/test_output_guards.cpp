// The program's guards before any work: the output-folder lock (exit code 6
// while another live run holds it; a stale lock is reported and replaced) and
// the memory refusal (--max-memory; exit code 1), as documented in
// docs/exit-codes.md. Real program runs on real files: synthetic CF-NetCDF
// currents and a GeoJSON reef layer read through GDAL.
#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "cullcast/base/output_lock.hpp"
#include "cullcast/currents/synthetic_currents.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;

namespace {

struct Study {
  fs::path dir = fs::temp_directory_path() / ("cullcast-guards-" + std::to_string(::getpid()));
  fs::path out = dir / "out";
  Study() {
    fs::remove_all(dir);
    cullcast::currents::SyntheticOptions o;
    o.kind = cullcast::currents::SyntheticKind::uniform;
    o.days = 2;
    o.days_per_file = 2;
    write_synthetic_currents(dir / "currents", o);
    std::ofstream(dir / "reefs.geojson") << R"({"type":"FeatureCollection","features":[
{"type":"Feature","properties":{"id":"TR-1"},"geometry":{"type":"Polygon","coordinates":[[[150.10,-20.22],[150.12,-20.22],[150.12,-20.20],[150.10,-20.20],[150.10,-20.22]]]}},
{"type":"Feature","properties":{"id":"TR-2"},"geometry":{"type":"Polygon","coordinates":[[[150.30,-20.22],[150.32,-20.22],[150.32,-20.20],[150.30,-20.20],[150.30,-20.22]]]}}]})";
    std::ofstream(dir / "s.toml") << R"([currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-01T02:00:00Z"
larvae_per_reef = 50
[larvae]
precompetent_days = 0.1
competent_days = 0.3
[outputs]
dir = "out"
)";
  }
  ~Study() {
    std::error_code ignored;
    fs::remove_all(dir, ignored);
  }
  int run(const std::string& args) const {
    const std::string cmd = std::string(CULLCAST_EXE) + " -q " + args + " " + (dir / "s.toml").string() + " >" +
                            (dir / "stdout").string() + " 2>" + (dir / "stderr").string();
    return WEXITSTATUS(std::system(cmd.c_str()));
  }
  std::string err() const {
    std::ifstream in(dir / "stderr");
    std::stringstream s;
    s << in.rdbuf();
    return s.str();
  }
  void lock_by(long pid) const {
    fs::create_directories(out);
    std::ofstream(out / cullcast::OutputLock::kFileName)
        << "pid=" << pid << "\nhost=" << cullcast::OutputLock::self("test").host << "\ncommand=run\n";
  }
};

}  // namespace

TEST_CASE("a second run on a locked output folder is refused, and a stale lock is taken over") {
  const Study s;
  const pid_t child = ::fork();
  if (child == 0) {
    ::execl("/bin/sleep", "sleep", "600", static_cast<char*>(nullptr));
    ::_exit(127);
  }
  REQUIRE(child > 0);
  s.lock_by(child);
  for (const char* command : {"disperse", "connect", "run"}) {
    INFO(command);
    CHECK(s.run(command) == 6);  // docs/exit-codes.md: output folder in use
    CHECK_THAT(s.err(), Contains("is in use by another run") && Contains(s.out.string()) &&
                            Contains("process " + std::to_string(child)));
  }
  CHECK_FALSE(fs::exists(s.out / "settlement.nc"));

  // The holder ends: its lock is stale now.
  ::kill(child, SIGKILL);
  ::waitpid(child, nullptr, 0);
  REQUIRE(s.run("disperse") == 0);
  CHECK_THAT(s.err(), Contains("stale lock") && Contains("process " + std::to_string(child)));
  CHECK(fs::exists(s.out / "settlement.nc"));
  CHECK_FALSE(fs::exists(s.out / cullcast::OutputLock::kFileName));  // released at the end
}

TEST_CASE("a drift over --max-memory is refused before it starts, and a bad size is a usage error") {
  const Study s;
  CHECK(s.run("--max-memory 1KiB disperse") == 1);
  CHECK_THAT(s.err(), Contains("--max-memory allows 1.00 KiB") && Contains("100 particles"));
  CHECK_FALSE(fs::exists(s.out / "settlement.nc"));
  CHECK((!fs::exists(s.out) || fs::is_empty(s.out)));
  CHECK(s.run("--max-memory 12parsecs disperse") == 2);
  CHECK_THAT(s.err(), Contains("12parsecs"));
  CHECK(s.run("--max-memory 0 disperse") == 2);
  CHECK(s.run("--max-memory 8GiB disperse") == 0);
}
