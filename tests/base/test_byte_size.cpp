// Sizes as people write them (base/byte_size.hpp). Binary prefixes are powers
// of 1024 (IEC 80000-13:2008, "Ki", "Mi", "Gi", "Ti"); decimal prefixes are
// powers of 1000 (SI Brochure, 9th ed. 2019, table 7).
#include <catch2/catch.hpp>

#include <stdexcept>

#include "cullcast/base/byte_size.hpp"

using cullcast::format_bytes;
using cullcast::parse_byte_size;

TEST_CASE("byte sizes parse with binary and decimal prefixes") {
  CHECK(parse_byte_size("4096") == 4096u);
  CHECK(parse_byte_size("4096B") == 4096u);
  CHECK(parse_byte_size("1KiB") == 1024u);
  CHECK(parse_byte_size("2GiB") == 2ull * 1024 * 1024 * 1024);
  CHECK(parse_byte_size("512 MiB") == 512ull * 1024 * 1024);
  CHECK(parse_byte_size("1.5G") == 1500000000ull);
  CHECK(parse_byte_size("800MB") == 800000000ull);
  CHECK(parse_byte_size("3t") == 3000000000000ull);
  CHECK(parse_byte_size("0.5ki") == 512u);
}

TEST_CASE("bad byte sizes are refused with the text") {
  for (const char* bad : {"", " ", "-1GiB", "GiB", "2 parsecs", "1e30", "inf", "nan", "2GiBs", "1..5G"}) {
    INFO(bad);
    CHECK_THROWS_AS(parse_byte_size(bad), std::invalid_argument);
  }
  CHECK_THROWS_WITH(parse_byte_size("2 parsecs"), Catch::Matchers::Contains("2 parsecs"));
}

TEST_CASE("byte sizes print in binary units") {
  CHECK(format_bytes(900) == "900 B");
  CHECK(format_bytes(1024) == "1.00 KiB");
  CHECK(format_bytes(1536ull * 1024 * 1024) == "1.50 GiB");
  CHECK(format_bytes(parse_byte_size("2GiB")) == "2.00 GiB");
}
