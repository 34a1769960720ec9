// libFuzzer target: aggregation detections (reefs/aggregations.hpp), then
// clustering and attachment to one invented square reef.
// Expected: detections or InputError.
#include "cullcast/base/error.hpp"
#include "cullcast/reefs/aggregations.hpp"
#include "cullcast/reefs/reef_geometry.hpp"
#include "fuzz_support.hpp"

namespace {

cullcast::reefs::ReefSet one_reef() {
  cullcast::reefs::Reef r;
  r.id = "LR-01";
  r.name = "Lantern Shoal";
  r.parts.push_back({{{150.0, -20.0}, {150.1, -20.0}, {150.1, -19.9}, {150.0, -19.9}, {150.0, -20.0}}, {}});
  cullcast::reefs::compute_metrics(r);
  return cullcast::reefs::ReefSet({r});
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace cullcast::reefs;
  static const ReefSet reefs = one_reef();
  try {
    const auto detections =
        load_detections(cullcast_fuzz::scratch_file(cullcast_fuzz::as_text(data, size), ".csv"));
    (void)cluster_detections(detections, reefs, 200.0, 1000.0);
  } catch (const cullcast::InputError& e) {
    cullcast_fuzz::expected(e);
  }
  return 0;
}
