#include "cullcast/base/atomic_file.hpp"

#include <atomic>
#include <stdexcept>
#include <system_error>
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
