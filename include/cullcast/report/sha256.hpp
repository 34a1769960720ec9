#pragma once
// SHA-256 message digest, FIPS 180-4 (NIST, 2015), "Secure Hash Standard",
// section 6.2. Used for the provenance checksums of the briefing's inputs.
#include <array>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>

namespace cullcast::report {

class Sha256 {
 public:
  Sha256();
  void update(const void* data, std::size_t bytes);
  std::array<std::uint8_t, 32> finish();  // the object must not be updated afterwards

 private:
  void block(const std::uint8_t* p);
  std::array<std::uint32_t, 8> h_;
  std::array<std::uint8_t, 64> buf_{};
  std::size_t buffered_ = 0;
  std::uint64_t total_bytes_ = 0;
};

// Lower-case hexadecimal digest of a byte string.
std::string sha256_hex(std::string_view bytes);
// Digest of a file's contents, read in blocks. Throws InputError when unreadable.
std::string sha256_file(const std::filesystem::path& file);

}  // namespace cullcast::report
