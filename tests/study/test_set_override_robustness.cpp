// --set block numbers (study/set_override.hpp) take digits only. std::stoul
// alone read "2x" as block 2 and "-1" as a huge number, so a typo silently
// changed another block.
#include <catch2/catch.hpp>

#include "cullcast/base/error.hpp"
#include "cullcast/study/load_study.hpp"

using cullcast::InputError;
using cullcast::study::LoadOptions;
using cullcast::study::load_study_text;
using Catch::Matchers::Contains;

TEST_CASE("a --set block number must be digits only") {
  const std::string text = R"([currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-08T20:00:00Z"
[[spawning]]
start = "2026-12-10T20:00:00Z"
)";
  LoadOptions o;
  o.check_files = false;
  o.overrides = {"spawning.2.hours=3"};
  CHECK(load_study_text(text, "s.toml", o).spawning[1].hours == 3.0);
  for (const char* bad : {"spawning.2x.hours=3", "spawning.-1.hours=3", "spawning. 2.hours=3", "spawning.+2.hours=3"}) {
    INFO(bad);
    o.overrides = {bad};
    CHECK_THROWS_WITH(load_study_text(text, "s.toml", o), Contains("is not a block number"));
  }
}
