#include "cullcast/study/load_study.hpp"

#include <glob.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <set>
#include <sstream>

#include "cullcast/base/error.hpp"
#include "cullcast/base/suggest.hpp"
#include "section_reader.hpp"
#include "set_override.hpp"

namespace cullcast::study {
namespace fs = std::filesystem;
namespace {

const std::vector<std::string> kSections = {"study",  "currents", "reefs",   "spawning",
                                            "larvae", "motion",   "outputs", "connectivity",
                                            "tracks", "backward", "cull",
                                            "sweep",  "variant"};  // the last two: sweep_plan.cpp

struct Context {
  std::string file;  // as shown in messages
  fs::path base_dir;
  bool check_files = true;
};

const toml::table* section_table(const toml::table& root, const std::string& name,
                                 const Context& ctx) {
  const toml::node* n = root.get(name);
  if (n == nullptr) return nullptr;
  if (!n->is_table()) {
    throw InputError(location_text(ctx.file, n->source()) + ": [" + name +
                     "] expected a table, found " + describe_node(*n));
  }
  return n->as_table();
}

fs::path resolve(const Context& ctx, const std::string& path) {
  fs::path p(path);
  if (p.is_relative()) p = ctx.base_dir / p;
  return p.lexically_normal();
}

fs::path existing_file(SectionReader& r, const Context& ctx, const std::string& key,
                       const std::string& value) {
  fs::path p = resolve(ctx, value);
  std::error_code error;
  if (ctx.check_files && !fs::exists(p, error)) r.fail(key, "file not found: " + p.string());
  return p;
}

std::vector<fs::path> expand_patterns(SectionReader& r, const Context& ctx,
                                      const std::vector<std::string>& patterns) {
  std::set<fs::path> found;
  for (const auto& pattern : patterns) {
    const fs::path full = resolve(ctx, pattern);
    glob_t matches{};
    const int status = ::glob(full.c_str(), 0, nullptr, &matches);
    if (status == 0) {
      for (size_t i = 0; i < matches.gl_pathc; ++i) found.insert(fs::path(matches.gl_pathv[i]));
    }
    globfree(&matches);
    if (status != 0) {
      r.fail("files", "no file matches \"" + pattern + "\" (looked for " + full.string() + ")");
    }
  }
  return {found.begin(), found.end()};
}

CivilTime read_time(const toml::table& table, const std::string& key, SectionReader& r) {
  const toml::node* n = table.get(key);
  if (n != nullptr && n->is_date_time()) {
    r.mark_known(key);
    const toml::date_time dt = n->as_date_time()->get();
    std::ostringstream text;
    text << dt;
    try {
      return parse_iso8601(text.str());
    } catch (const std::invalid_argument& e) {
      r.fail(key, e.what());
    }
  }
  const std::string text = r.required_text(key);
  try {
    return parse_iso8601(text);
  } catch (const std::invalid_argument& e) {
    r.fail(key, e.what());
  }
}

StudySettings read_study(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "study", ctx.file, where);
  StudySettings s;
  s.name = r.text("name", "unnamed study");
  s.description = r.text("description", "");
  const std::int64_t seed = r.integer("seed", 1);
  if (seed < 0) r.fail("seed", "must be a whole number >= 0, found " + std::to_string(seed));
  s.seed = static_cast<std::uint64_t>(seed);
  r.finish();
  return s;
}

CurrentsSettings read_currents(const toml::table* t, const Context& ctx, toml::source_region where,
                               bool expand) {
  SectionReader r(t, "currents", ctx.file, where);
  CurrentsSettings s;
  s.patterns = r.text_list("files", true);
  s.u_variable = r.text("u_variable", "");
  s.v_variable = r.text("v_variable", "");
  s.w_variable = r.text("w_variable", "");
  s.temperature_variable = r.text("temperature_variable", "");
  s.chlorophyll_variable = r.text("chlorophyll_variable", "");
  s.calendar = r.text("calendar", "");
  if (!s.calendar.empty()) {
    r.require_one_of("calendar", s.calendar,
                     {"standard", "gregorian", "proleptic_gregorian", "julian", "noleap",
                      "365_day", "all_leap", "366_day", "360_day"});
  }
  s.frames_ahead = r.int_in("frames_ahead", 1, 0, 16, "frames");
  if (expand) s.files = expand_patterns(r, ctx, s.patterns);
  r.finish();
  return s;
}

ReefSettings read_reefs(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "reefs", ctx.file, where);
  ReefSettings s;
  s.layer = existing_file(r, ctx, "layer", r.required_text("layer"));
  s.layer_name = r.text("layer_name", "");
  s.id_field = r.text("id", "id");
  if (s.id_field.empty()) r.fail("id", "must name the attribute that holds the reef id");
  s.name_field = r.text("name", "");
  s.priority_field = r.text("priority", "");
  s.repair_geometry = r.boolean("repair_geometry", false);
  s.settle_buffer_m = r.number_in("settle_buffer_m", 0.0, 0, 50000, "metres");
  const std::string surveys = r.text("surveys", "");
  if (!surveys.empty()) s.surveys = existing_file(r, ctx, "surveys", surveys);
  s.missing_survey = r.text("missing_survey", "zero");
  r.require_one_of("missing_survey", s.missing_survey, {"zero", "regional_mean", "refuse"});
  const std::string aggregations = r.text("aggregations", "");
  if (!aggregations.empty()) s.aggregations = existing_file(r, ctx, "aggregations", aggregations);
  s.cluster_distance_m = r.number("cluster_distance_m", 200.0);
  r.require_positive("cluster_distance_m", s.cluster_distance_m, "metres");
  s.attach_tolerance_m = r.number("attach_tolerance_m", 1000.0);
  r.require_at_least("attach_tolerance_m", s.attach_tolerance_m, 0, "metres");
  s.placement = r.text("placement", "uniform");
  r.require_one_of("placement", s.placement, {"uniform", "lattice"});
  r.finish();
  return s;
}

