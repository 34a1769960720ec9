// libFuzzer target: the scenario loader, text and --set overrides.
// Input: scenario TOML, optionally followed by a line "----" and one
// override ("section.key=value") per line. Expected: a Study or InputError.
#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"
#include "fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  cullcast::study::LoadOptions options;
  options.check_files = false;  // no globbing or file checks: the text alone is under test
  const std::string text(cullcast_fuzz::split_off_lines(cullcast_fuzz::as_text(data, size),
                                                        options.overrides));
  try {
    (void)cullcast::study::load_study_text(text, "fuzz/scenario.toml", options);
  } catch (const cullcast::InputError& e) {
    cullcast_fuzz::expected(e);
  }
  return 0;
}
