#include "cullcast/base/system_resources.hpp"

#include <sched.h>
#include <sys/statvfs.h>
#include <sys/sysinfo.h>

#include <algorithm>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <string>
#include <system_error>
#include <thread>
#include <utility>
#include <vector>

namespace cullcast {
namespace {

// A number from a cgroup file, or max() for "max" / a missing file.
std::uint64_t cgroup_value(const std::filesystem::path& file) {
  std::ifstream in(file);
  std::string text;
  if (!(in >> text) || text == "max") return std::numeric_limits<std::uint64_t>::max();
  return std::strtoull(text.c_str(), nullptr, 10);
}

// Memory limit and usage files of this process's cgroup: v2 ("0::/path" in
// /proc/self/cgroup, memory.max/current) or v1 ("N:memory:/path",
// memory.limit_in_bytes/usage_in_bytes); a v1 hierarchy mounted at its own
// root inside a container is tried too.
std::vector<std::pair<std::filesystem::path, std::filesystem::path>> cgroup_files() {
  std::vector<std::pair<std::filesystem::path, std::filesystem::path>> out;
  const std::filesystem::path root("/sys/fs/cgroup");
  std::ifstream in("/proc/self/cgroup");
  for (std::string line; std::getline(in, line);) {
    if (line.rfind("0::/", 0) == 0) {
      const auto dir = root / line.substr(4);
      out.emplace_back(dir / "memory.max", dir / "memory.current");
    }
    const std::size_t at = line.find(":memory:/");
    if (at != std::string::npos) {
      const auto dir = root / "memory" / line.substr(at + 9);
      out.emplace_back(dir / "memory.limit_in_bytes", dir / "memory.usage_in_bytes");
      out.emplace_back(root / "memory" / "memory.limit_in_bytes", root / "memory" / "memory.usage_in_bytes");
    }
  }
  return out;
}

}  // namespace

std::uint64_t available_memory_bytes() {
  std::uint64_t available = 0;
  std::ifstream meminfo("/proc/meminfo");
  for (std::string key; meminfo >> key;) {
    if (key == "MemAvailable:") {
      std::uint64_t kib = 0;
      meminfo >> kib;
      available = kib * 1024;
      break;
    }
    meminfo.ignore(std::numeric_limits<std::streamsize>::max(), '\n');
  }
  if (available == 0) {
    struct sysinfo info {};
    if (::sysinfo(&info) == 0) available = (info.freeram + info.bufferram) * static_cast<std::uint64_t>(info.mem_unit);
  }
  for (const auto& [limit_file, usage_file] : cgroup_files()) {
    const std::uint64_t limit = cgroup_value(limit_file);
    if (limit >= (std::uint64_t{1} << 62)) continue;  // "max", missing, or v1's "unlimited" (about 2^63)
    std::uint64_t used = cgroup_value(usage_file);
    if (used == std::numeric_limits<std::uint64_t>::max()) used = 0;  // usage unreadable: the limit alone
    available = std::min(available, used >= limit ? 0 : limit - used);
    break;
  }
  return available;
}

std::uint64_t available_disk_bytes(const std::filesystem::path& path) {
  std::filesystem::path p = std::filesystem::absolute(path);
  std::error_code error;
  while (!std::filesystem::exists(p, error) && p.has_parent_path() && p != p.parent_path()) p = p.parent_path();
  struct statvfs fs {};
  if (::statvfs(p.c_str(), &fs) != 0) return std::numeric_limits<std::uint64_t>::max();  // cannot tell: do not refuse
  return static_cast<std::uint64_t>(fs.f_bavail) * static_cast<std::uint64_t>(fs.f_frsize);
}

unsigned usable_cpus() {
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof set, &set) == 0) {
    const int n = CPU_COUNT(&set);
    if (n > 0) return static_cast<unsigned>(n);
  }
  return std::max(1u, std::thread::hardware_concurrency());
}

}  // namespace cullcast
