#include "cullcast/base/atomic_file.hpp"

#include <atomic>
#include <stdexcept>
#include <system_error>
#include <csignal>
#include <cerrno>
#include <unistd.h>

namespace cullcast {
namespace {
std::filesystem::path temp_name_for(const std::filesystem::path& target) {
  static std::atomic<unsigned> counter{0};
  auto name = target.filename().string();
  return target.parent_path() / ("." + name + ".part-" + std::to_string(::getpid()) + "-" +
                                 std::to_string(counter++));
}
}  // namespace

std::size_t remove_stale_temporaries(const std::filesystem::path& dir) {
  std::size_t removed = 0;
  std::error_code ec;
  for (const auto& entry : std::filesystem::directory_iterator(dir, ec)) {
    const std::string name = entry.path().filename().string();
    const auto mark = name.rfind(".part-");
    if (name.empty() || name[0] != '.' || mark == std::string::npos) continue;
    const std::string rest = name.substr(mark + 6);  // "<pid>-<counter>"
    const auto dash = rest.find('-');
    if (dash == std::string::npos || dash == 0) continue;
    long pid = 0;
    try {
      pid = std::stol(rest.substr(0, dash));
    } catch (const std::exception&) {
      continue;
    }
    if (pid <= 0 || pid == ::getpid()) continue;
    if (::kill(static_cast<pid_t>(pid), 0) == 0 || errno != ESRCH) continue;  // alive (or not ours to judge)
    std::error_code ignored;
    if (std::filesystem::remove(entry.path(), ignored)) ++removed;
  }
  return removed;
}

AtomicFile::AtomicFile(std::filesystem::path target)
    : target_(std::move(target)), temp_(temp_name_for(target_)) {}

AtomicFile::~AtomicFile() noexcept {
  if (committed_) return;
  if (stream_.is_open()) stream_.close();
  std::error_code ignored;
  std::filesystem::remove(temp_, ignored);
}

std::ofstream& AtomicFile::stream() {
  if (!stream_.is_open()) {
    stream_.open(temp_, std::ios::binary | std::ios::trunc);
    if (!stream_) {
      throw std::runtime_error("cannot create file " + temp_.string() + " (for " +
                               target_.string() + ")");
    }
  }
  return stream_;
}

void AtomicFile::commit() {
  if (stream_.is_open()) {
    stream_.flush();
    if (!stream_) throw std::runtime_error("cannot write file " + target_.string());
    stream_.close();
  }
  std::error_code error;
  std::filesystem::rename(temp_, target_, error);
  if (error) {
    throw std::runtime_error("cannot move " + temp_.string() + " onto " + target_.string() + ": " +
                             error.message());
  }
  committed_ = true;
}

void write_text_atomically(const std::filesystem::path& target, const std::string& text) {
  AtomicFile file(target);
  file.stream() << text;
  file.commit();
}

}  // namespace cullcast
