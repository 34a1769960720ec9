// The briefing rendered by a real headless browser (Debian's chromium). Tagged
// [browser]: CTest label "browser", skippable where Chromium is absent
// (ctest -LE browser); tools/setup.sh installs it, so CI runs it.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "report_test_support.hpp"

using namespace cullcast::report;
namespace fs = std::filesystem;

namespace {
std::string chromium(const fs::path& dir, const std::string& what, const fs::path& page) {
  const fs::path profile = dir / ("profile-" + std::to_string(fs::exists(dir / "profile-1") ? 2 : 1));
  fs::create_directories(profile);
  return "timeout 180 /usr/bin/chromium --headless --no-sandbox --disable-gpu --no-first-run "
         "--disable-background-networking --disable-component-update --disable-sync --enable-logging=stderr --v=0 "
         "--user-data-dir=" + profile.string() + " " + what + " --window-size=1280,2000 file://" + page.string();
}
}  // namespace

TEST_CASE("the briefing renders in headless Chromium, prints to PDF, without console errors", "[browser]") {
  REQUIRE(fs::exists("/usr/bin/chromium"));
  const fs::path dir = fs::temp_directory_path() / ("cullcast-brief-browser-" + std::to_string(::getpid()));
  fs::remove_all(dir);
  fs::create_directories(dir);
  write_briefing_html(dir / "briefing.html", report_test::sample_briefing());

  const std::string log = report_test::run_capture(chromium(dir, "--screenshot=" + (dir / "shot.png").string(), dir / "briefing.html"));
  REQUIRE(fs::exists(dir / "shot.png"));
  CHECK(log.find("Uncaught") == std::string::npos);
  CHECK(log.find("ERROR:CONSOLE") == std::string::npos);
  CHECK(log.find("Content Security Policy") == std::string::npos);
  // Not blank: decode the PNG (RFC 2083 / ISO 15948: IHDR, zlib IDAT, one filter
  // byte per row) with Python's standard library and count distinct colours.
  std::ofstream(dir / "colours.py") << R"(import sys, zlib, struct
data = open(sys.argv[1], 'rb').read()
assert data[:8] == b'\x89PNG\r\n\x1a\n'
pos, idat, w, h, ct = 8, b'', 0, 0, 0
while pos < len(data):
    n, t = struct.unpack('>I4s', data[pos:pos + 8]); body = data[pos + 8:pos + 8 + n]; pos += 12 + n
    if t == b'IHDR': w, h, depth, ct = struct.unpack('>IIBB', body[:10])
    if t == b'IDAT': idat += body
bpp = {2: 3, 6: 4}[ct]; raw = zlib.decompress(idat); stride = w * bpp; prev = bytearray(stride); colours = set()
for r in range(h):
    f = raw[r * (stride + 1)]; row = bytearray(raw[r * (stride + 1) + 1:(r + 1) * (stride + 1)])
    for i in range(stride):
        a = row[i - bpp] if i >= bpp else 0; b = prev[i]; c = prev[i - bpp] if i >= bpp else 0
        if f == 1: row[i] = (row[i] + a) & 255
        elif f == 2: row[i] = (row[i] + b) & 255
        elif f == 3: row[i] = (row[i] + (a + b) // 2) & 255
        elif f == 4:
            p = a + b - c; pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
            row[i] = (row[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
    prev = row
    if r % 4 == 0: colours.update(bytes(row[i:i + 3]) for i in range(0, stride, bpp * 4))
print(w, h, len(colours))
)";
  const std::string stats = report_test::run_capture("/usr/bin/python3 " + (dir / "colours.py").string() + " " + (dir / "shot.png").string());
  std::istringstream in(stats);
  int w = 0, h = 0, colours = 0;
  in >> w >> h >> colours;
  CAPTURE(stats);
  CHECK(w == 1280);
  CHECK(h == 2000);
  CHECK(colours > 50);  // text, map colours, land, links: a blank page has one or two

  report_test::run_capture(chromium(dir, "--print-to-pdf=" + (dir / "briefing.pdf").string() + " --no-pdf-header-footer", dir / "briefing.html"));
  REQUIRE(fs::exists(dir / "briefing.pdf"));
  const std::string pdf = report_test::read_all(dir / "briefing.pdf");
  CHECK(pdf.rfind("%PDF-", 0) == 0);
  std::size_t pages = 0;
  for (std::size_t p = 0; (p = pdf.find("/Type /Page", p)) != std::string::npos; ++p) pages += pdf.compare(p, 12, "/Type /Pages") != 0;
  CHECK(pages >= 3);  // sections start on new pages in print
  fs::remove_all(dir);
}
