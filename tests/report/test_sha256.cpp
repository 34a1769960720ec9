#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <string>

#include "cullcast/base/error.hpp"
#include "cullcast/report/sha256.hpp"
#include "report_test_support.hpp"

using cullcast::report::sha256_file;
using cullcast::report::sha256_hex;

// Example vectors: NIST FIPS 180-4 (2015), "Secure Hash Standard", with the
// worked examples of NIST's "SHA256.pdf" (Cryptographic Standards and
// Guidelines, examples with intermediate values): one-block "abc" and two-block
// 448-bit message. Digests from memory of that document, and cross-checked
// below against Debian's coreutils `sha256sum`.
TEST_CASE("SHA-256 of the FIPS 180-4 example messages") {
  CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  CHECK(sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  // One million 'a' (long message, many blocks): from memory of the same examples.
  CHECK(sha256_hex(std::string(1000000, 'a')) == "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}

TEST_CASE("SHA-256 of files agrees with coreutils sha256sum at block-boundary lengths") {
  const auto dir = std::filesystem::temp_directory_path() / ("cullcast-sha-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  for (std::size_t len : {55u, 56u, 63u, 64u, 65u, 119u, 120u, 200000u}) {
    const auto f = dir / ("m" + std::to_string(len));
    {
      std::ofstream out(f, std::ios::binary);
      for (std::size_t i = 0; i < len; ++i) out.put(static_cast<char>((i * 131 + 7) % 256));
    }
    const std::string ref = report_test::run_capture("sha256sum " + f.string()).substr(0, 64);
    CAPTURE(len);
    CHECK(sha256_file(f) == ref);
  }
  std::filesystem::remove_all(dir);
  CHECK_THROWS_AS(sha256_file(dir / "missing"), cullcast::InputError);
}
