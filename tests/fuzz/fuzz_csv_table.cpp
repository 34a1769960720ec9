// libFuzzer target: the RFC 4180 reader under the survey and detection tables,
// and its number checks on every field. Expected: a table or InputError.
#include "csv_table.hpp"
#include "cullcast/base/error.hpp"
#include "fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace cullcast::reefs;
  try {
    const csv::Table t = csv::parse(std::string(cullcast_fuzz::as_text(data, size)), "fuzz.csv");
    for (const auto& name : t.header) (void)t.column(name);
    for (const auto& row : t.rows) {
      for (int c = 0; c < static_cast<int>(row.fields.size()); ++c) {
        (void)t.where(row, c);
        try {
          (void)t.non_negative(row, c, "a value");
        } catch (const cullcast::InputError& e) {
          cullcast_fuzz::expected(e);
        }
        try {
          (void)t.number_in(row, c, -90, 90, "a latitude");
        } catch (const cullcast::InputError& e) {
          cullcast_fuzz::expected(e);
        }
      }
    }
    (void)t.require_column("reef_id");
  } catch (const cullcast::InputError& e) {
    cullcast_fuzz::expected(e);
  }
  return 0;
}
