#pragma once
// The validated settings of one study, one struct per stage. Produced by
// load_study() from a scenario file (TOML); read by every stage; never
// written by them. Units are SI unless the field name says otherwise.
#include <cstdint>
#include <filesystem>
#include <limits>
#include <string>
#include <vector>

#include "cullcast/base/civil_time.hpp"

namespace cullcast::study {

struct StudySettings {
  std::string name;            // free text shown in outputs
  std::string description;     // free text shown in the briefing
  std::uint64_t seed = 1;      // every random number derives from this
};

struct CurrentsSettings {
  std::vector<std::string> patterns;          // as written in the scenario (globs allowed)
  std::vector<std::filesystem::path> files;   // expanded, absolute, sorted by name, unique
  // Variable names; empty = discover by CF standard_name (CF-1.13 §3.3).
  std::string u_variable;            // eastward_sea_water_velocity
  std::string v_variable;            // northward_sea_water_velocity
  std::string w_variable;            // upward_sea_water_velocity (optional)
  std::string temperature_variable;  // sea_water_temperature (optional)
  std::string chlorophyll_variable;  // mass_concentration_of_chlorophyll_a_in_sea_water (optional)
  std::string calendar;              // overrides a missing/odd time:calendar; empty = from file
  int frames_ahead = 1;              // frames read ahead of the simulation clock
};

struct ReefSettings {
  std::filesystem::path layer;        // any GDAL vector source
  std::string layer_name;             // layer inside the source; empty = first layer
  std::string id_field = "id";        // unique reef id
  std::string name_field;             // optional display name
  std::string priority_field;         // optional protection weight 0..1
  bool repair_geometry = false;       // repair invalid polygons instead of refusing them
  double settle_buffer_m = 0.0;       // larvae within this distance of a reef may settle on it
  std::filesystem::path surveys;      // optional survey CSV
  std::string missing_survey = "zero";  // zero | regional_mean | refuse
  std::filesystem::path aggregations; // optional CSV of point detections
  double cluster_distance_m = 200.0;  // detections closer than this form one aggregation
  double attach_tolerance_m = 1000.0; // an aggregation off-reef attaches to the nearest reef within this
  std::string placement = "uniform";  // uniform | lattice: where larvae start inside a reef
};

struct SpawningEvent {
  std::string label;          // e.g. "2026 December night 1"; default "event N"
  CivilTime start;            // UTC, interpreted in the currents' calendar
  double hours = 0.0;         // release spread evenly over this window; 0 = all at start
  int larvae_per_reef = 1000; // simulated particles per source
  double depth_m = 0.0;       // release depth below the surface, metres (positive down)
};

struct LarvaeSettings {
  double precompetent_days = 14.0;  // no settlement before this age
  double competent_days = 29.0;     // settlement window after that; older larvae die
  std::string mortality = "constant";  // constant | weibull
  double mortality_per_day = 0.1;   // constant hazard, per day
  double weibull_shape = 1.0;       // Weibull hazard shape k (dimensionless)
  double weibull_scale_days = 10.0; // Weibull scale lambda, days
  std::string mortality_as = "weight";  // weight (decay) | random (death draws)
  double settle_rate_per_day = std::numeric_limits<double>::infinity();  // inf = settle on first reef
  // Environment (docs/methods.md "Temperature and food"); "auto" = on when the
  // currents carry the field, "off" = ignored.
  std::string temperature_effect = "auto";  // auto | off
  double reference_temperature_c = 28.0;    // precompetent/competent days hold at this temperature, deg C
  double development_q10 = 5.95;            // development-rate factor per +10 deg C (dimensionless)
  std::string food_effect = "auto";         // auto | off
  double food_saturation_mg_m3 = 3.0;       // chlorophyll above which food no longer helps, mg m-3 (= ug/L)
  double food_odds_per_doubling = 8.0;      // odds of completing development per doubling of chlorophyll
  double completion_at_saturation = 0.9;    // chance of completing development at saturating food (0..1)
};

// One row of an age-dependent depth band (ontogenetic migration); linear between rows.
struct DepthStage {
  double age_days = 0;   // larval age, days
  double top_m = 0;      // shallowest preferred depth, metres positive down
  double bottom_m = 0;   // deepest preferred depth, metres positive down
};

struct MotionSettings {
  double dt_minutes = 10.0;      // integration step
  double kh_m2_s = 0.0;          // horizontal eddy diffusivity; 0 = none
  std::string scheme = "rk4";    // rk4 | rk2 | euler
  std::string earth = "sphere";  // sphere | wgs84 (metres <-> degrees)
  double earth_radius_m = 6371000.0;  // sphere radius when earth = "sphere"
  std::string land = "hold";     // hold (undo the step) | strand (particle stops): a step ending on land
  // Depth behaviour (docs/methods.md "Depth").
  std::string depth = "fixed";   // fixed | band | 3d
  double band_top_m = 0.0;       // band: shallowest depth, metres positive down
  double band_bottom_m = 10.0;   // band: deepest depth, metres positive down
  double kv_m2_s = 0.0;          // vertical eddy diffusivity when not read from a field, m2 s-1
  std::vector<DepthStage> depth_by_age;  // optional band by age; empty = none
  double swim_m_s = 0.001;       // vertical swimming speed towards the band, m s-1
  // Varying diffusivity (docs/methods.md "Diffusion").
  std::string kh_from = "constant";  // constant (kh_m2_s) | field | smagorinsky
  std::string kv_from = "constant";  // constant (kv_m2_s) | field
  std::filesystem::path diffusivity_file;  // NetCDF holding Kh/Kv; empty = the first currents file
  std::string kh_variable;       // empty = by standard_name ocean_tracer_xy_laplacian_diffusivity
  std::string kv_variable;       // empty = by standard_name ocean_vertical_tracer_diffusivity
  double smagorinsky_c = 0.1;    // Smagorinsky coefficient (dimensionless)
};

struct TrackSettings {
  bool enabled = false;          // write tracks.nc
  int every_particle = 100;      // keep every k-th particle of each source
  int every_steps = 6;           // one sample every m steps
};

struct BackwardSettings {
  std::string sink;              // reef id whose arrivals are traced back; empty = no backward run
  CivilTime arrival;             // UTC, when the larvae reach the sink
  double hours = 0.0;            // arrivals spread over this window
  int larvae = 1000;             // particles released on the sink
  double depth_m = 0.0;          // release depth, metres positive down
};

struct OutputSettings {
  std::filesystem::path dir = "out";  // resolved against the scenario's folder
  bool settlement_csv = false;        // also write settlement records as CSV
};

struct ConnectivitySettings {
  // Links with probability below this are left out of the graph metrics
  // (degree, betweenness, components, reach); dimensionless, 0..1.
  double min_probability = 1e-3;
  // Particle-count warning: a link of probability min_probability should be
  // estimated with at most this relative standard error (dimensionless).
  double target_relative_error = 0.5;
  double confidence = 0.95;                      // level of the Wilson intervals
  std::vector<double> quantiles = {0.05, 0.5, 0.95};  // ensemble quantiles per link, 0..1
  int generations = 3;                           // k of the k-generation reach (P^k)
  // Larvae a settler produces over its life, scaled to settlers (recruits per
  // recruit before dispersal): scales the persistence matrix. An assumption.
  double lifetime_reproduction = 1.0;
  std::string larval_output = "adults";          // adults (surveys) | equal: weights of the realised matrix
  std::vector<std::string> attribute;            // sink reef / aggregation ids for source attribution
};

// Cull prioritisation (stage `prioritise`); methods and sources of every
// default in docs/methods.md, "Cull prioritisation".
struct CullSettings {
  bool present = false;              // the scenario has a [cull] section (`run` chains the stage)
  // Budget and effort (vessel-days: one vessel with its dive team for one working day).
  double vessel_days = 10.0;         // total budget: culling effort plus travel, vessel-days
  double effort_step_days = 0.5;     // effort is allocated in steps of this, vessel-days
  double max_days_per_reef = 5.0;    // cap of culling effort on one reef, vessel-days
  double efficiency_ha_per_day = 20.0;  // removed = 1 - exp(-effort * efficiency / area), ha per vessel-day
  // Travel from the home port and between reefs; NaN port = travel not counted.
  double home_lon = std::numeric_limits<double>::quiet_NaN();  // degrees east
  double home_lat = std::numeric_limits<double>::quiet_NaN();  // degrees north
  double speed_knots = 15.0;         // cruising speed, knots (1 knot = 1.852 km/h)
  double hours_per_day = 10.0;       // working hours in one vessel-day, hours
  // Priority reefs: weight w_j = priority of reef j when above the threshold.
  double priority_threshold = 0.0;   // dimensionless 0..1
  // Projection over seasons (one season = one year).
  int horizon_seasons = 1;           // seasons of recruitment counted (1 = this season only)
  int maturation_seasons = 2;        // settler -> spawner delay, seasons
  double juvenile_mortality_per_day = 0.078;  // early juveniles, per day
  double early_juvenile_days = 30.0;          // days the early-juvenile rate applies
  double later_juvenile_survival_per_year = 0.5;  // survival after that until maturity, per year
  double adult_survival_per_year = 0.8;       // adults not culled, per year
  // Larval output.
  double female_fraction = 0.5;              // share of adults that are female
  double eggs_per_female = 33.5e6;           // eggs per female per season at reference_diameter_cm
  double reference_diameter_cm = 39.2;       // diameter of that female, cm
  double fecundity_exponent = 3.0;           // eggs proportional to diameter^exponent
  double default_diameter_cm = 39.2;         // adults' diameter when the survey has no sizes, cm
  double open_class_width_cm = 10.0;         // width assumed for an open size class ("25cm_plus"), cm
  double fertilisation_peak = 0.86;          // fertilisation at zero distance between spawners (0..1)
  double fertilisation_scale_m = 46.9;       // e-folding distance of fertilisation, metres
  double aggregation_density_per_ha = 1000.0;  // spawner density inside an aggregation, per hectare
  // Optimisation.
  std::string method = "auto";       // auto | exact | greedy
  int exact_max_reefs = 14;          // exact with travel: at most this many candidate reefs
  double exact_max_plans = 2.0e5;    // exact with horizon > 1: at most this many effort plans
};

struct Study {
  std::filesystem::path scenario_file;  // absolute
  std::filesystem::path base_dir;       // folder that relative paths resolve against
  StudySettings study;
  CurrentsSettings currents;
  ReefSettings reefs;
  std::vector<SpawningEvent> spawning;
  LarvaeSettings larvae;
  MotionSettings motion;
  OutputSettings outputs;
  ConnectivitySettings connectivity;
  TrackSettings tracks;
  BackwardSettings backward;
  CullSettings cull;
  std::vector<std::string> overrides;   // --set items applied, for provenance
};

}  // namespace cullcast::study
