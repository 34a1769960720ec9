// Plain-words explanations of a cull plan: the sentence on a recommended
// reef that is itself a priority reef says how many of its larvae resettle
// on it, or that none were seen doing so (never "0.0e+00 of its larvae").
#include <catch2/catch.hpp>

#include "cull_test_support.hpp"
#include "cullcast/cull/explanation.hpp"
#include "cullcast/cull/optimiser.hpp"
#include "cullcast/network/connectivity_matrix.hpp"
#include "cullcast/network/link_ensemble.hpp"

using namespace cullcast;
using namespace cullcast::cull;

TEST_CASE("explanations: a priority reef among the cull sites, with and without self-recruitment") {
  int with_self = 0, without_self = 0;
  for (std::uint32_t seed = 1; seed <= 12; ++seed) {
    const auto in = test::random_instance(seed, 6, 2);
    study::CullSettings s;
    s.effort_step_days = 0.5;
    s.max_days_per_reef = 1.5;
    s.efficiency_ha_per_day = 30;
    const CullModel m = build_model(in.connectivity, in.reefs, in.adults, in.eggs, s);
    const PlanResult plan = optimise(m, 50.0, -1, "exact");  // enough for every site
    const Robustness rob = assess_plan(m, plan, 50.0);
    std::vector<network::SparseMatrix> reef_p;
    for (std::size_t e = 0; e < in.connectivity.events.size(); ++e) {
      reef_p.push_back(network::reef_probability(in.connectivity, e));
    }
    for (const Explanation& ex : explain(m, rob, network::mean_matrix(reef_p))) {
      CHECK_THAT(ex.text, !Catch::Contains("0.0e+00"));
      if (ex.text.find("It is itself a priority reef") == std::string::npos) continue;
      if (ex.text.find("of its larvae resettle on it") != std::string::npos) ++with_self;
      if (ex.text.find("none of its larvae were seen resettling on it") != std::string::npos) ++without_self;
    }
  }
  CHECK(with_self > 0);  // the random instances hold both cases
  CHECK(without_self > 0);
}
