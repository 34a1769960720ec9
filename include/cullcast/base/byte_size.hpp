#pragma once
// Sizes in bytes as people write them: "2GiB", "512 MiB", "1.5G", "800MB",
// "4096". Binary prefixes Ki, Mi, Gi, Ti are powers of 1024 (IEC 80000-13:2008);
// decimal prefixes k/K, M, G, T are powers of 1000 (SI). A trailing "B" is
// optional; case is ignored except that "b" alone is bytes.
#include <cstdint>
#include <string>
#include <string_view>

namespace cullcast {

// Throws std::invalid_argument naming the text and what was expected, for an
// empty, negative, non-finite, unknown-unit or out-of-range (>= 2^63) value.
std::uint64_t parse_byte_size(std::string_view text);

// "1.50 GiB", "512 MiB", "900 B": three significant digits, binary units.
std::string format_bytes(std::uint64_t bytes);

}  // namespace cullcast
