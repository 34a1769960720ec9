#pragma once
// What the machine has left, for refusing a study that cannot fit before it
// starts (drift/resource_estimate.hpp).
#include <cstdint>
#include <filesystem>

namespace cullcast {

// Memory a new allocation can use without swapping, bytes: MemAvailable from
// /proc/meminfo (proc(5)), else free + buffer RAM from sysinfo(2); lowered to
// the room left under a cgroup v2 limit (memory.max - memory.current) when
// the process runs in one.
std::uint64_t available_memory_bytes();

// Bytes an unprivileged user can still write on the file system holding
// `path` (statvfs(3): f_bavail * f_frsize); the nearest existing parent is
// asked when `path` does not exist yet.
std::uint64_t available_disk_bytes(const std::filesystem::path& path);

// Processors this process may run on (its affinity mask, sched_getaffinity(2);
// a rank bound to one core by its launcher sees 1), at least 1.
unsigned usable_cpus();

}  // namespace cullcast