std::vector<SpawningEvent> read_spawning(const toml::node* n, const Context& ctx,
                                         toml::source_region root_where) {
  if (n == nullptr) {
    throw InputError(location_text(ctx.file, root_where) +
                     ": missing [[spawning]]: at least one spawning event is required "
                     "(start = \"YYYY-MM-DDTHH:MM:SSZ\")");
  }
  const toml::array* events = n->as_array();
  if (events == nullptr || events->empty() || !events->is_array_of_tables()) {
    throw InputError(location_text(ctx.file, n->source()) +
                     ": [[spawning]] expected one or more tables ([[spawning]] blocks), found " +
                     describe_node(*n));
  }
  std::vector<SpawningEvent> out;
  for (size_t i = 0; i < events->size(); ++i) {
    const toml::table& t = *events->get(i)->as_table();
    const std::string section = "spawning " + std::to_string(i + 1);
    SectionReader r(&t, section, ctx.file, t.source());
    SpawningEvent e;
    e.label = r.text("label", "event " + std::to_string(i + 1));
    e.start = read_time(t, "start", r);
    e.hours = r.number_in("hours", 0.0, 0, 24 * 31, "hours");
    e.larvae_per_reef = r.int_in("larvae_per_reef", 1000, 1, 1e8, "particles per source");
    e.depth_m = r.number_in("depth_m", 0.0, 0, 11000, "metres below the surface");
    r.finish();
    out.push_back(e);
  }
  return out;
}

