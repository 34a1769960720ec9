#pragma once
// Outputs are never half-written: write to a temporary file beside the target,
// then rename over it. If the writer is destroyed without commit(), the
// temporary file is removed and the target is left as it was.
#include <filesystem>
#include <fstream>

namespace cullcast {

class AtomicFile {
 public:
  explicit AtomicFile(std::filesystem::path target);
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;
  AtomicFile(AtomicFile&&) = delete;
  AtomicFile& operator=(AtomicFile&&) = delete;
  ~AtomicFile() noexcept;

  // Path to write to (for libraries that open files themselves, e.g. NetCDF, GDAL).
  const std::filesystem::path& temp_path() const { return temp_; }
  const std::filesystem::path& target() const { return target_; }
  // Text stream on the temporary file (opened on first use).
  std::ofstream& stream();
  // Flush, close and rename onto the target. Throws std::runtime_error on failure.
  void commit();

 private:
  std::filesystem::path target_;
  std::filesystem::path temp_;
  std::ofstream stream_;
  bool committed_ = false;
};

// Removes temporary files in `dir` left by AtomicFile writers whose process is
// gone (a run killed while writing); files of live processes are kept.
// Returns how many were removed.
std::size_t remove_stale_temporaries(const std::filesystem::path& dir);

// Convenience: write a whole text file atomically.
void write_text_atomically(const std::filesystem::path& target, const std::string& text);

}  // namespace cullcast
