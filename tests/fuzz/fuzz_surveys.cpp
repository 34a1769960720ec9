// libFuzzer target: survey tables (reefs/surveys.hpp) against three invented
// reefs, and the densities under each missing-survey policy.
// Expected: a table or InputError.
#include "cullcast/base/error.hpp"
#include "cullcast/reefs/surveys.hpp"
#include "fuzz_support.hpp"

namespace {

cullcast::reefs::ReefSet three_reefs() {
  std::vector<cullcast::reefs::Reef> reefs(3);
  const char* ids[] = {"LR-01", "LR-02", "Kestrel Shoal"};
  for (int i = 0; i < 3; ++i) {
    reefs[i].id = ids[i];
    reefs[i].name = ids[i];
    reefs[i].area_ha = 10.0 * (i + 1);
  }
  return cullcast::reefs::ReefSet(std::move(reefs));
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace cullcast::reefs;
  static const ReefSet reefs = three_reefs();
  try {
    const SurveyTable table =
        load_surveys(cullcast_fuzz::scratch_file(cullcast_fuzz::as_text(data, size), ".csv"), reefs);
    for (const char* policy : {"zero", "regional_mean", "refuse"}) {
      try {
        (void)reef_densities(reefs, table, policy);
      } catch (const cullcast::InputError& e) {
        cullcast_fuzz::expected(e);
      }
    }
  } catch (const cullcast::InputError& e) {
    cullcast_fuzz::expected(e);
  }
  return 0;
}