LarvaeSettings read_larvae(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "larvae", ctx.file, where);
  LarvaeSettings s;
  s.precompetent_days = r.number_in("precompetent_days", s.precompetent_days, 0, 365, "days");
  s.competent_days = r.number("competent_days", s.competent_days);
  r.require_positive("competent_days", s.competent_days, "days");
  r.require_range("competent_days", s.competent_days, 0, 365, "days");
  s.mortality = r.text("mortality", s.mortality);
  r.require_one_of("mortality", s.mortality, {"constant", "weibull"});
  s.mortality_per_day = r.number_in("mortality_per_day", s.mortality_per_day, 0, 100, "per day");
  s.weibull_shape = r.number("weibull_shape", s.weibull_shape);
  r.require_positive("weibull_shape", s.weibull_shape, "dimensionless");
  s.weibull_scale_days = r.number("weibull_scale_days", s.weibull_scale_days);
  r.require_positive("weibull_scale_days", s.weibull_scale_days, "days");
  s.mortality_as = r.text("mortality_as", s.mortality_as);
  r.require_one_of("mortality_as", s.mortality_as, {"weight", "random"});
  s.settle_rate_per_day = r.number("settle_rate_per_day", s.settle_rate_per_day);
  if (!(s.settle_rate_per_day > 0)) {
    r.fail("settle_rate_per_day", "must be > 0 per day (inf = settle on the first reef reached)");
  }
  s.temperature_effect = r.text("temperature_effect", s.temperature_effect);
  r.require_one_of("temperature_effect", s.temperature_effect, {"auto", "off"});
  s.reference_temperature_c =
      r.number_in("reference_temperature_c", s.reference_temperature_c, -2, 40, "deg C");
  s.development_q10 = r.number_in("development_q10", s.development_q10, 1, 20, "dimensionless");
  s.food_effect = r.text("food_effect", s.food_effect);
  r.require_one_of("food_effect", s.food_effect, {"auto", "off"});
  s.food_saturation_mg_m3 = r.number("food_saturation_mg_m3", s.food_saturation_mg_m3);
  r.require_positive("food_saturation_mg_m3", s.food_saturation_mg_m3, "mg m-3");
  s.food_odds_per_doubling =
      r.number_in("food_odds_per_doubling", s.food_odds_per_doubling, 1, 1000, "odds ratio");
  s.completion_at_saturation = r.number("completion_at_saturation", s.completion_at_saturation);
  if (!(s.completion_at_saturation > 0 && s.completion_at_saturation < 1)) {
    r.fail("completion_at_saturation",
           "must lie strictly between 0 and 1, found " + std::to_string(s.completion_at_saturation));
  }
  r.finish();
  return s;
}

