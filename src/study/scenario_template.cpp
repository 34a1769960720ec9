#include "cullcast/study/load_study.hpp"

namespace cullcast::study {

std::string scenario_template() {
  return R"(# cullcast scenario: one file describes a whole study.
# Relative paths are read from this file's folder. Every key: docs/scenario.md
# Outputs are decision support with stated uncertainty; field work follows
# local dive-safety codes, permits and licensed practice.

[study]
name = "My study"
seed = 42                        # all randomness derives from this

[currents]
files = ["currents/*.nc"]        # CF-NetCDF, globs allowed, ordered by time
# u_variable = "u"               # only for files without CF standard names
# v_variable = "v"

[reefs]
layer = "reefs.geojson"          # any GDAL vector source, any CRS
id = "id"                        # attribute holding a unique reef id
name = "name"                    # optional display name
priority = "priority"            # optional protection weight 0..1
# surveys = "surveys.csv"        # adult density per hectare, per reef id
# settle_buffer_m = 0.0          # larvae this close to a reef may settle on it

[[spawning]]                     # one block per spawning event
label = "first night"
start = "2026-12-08T20:00:00Z"   # ISO 8601, UTC or with an offset
hours = 2.0                      # release spread evenly over this window; 0 = all at start
larvae_per_reef = 1000           # simulated particles per source reef

[larvae]
precompetent_days = 14.0         # no settlement before this age
competent_days = 29.0            # settlement window after that; older larvae die
mortality_per_day = 0.1          # constant rate; 0 = none

[motion]
dt_minutes = 10.0                # integration time step
kh_m2_s = 0.0                    # horizontal eddy diffusivity; 0 = none
scheme = "rk4"                   # rk4 | rk2 | euler

[outputs]
dir = "out"

# Uncomment to rank cull sites (`cullcast prioritise`; `run` then chains it):
# [cull]
# vessel_days = 10.0             # budget: culling effort plus travel
# home_lon = 150.2               # home port (travel counts in the budget)
# home_lat = -20.2
# priority_threshold = 0.6       # reefs above this priority are protected
)";
}

}  // namespace cullcast::study