MotionSettings read_motion(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "motion", ctx.file, where);
  MotionSettings s;
  s.dt_minutes = r.number("dt_minutes", s.dt_minutes);
  r.require_positive("dt_minutes", s.dt_minutes, "minutes");
  r.require_range("dt_minutes", s.dt_minutes, 0, 24 * 60, "minutes");
  s.kh_m2_s = r.number_in("kh_m2_s", s.kh_m2_s, 0, 1e5, "m2 s-1");
  s.scheme = r.text("scheme", s.scheme);
  r.require_one_of("scheme", s.scheme, {"rk4", "rk2", "euler"});
  s.earth = r.text("earth", s.earth);
  r.require_one_of("earth", s.earth, {"sphere", "wgs84"});
  s.earth_radius_m = r.number_in("earth_radius_m", s.earth_radius_m, 1e6, 1e8, "metres");
  s.land = r.text("land", s.land);
  r.require_one_of("land", s.land, {"hold", "strand"});
  s.depth = r.text("depth", s.depth);
  r.require_one_of("depth", s.depth, {"fixed", "band", "3d"});
  s.band_top_m = r.number_in("band_top_m", s.band_top_m, 0, 11000, "metres");
  s.band_bottom_m = r.number_in("band_bottom_m", s.band_bottom_m, 0, 11000, "metres");
  if (s.band_bottom_m < s.band_top_m) {
    r.fail("band_bottom_m", "must be >= band_top_m (" + std::to_string(s.band_top_m) +
                                " m), found " + std::to_string(s.band_bottom_m));
  }
  s.kv_m2_s = r.number_in("kv_m2_s", s.kv_m2_s, 0, 10, "m2 s-1");
  if (t != nullptr && t->get("depth_by_age") != nullptr) {
    const toml::node* n = t->get("depth_by_age");
    r.mark_known("depth_by_age");
    if (!n->is_array()) {
      r.fail("depth_by_age", "expected a list of [age_days, top_m, bottom_m], found " + describe_node(*n));
    }
    for (const toml::node& row : *n->as_array()) {
      const toml::array* a = row.as_array();
      std::vector<double> v;
      if (a != nullptr) {
        for (const toml::node& x : *a) {
          if (x.is_floating_point()) v.push_back(x.as_floating_point()->get());
          else if (x.is_integer()) v.push_back(static_cast<double>(x.as_integer()->get()));
        }
      }
      if (a == nullptr || a->size() != 3 || v.size() != 3) {
        r.fail("depth_by_age", "every row must be [age_days, top_m, bottom_m] (three numbers), found " +
                                   describe_node(row));
      }
      if (!(v[0] >= 0) || !(v[1] >= 0) || !(v[2] >= v[1])) {
        r.fail("depth_by_age", "row [" + std::to_string(v[0]) + ", " + std::to_string(v[1]) + ", " +
                                   std::to_string(v[2]) + "]: need age >= 0 and 0 <= top_m <= bottom_m");
      }
      if (!s.depth_by_age.empty() && !(v[0] > s.depth_by_age.back().age_days)) {
        r.fail("depth_by_age", "ages must increase from row to row, found " + std::to_string(v[0]) +
                                   " after " + std::to_string(s.depth_by_age.back().age_days));
      }
      s.depth_by_age.push_back({v[0], v[1], v[2]});
    }
  }
  s.swim_m_s = r.number_in("swim_m_s", s.swim_m_s, 0, 1, "m s-1");
  s.kh_from = r.text("kh_from", s.kh_from);
  r.require_one_of("kh_from", s.kh_from, {"constant", "field", "smagorinsky"});
  s.kv_from = r.text("kv_from", s.kv_from);
  r.require_one_of("kv_from", s.kv_from, {"constant", "field"});
  const std::string dfile = r.text("diffusivity_file", "");
  if (!dfile.empty()) s.diffusivity_file = existing_file(r, ctx, "diffusivity_file", dfile);
  s.kh_variable = r.text("kh_variable", s.kh_variable);
  s.kv_variable = r.text("kv_variable", s.kv_variable);
  s.smagorinsky_c = r.number_in("smagorinsky_c", s.smagorinsky_c, 0, 1, "dimensionless");
  r.finish();
  return s;
}

OutputSettings read_outputs(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "outputs", ctx.file, where);
  OutputSettings s;
  const std::string dir = r.text("dir", "out");
  if (dir.empty()) r.fail("dir", "must name a folder");
  s.dir = resolve(ctx, dir);
  s.settlement_csv = r.boolean("settlement_csv", false);
  r.finish();
  return s;
}

ConnectivitySettings read_connectivity(const toml::table* t, const Context& ctx,
                                       toml::source_region where) {
  SectionReader r(t, "connectivity", ctx.file, where);
  ConnectivitySettings s;
  s.min_probability = r.number_in("min_probability", s.min_probability, 0, 1, "probability");
  s.target_relative_error = r.number("target_relative_error", s.target_relative_error);
  r.require_positive("target_relative_error", s.target_relative_error, "relative standard error");
  s.confidence = r.number("confidence", s.confidence);
  if (!(s.confidence > 0 && s.confidence < 1)) {
    r.fail("confidence", "must lie strictly between 0 and 1, found " + std::to_string(s.confidence));
  }
  if (t != nullptr && t->get("quantiles") != nullptr) {
    const toml::node* n = t->get("quantiles");
    r.mark_known("quantiles");
    if (!n->is_array()) r.fail("quantiles", "expected a list of numbers, found " + describe_node(*n));
    s.quantiles.clear();
    for (const toml::node& item : *n->as_array()) {
      double q = 0;
      if (item.is_floating_point()) {
        q = item.as_floating_point()->get();
      } else if (item.is_integer()) {
        q = static_cast<double>(item.as_integer()->get());
      } else {
        r.fail("quantiles", "expected a list of numbers, found an item that is " + describe_node(item));
      }
      if (!(q >= 0 && q <= 1)) {
        r.fail("quantiles", "every quantile must lie in 0..1, found " + std::to_string(q));
      }
      s.quantiles.push_back(q);
    }
  }
  s.generations = r.int_in("generations", s.generations, 1, 100, "generations");
  s.lifetime_reproduction = r.number("lifetime_reproduction", s.lifetime_reproduction);
  r.require_positive("lifetime_reproduction", s.lifetime_reproduction, "settlers per settler");
  s.larval_output = r.text("larval_output", s.larval_output);
  r.require_one_of("larval_output", s.larval_output, {"adults", "equal"});
  s.attribute = r.text_list("attribute", false);
  r.finish();
  return s;
}

TrackSettings read_tracks(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "tracks", ctx.file, where);
  TrackSettings s;
  s.enabled = r.boolean("enabled", t != nullptr);  // a [tracks] section switches them on
  s.every_particle = r.int_in("every_particle", s.every_particle, 1, 1e9, "particles");
  s.every_steps = r.int_in("every_steps", s.every_steps, 1, 1e9, "steps");
  r.finish();
  return s;
}

BackwardSettings read_backward(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "backward", ctx.file, where);
  BackwardSettings s;
  if (t == nullptr) return s;
  s.sink = r.required_text("sink");
  s.arrival = read_time(*t, "arrival", r);
  s.hours = r.number_in("hours", s.hours, 0, 24 * 366, "hours");
  s.larvae = r.int_in("larvae", s.larvae, 1, 1e8, "particles");
  s.depth_m = r.number_in("depth_m", s.depth_m, 0, 11000, "metres");
  r.finish();
  return s;
}

CullSettings read_cull(const toml::table* t, const Context& ctx, toml::source_region where) {
  SectionReader r(t, "cull", ctx.file, where);
  CullSettings s;
  s.present = t != nullptr;
  auto positive = [&](const char* key, double& v, const char* unit) {
    v = r.number(key, v);
    r.require_positive(key, v, unit);
  };
  auto fraction = [&](const char* key, double& v) { v = r.number_in(key, v, 0, 1, "fraction"); };
  s.vessel_days = r.number_in("vessel_days", s.vessel_days, 0, 1e6, "vessel-days");
  positive("effort_step_days", s.effort_step_days, "vessel-days");
  s.max_days_per_reef =
      r.number_in("max_days_per_reef", s.max_days_per_reef, 0, 1e6, "vessel-days");
  positive("efficiency_ha_per_day", s.efficiency_ha_per_day, "ha per vessel-day");
  const bool has_lon = r.has("home_lon"), has_lat = r.has("home_lat");
  if (has_lon != has_lat) {
    r.fail(has_lon ? "home_lat" : "home_lon", "the home port needs both home_lon and home_lat");
  }
  s.home_lon = r.number("home_lon", s.home_lon);
  s.home_lat = r.number("home_lat", s.home_lat);
  if (has_lon) {
    r.require_range("home_lon", s.home_lon, -180, 180, "degrees east");
    r.require_range("home_lat", s.home_lat, -90, 90, "degrees north");
  }
  positive("speed_knots", s.speed_knots, "knots");
  s.hours_per_day = r.number_in("hours_per_day", s.hours_per_day, 1e-3, 24, "hours");
  s.priority_threshold = r.number_in("priority_threshold", s.priority_threshold, 0, 1, "priority");
  s.horizon_seasons = r.int_in("horizon_seasons", s.horizon_seasons, 1, 50, "seasons");
  s.maturation_seasons = r.int_in("maturation_seasons", s.maturation_seasons, 1, 20, "seasons");
  fraction("juvenile_mortality_per_day", s.juvenile_mortality_per_day);
  s.early_juvenile_days = r.number_in("early_juvenile_days", s.early_juvenile_days, 0,
                                      365 * s.maturation_seasons, "days");
  fraction("later_juvenile_survival_per_year", s.later_juvenile_survival_per_year);
  fraction("adult_survival_per_year", s.adult_survival_per_year);
  fraction("female_fraction", s.female_fraction);
  positive("eggs_per_female", s.eggs_per_female, "eggs per season");
  positive("reference_diameter_cm", s.reference_diameter_cm, "cm");
  s.fecundity_exponent =
      r.number_in("fecundity_exponent", s.fecundity_exponent, 0, 10, "dimensionless");
  positive("default_diameter_cm", s.default_diameter_cm, "cm");
  positive("open_class_width_cm", s.open_class_width_cm, "cm");
  fraction("fertilisation_peak", s.fertilisation_peak);
  positive("fertilisation_scale_m", s.fertilisation_scale_m, "metres");
  positive("aggregation_density_per_ha", s.aggregation_density_per_ha, "adults per hectare");
  s.method = r.text("method", s.method);
  r.require_one_of("method", s.method, {"auto", "exact", "greedy"});
  s.exact_max_reefs = r.int_in("exact_max_reefs", s.exact_max_reefs, 0, 24, "reefs");
  s.exact_max_plans = r.number_in("exact_max_plans", s.exact_max_plans, 0, 1e9, "plans");
  r.finish();
  return s;
}

void check_top_level(const toml::table& root, const Context& ctx) {
  for (auto&& [key, value] : root) {
    const std::string name(key.str());
    if (std::find(kSections.begin(), kSections.end(), name) != kSections.end()) continue;
    const std::string hint = closest_match(name, kSections);
    throw InputError(location_text(ctx.file, key.source()) + ": unknown section [" + name + "]" +
                     (hint.empty() ? "" : " (did you mean [" + hint + "]?)") +
                     "; known sections: study, currents, reefs, spawning, larvae, motion, "
                     "outputs, connectivity, tracks, backward, cull, sweep, variant");
  }
}

}  // namespace

Study load_study_text(const std::string& text, const fs::path& source_name,
                      const LoadOptions& options) {
  Context ctx;
  ctx.file = source_name.string();
  ctx.base_dir = fs::absolute(source_name).parent_path();
  ctx.check_files = options.check_files;

  toml::table root;
  try {
    root = toml::parse(text, ctx.file);
  } catch (const toml::parse_error& e) {
    throw InputError(location_text(ctx.file, e.source()) + ": not valid TOML: " +
                     std::string(e.description()));
  }
  for (const auto& item : options.overrides) apply_override(root, item);
  check_top_level(root, ctx);

  const toml::source_region where = root.source();
  Study s;
  s.scenario_file = fs::absolute(source_name);
  s.base_dir = ctx.base_dir;
  s.overrides = options.overrides;
  s.study = read_study(section_table(root, "study", ctx), ctx, where);
  const toml::table* currents = section_table(root, "currents", ctx);
  if (currents == nullptr) {
    throw InputError(location_text(ctx.file, where) +
                     ": missing section [currents] (files = [\"currents/*.nc\"])");
  }
  s.currents = read_currents(currents, ctx, currents->source(), options.check_files);
  const toml::table* reefs = section_table(root, "reefs", ctx);
  if (reefs == nullptr) {
    throw InputError(location_text(ctx.file, where) +
                     ": missing section [reefs] (layer = \"reefs.geojson\")");
  }
  s.reefs = read_reefs(reefs, ctx, reefs->source());
  s.spawning = read_spawning(root.get("spawning"), ctx, where);
  s.larvae = read_larvae(section_table(root, "larvae", ctx), ctx, where);
  s.motion = read_motion(section_table(root, "motion", ctx), ctx, where);
  s.outputs = read_outputs(section_table(root, "outputs", ctx), ctx, where);
  s.connectivity = read_connectivity(section_table(root, "connectivity", ctx), ctx, where);
  s.tracks = read_tracks(section_table(root, "tracks", ctx), ctx, where);
  s.backward = read_backward(section_table(root, "backward", ctx), ctx, where);
  s.cull = read_cull(section_table(root, "cull", ctx), ctx, where);
  return s;
}

Study load_study(const fs::path& scenario_file, const LoadOptions& options) {
  std::ifstream in(scenario_file, std::ios::binary);
  if (!in) {
    throw InputError("cannot open scenario file " + scenario_file.string() +
                     ": no such file or not readable");
  }
  std::ostringstream text;
  text << in.rdbuf();
  return load_study_text(text.str(), scenario_file, options);
}

}  // namespace cullcast::study
