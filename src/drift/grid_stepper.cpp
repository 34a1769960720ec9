#include "cullcast/drift/grid_stepper.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <exception>
#include <string>
#include <utility>

#include "cullcast/base/error.hpp"
#include "cullcast/drift/development_step.hpp"
#include "grid_lanes.hpp"

namespace cullcast::drift {
namespace {

using lanes::kLanes;
using lanes::kRad;

// The kernel for each instruction set. `flatten` inlines everything it calls
// (the random numbers included), so each copy is compiled for its own target.
[[gnu::flatten]] void advance_baseline(const lanes::Grid& g, const lanes::StepPlan& plan, lanes::Batch& b) noexcept {
  lanes::advance<4>(g, plan, b);
}
#if defined(__x86_64__)
[[gnu::flatten, gnu::target("arch=x86-64-v3")]] void advance_avx2(const lanes::Grid& g, const lanes::StepPlan& plan,
                                                                    lanes::Batch& b) noexcept {
  lanes::advance<8>(g, plan, b);
}
[[gnu::flatten, gnu::target("arch=x86-64-v4")]] void advance_avx512(const lanes::Grid& g,
                                                                      const lanes::StepPlan& plan,
                                                                      lanes::Batch& b) noexcept {
  lanes::advance<16>(g, plan, b);
}
#endif

// Temperature and chlorophyll at the step's middle and the larvae's depth,
// from slices computed once per step (CurrentField::scalar_slice): the
// generic step's values (its fields call sample_scalar()) up to rounding.
struct SlicedScalars {
  const currents::FlowSampler& grid;
  const float* temperature;  // nullptr when off
  const float* chlorophyll;
  // Both fields at n points (NaN where a field is off): one cell search per
  // point, then each field's weighting over all points.
  void at(const double* lon, const double* lat, int n, double* temperature_c, double* chlorophyll_mg_m3) const {
    currents::CellHit hits[lanes::kLanes];
    for (int l = 0; l < n; ++l) grid.locate(lon[l], lat[l], hits[l]);
    for (const auto& [slice, out] : {std::pair{temperature, temperature_c}, std::pair{chlorophyll, chlorophyll_mg_m3}}) {
      if (slice != nullptr) {
        grid.from_scalar_slice(slice, hits, n, out);
      } else {
        for (int l = 0; l < n; ++l) out[l] = std::nan("");
      }
    }
  }
};

// How many of n fates are `which` (a loop the compiler vectorises).
std::int64_t count_of(const Fate* fate, std::int64_t n, Fate which) noexcept {
  std::int64_t count = 0;
  for (std::int64_t i = 0; i < n; ++i) count += fate[i] == which ? 1 : 0;
  return count;
}

// A batch's inputs from the particles `idx` (kLanes, spare lanes repeating
// lane 0): positions; stream ids when the kernel is to draw walk deviates
// (`ids`); the kept deviates (pairs in `walk_next`) when b.walk_cached.
// `run`: the particles are neighbours in the array, so contiguous copies
// (vector loads) fetch the same values as the indexed loops.
void load_batch(const ParticleSet& p, const float* walk_next, const std::int64_t* idx, bool run, bool ids,
                lanes::Batch& b) noexcept {
  if (run) {
    const std::int64_t first = idx[0];
    std::copy_n(p.lon.data() + first, kLanes, b.lon0);
    std::copy_n(p.lat.data() + first, kLanes, b.lat0);
    if (ids) {
      std::copy_n(p.source.data() + first, kLanes, b.source);
      std::copy_n(p.index.data() + first, kLanes, b.particle);
    }
    if (b.walk_cached) {
      const float* __restrict pairs = walk_next + 2 * first;
      for (int l = 0; l < kLanes; ++l) b.walk0[l] = pairs[2 * l], b.walk1[l] = pairs[2 * l + 1];
    }
    return;
  }
  for (int l = 0; l < kLanes; ++l) b.lon0[l] = p.lon[idx[l]], b.lat0[l] = p.lat[idx[l]];
  if (ids) {
    for (int l = 0; l < kLanes; ++l) b.source[l] = p.source[idx[l]], b.particle[l] = p.index[idx[l]];
  }
  if (b.walk_cached) {
    for (int l = 0; l < kLanes; ++l) b.walk0[l] = walk_next[2 * idx[l]], b.walk1[l] = walk_next[2 * idx[l] + 1];
  }
}

// The next (odd) step's walk deviates the kernel left in the batch, kept
// for its m particles `idx` (contiguously when `run`).
void keep_deviates(const lanes::Batch& b, const std::int64_t* idx, int m, bool run, float* walk_next) noexcept {
  if (run) {
    float* __restrict pairs = walk_next + 2 * idx[0];
    for (int l = 0; l < kLanes; ++l) pairs[2 * l] = b.walk0[l], pairs[2 * l + 1] = b.walk1[l];
    return;
  }
  for (int l = 0; l < m; ++l) walk_next[2 * idx[l]] = b.walk0[l], walk_next[2 * idx[l] + 1] = b.walk1[l];
}

// A reef look-up over open water.
struct OpenWater {
  int reef_at(double, double) const noexcept { return -1; }
};

// Whether end_step() is sure to leave every lane of a batch drifting or dead
// of old age: each ended in water (neither on land nor off the grid) where
// no reef can take it: no reef near its node, or not competent at the
// step's end (`age1` the lanes' ages then, with no temperature or food
// effects; the test is LarvalClock::competent's complement, written with
// `|` so the loop vectorises). A vector test over the whole batch: most
// batches pass it.
bool plain_ends(const lanes::Batch& b, const double* age1, const LarvalClock& clock) noexcept {
  const double settle_from = clock.precompetent_s(), settle_to = clock.max_age_s();
  unsigned other = 0;
  for (int l = 0; l < kLanes; ++l) {
    const bool open = b.where[l] == lanes::kWater;
    const bool near_but_unable = (b.where[l] == lanes::kNearReef) & ((age1[l] < settle_from) | (age1[l] > settle_to));
    other |= static_cast<unsigned>(!(open | near_but_unable));
  }
  return other == 0;
}

// The largest of `so_far` and a batch's values, NaN ignored: eight running
// maxima updated lane-wise (vector selects) instead of one long chain of
// dependent comparisons. Maxima are exact: the same value either way.
double batch_max(const double* value, double so_far) noexcept {
  constexpr int kRunning = 8;
  double running[kRunning];
  for (double& r : running) r = so_far;
  for (int l = 0; l < kLanes; l += kRunning) {
    for (int k = 0; k < kRunning; ++k) running[k] = value[l + k] > running[k] ? value[l + k] : running[k];
  }
  for (double r : running) so_far = r > so_far ? r : so_far;
  return so_far;
}

// end_step() for such a batch under weight mortality with a constant hazard
// (`survive` for every lane): the same outcome as lane-by-lane calls, in
// loops free of branches. `idx`: the batch's m particles; `run`: they are
// neighbours in the array (contiguous loads and stores, vector loops).
// Returns the larvae that died of old age.
std::uint64_t end_plain(ParticleSet& p, const std::int64_t* idx, int m, bool run, const lanes::Batch& b,
                        const double* age1, double survive, double max_age_s) noexcept {
  std::uint64_t old = 0;
  if (run) {
    const std::int64_t first = idx[0];
    std::copy_n(b.lon, kLanes, p.lon.data() + first);
    std::copy_n(b.lat, kLanes, p.lat.data() + first);
    double* __restrict weight = p.weight.data() + first;
    Fate* __restrict fate = p.fate.data() + first;
    for (int l = 0; l < kLanes; ++l) {
      weight[l] *= survive;
      old += age1[l] >= max_age_s ? 1u : 0u;
    }
    // Fates change only when some die (rarely): no stores otherwise.
    if (old != 0) {
      for (int l = 0; l < kLanes; ++l) fate[l] = age1[l] >= max_age_s ? Fate::died : Fate::drifting;
    }
    return old;
  }
  for (int l = 0; l < m; ++l) {
    const std::int64_t i = idx[l];
    p.lon[i] = b.lon[l];
    p.lat[i] = b.lat[l];
    p.weight[i] *= survive;
    const bool dies = age1[l] >= max_age_s;
    p.fate[i] = dies ? Fate::died : Fate::drifting;
    old += dies ? 1u : 0u;
  }
  return old;
}

using AdvanceFn = void (*)(const lanes::Grid&, const lanes::StepPlan&, lanes::Batch&) noexcept;

AdvanceFn kernel_for(VectorIsa isa) {
  switch (isa) {
#if defined(__x86_64__)
    case VectorIsa::avx512: return advance_avx512;
    case VectorIsa::avx2: return advance_avx2;
#endif
    default: return advance_baseline;
  }
}

}  // namespace

bool GridStepper::applies(const currents::CurrentField& field, const ParticleSet& particles) {
  const currents::FlowSampler& s = field.sampler();
  if (s.curvilinear || !s.lon_uniform || !s.lat_uniform || s.nx < 2 || s.ny < 2) return false;
  if (s.inv_dlat <= 0.0 || 1.0 / s.inv_dlat > 2.0) return false;
  if (2.0 * static_cast<double>(s.nx) * static_cast<double>(s.ny) >= 2147483647.0) return false;  // 32-bit lane indices
  for (std::size_t i = 1; i < particles.size(); ++i) {
    if (particles.depth_m[i] != particles.depth_m[0]) return false;
  }
  return true;
}

std::vector<VectorIsa> GridStepper::instruction_sets() {
  std::vector<VectorIsa> sets{VectorIsa::baseline};
#if defined(__x86_64__)
  __builtin_cpu_init();
  // x86-64-v3 also implies MOVBE, LZCNT and F16C, which every processor
  // with AVX2, FMA and BMI2 has; those three are the ones both GCC and
  // clang can query.
  const bool avx2 = __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma") &&
                    __builtin_cpu_supports("bmi2");
  if (avx2) sets.push_back(VectorIsa::avx2);
  if (avx2 && __builtin_cpu_supports("avx512f") && __builtin_cpu_supports("avx512bw") &&
      __builtin_cpu_supports("avx512dq") && __builtin_cpu_supports("avx512vl")) {
    sets.push_back(VectorIsa::avx512);
  }
#endif
  return sets;
}

const char* GridStepper::isa_name(VectorIsa isa) noexcept {
  switch (isa) {
    case VectorIsa::avx512: return "avx512";
    case VectorIsa::avx2: return "avx2";
    default: return "baseline";
  }
}

GridStepper::GridStepper(const currents::CurrentField& field, const EarthModel& earth)
    : field_(field), earth_(earth) {
  // The widest instruction set this processor has, unless the environment
  // caps it (CULLCAST_VECTOR_ISA=baseline|avx2|avx512; results are the same
  // bits either way, only the speed differs).
  const std::vector<VectorIsa> sets = instruction_sets();
  isa_ = sets.back();
  if (const char* cap = std::getenv("CULLCAST_VECTOR_ISA"); cap != nullptr && *cap != '\0') {
    const std::string wanted = cap;
    bool known = false;
    for (VectorIsa isa : {VectorIsa::baseline, VectorIsa::avx2, VectorIsa::avx512}) {
      if (wanted != isa_name(isa)) continue;
      known = true;
      if (isa < isa_) isa_ = isa;
    }
    if (!known) {
      throw InputError("environment variable CULLCAST_VECTOR_ISA is '" + wanted +
                       "'; expected baseline, avx2 or avx512");
    }
  }
  const currents::FlowSampler& s = field.sampler();
  if (s.curvilinear || !s.lat_uniform || s.inv_dlat <= 0.0) return;  // applies() is false: no tables
  const double dlat = 1.0 / s.inv_dlat;
  wet_.assign(s.mask, s.mask + s.nx * s.ny);
  row_sin_.resize(static_cast<std::size_t>(s.ny));
  row_cos_.resize(static_cast<std::size_t>(s.ny));
  for (std::ptrdiff_t j = 0; j < s.ny; ++j) {
    const double lat = (s.lat_first + static_cast<double>(j) * dlat) * kRad;
    row_sin_[static_cast<std::size_t>(j)] = std::sin(lat);
    row_cos_[static_cast<std::size_t>(j)] = std::cos(lat);
  }
  // Folding the metric into the slices interpolates u/cos(φ) bilinearly
  // instead of u; the relative difference is at most Δφ²·(1 + 2·tan²φ)/8
  // (second derivative of sec φ over one row, Δφ in radians). Fold only
  // when that is below 1e-7, far under the bilinear interpolation error of
  // the velocities themselves; coarser grids get the exact metric per stage.
  const double drow = dlat * kRad;
  double worst = 0;
  row_east_.resize(row_sin_.size());
  row_north_.resize(row_sin_.size());
  row_m_per_cell_x_.resize(row_sin_.size());
  row_m_per_cell_y_.resize(row_sin_.size());
  row_scale_.resize(2 * row_sin_.size());
  for (std::size_t j = 0; j < row_sin_.size(); ++j) {
    const double t = row_sin_[j] / row_cos_[j];
    worst = std::max(worst, drow * drow * (1 + 2 * t * t) / 8);
    earth.degrees_per_metre_at(row_sin_[j], row_cos_[j], row_east_[j], row_north_[j]);
    // The kernel works in grid units (cells): m/s -> cells/s, and back.
    row_m_per_cell_x_[j] = static_cast<float>(1.0 / (row_east_[j] * s.inv_dlon));
    row_m_per_cell_y_[j] = static_cast<float>(1.0 / (row_north_[j] * s.inv_dlat));
    row_scale_[2 * j] = static_cast<float>(row_east_[j] * s.inv_dlon);
    row_scale_[2 * j + 1] = static_cast<float>(row_north_[j] * s.inv_dlat);
  }
  folded_ = worst <= 1e-7;
}

void GridStepper::mark_reef_nodes(const reefs::ReefLookup& reefs) {
  reef_serial_ = reefs.serial();
  const currents::FlowSampler& s = field_.sampler();
  const double dlon = 1.0 / s.inv_dlon, dlat = 1.0 / s.inv_dlat;
  // Reefs may be given 360 degrees east or west of the currents: only the
  // shifts that bring some reef onto the grid are tried node by node.
  const double east_end = s.lon_first + static_cast<double>(s.nx - 1) * dlon;
  const double north_end = s.lat_first + static_cast<double>(s.ny - 1) * dlat;
  std::vector<double> shifts;
  for (double shift : {0.0, -360.0, 360.0}) {
    if (reefs.may_hold_reef(s.lon_first + shift - dlon, east_end + shift + dlon, s.lat_first - dlat,
                            north_end + dlat)) {
      shifts.push_back(shift);
    }
  }
  for (std::ptrdiff_t j = 0; j < s.ny; ++j) {
    const double lat = s.lat_first + static_cast<double>(j) * dlat;
    for (std::ptrdiff_t i = 0; i < s.nx; ++i) {
      std::int32_t& node = wet_[static_cast<std::size_t>(j * s.nx + i)];
      if (node == 0) continue;
      // A cell's width around the node: more than the positions whose
      // nearest node it is (half a cell either way).
      const double lon = s.lon_first + static_cast<double>(i) * dlon;
      bool near = false;
      for (double shift : shifts) {
        near = near || reefs.may_hold_reef(lon + shift - dlon, lon + shift + dlon, lat - dlat, lat + dlat);
      }
      node = near ? 2 : 1;
    }
  }
}

StepTally GridStepper::step(ParticleSet& p, std::uint32_t step, const StepSettings& s, const LarvalClock& clock,
                            const reefs::ReefLookup& reefs, const CounterRandom& rng,
                            std::vector<std::uint8_t>& settled_now, const LarvalEnvironment& environment,
                            const std::function<void()>& side_job) {
  const double t0 = step * s.dt_s;  // seconds since the event start
  const double t0_model = s.event_start_s + t0;
  const double t1 = t0 + s.dt_s;
  const double depth = p.size() > 0 ? p.depth_m[0] : 0.0;
  // Stage times: every scheme uses the start, RK2 and RK4 the middle, RK4 the end.
  const int stages = s.scheme == Scheme::rk4 ? 3 : (s.scheme == Scheme::rk2 ? 2 : 1);
  const double stage_t[3] = {t0_model, t0_model + 0.5 * s.dt_s, t0_model + s.dt_s};
  const float* scale = folded_ ? row_scale_.data() : nullptr;  // m/s -> cells/s row by row
  for (int k = 0; k < stages; ++k) {
    std::vector<float>& uv = stage_uv_[k];
    currents::CurrentField::SliceKey key;
    const bool known = field_.slice_key(stage_t[k], depth, key);
    // RK4's start slice is the previous step's end slice, unless a frame
    // boundary lies there (the end was taken from the interval before it).
    if (k == 0 && known && end_reusable_ && key == end_key_) {
      std::swap(stage_uv_[0], stage_uv_[2]);
      continue;
    }
    if (!known || !field_.horizontal_slice(stage_t[k], depth, uv, scale)) {
      const currents::FlowSampler& grid = field_.sampler();
      uv.assign(static_cast<std::size_t>(2 * grid.nx * grid.ny), 0.0f);  // outside the prepared frames: still water
    }
    if (k == 2) {
      end_reusable_ = known;
      end_key_ = key;
    }
  }
  if (stages < 3) end_reusable_ = false;
  const currents::FlowSampler& fs = field_.sampler();
  const double a = earth_.equatorial_radius_m(), e2 = earth_.eccentricity_squared();
  const lanes::Grid g{fs.lon_first, fs.lat_first, fs.inv_dlon, fs.inv_dlat,
                      static_cast<double>(fs.nx - 1), static_cast<double>(fs.ny - 1),
                      static_cast<std::int32_t>(fs.nx), static_cast<std::int32_t>(fs.ny), wet_.data(),
                      row_sin_.data(), row_cos_.data(), 1.0 / fs.inv_dlon, 1.0 / fs.inv_dlat, 360.0 * fs.inv_dlon,
                      e2, 1.0 / (a * kRad), 1.0 / (a * kRad), 1.0 / (a * (1.0 - e2) * kRad),
                      folded_, row_m_per_cell_x_.data(), row_m_per_cell_y_.data(), row_east_.data(),
                      row_north_.data()};
  lanes::StepPlan plan{stage_uv_[0].data(),
                       stages > 1 ? stage_uv_[1].data() : stage_uv_[0].data(),
                       stages > 2 ? stage_uv_[2].data() : stage_uv_[0].data(),
                       s.scheme,
                       s.dt_s,
                       std::sqrt(2.0 * s.kh_m2_s * s.dt_s),  // metres, one standard deviation
                       &rng,
                       s.event,
                       step};
  if (reefs.serial() != reef_serial_) mark_reef_nodes(reefs);
  const AdvanceFn advance = kernel_for(isa_);
  const double settle_p = clock.settle_probability(s.dt_s);
  const double constant_survive = clock.step_survival(0.0, s.dt_s);
  const bool constant_hazard = clock.constant_hazard();
  const std::int64_t n = static_cast<std::int64_t>(p.size());
  settled_now.assign(p.size(), 0);
  const bool develops = environment.any();
  const double t_mid_model = t0_model + 0.5 * s.dt_s;
  const bool warm = develops && environment.temperature_on() &&
                    field_.scalar_slice(currents::ScalarKind::temperature, t_mid_model, depth, temperature_);
  const bool fed = develops && environment.food_on() &&
                   field_.scalar_slice(currents::ScalarKind::chlorophyll, t_mid_model, depth, chlorophyll_);
  const SlicedScalars scalars{field_.sampler(), warm ? temperature_.data() : nullptr,
                              fed ? chlorophyll_.data() : nullptr};

  // Walk deviates: an even step keeps the next (odd) step's pair, drawn from
  // the same generator block; the odd step then uses it for every particle
  // that was drifting already (CounterRandom::walk_normal2).
  const bool walking = plan.walk_m > 0;
  const bool odd_step = (step & 1u) != 0;
  const bool keep_next = walking && !odd_step;
  const bool kept = walking && odd_step && p.walk_next_step == step && p.walk_next_event == s.event &&
                    p.walk_next.size() == 2 * p.size();
  if (keep_next) p.walk_next.resize(2 * p.size());
  float* const walk_next = p.walk_next.data();

  std::uint64_t particle_steps = 0, land_contacts = 0, released = 0, settled = 0, died = 0, stranded = 0,
                lost = 0;
  double max_speed = 0;

  // Particles go through the step in batches of kLanes (grid_lanes.hpp): the
  // kernel runs each stage over the whole batch in vector instructions.
  // Each chunk of the array first lists its drifting particles, so batches
  // stay full when larvae have settled, died or left here and there.
  // Per-particle results depend neither on the batching nor on the thread
  // count nor on the instruction set.
  constexpr std::int64_t kChunk = 1024;
  const std::int64_t chunks = (n + kChunk - 1) / kChunk;

  // Chunks handed out as threads finish: finished larvae cluster along the
  // array (drift_step.hpp says why the schedule changes no result).
  // One thread first runs the side job (decoding the next currents frames),
  // then joins the others on the chunks; none waits for it to start.
  std::exception_ptr side_error;
#pragma omp parallel if (n > 4096) reduction(+ : particle_steps, land_contacts, released, settled, died, stranded, \
                                                 lost) reduction(max : max_speed)
  {
    if (side_job) {
#pragma omp single nowait
      {
        try {
          side_job();
        } catch (...) {
          side_error = std::current_exception();
        }
      }
    }
#pragma omp for schedule(dynamic, 1)
    for (std::int64_t chunk = 0; chunk < chunks; ++chunk) {
      std::int64_t drifting[kChunk + kLanes];  // padded: a last, partial batch's spare lanes repeat its lane 0
      bool fresh[kChunk];  // released this step: no kept walk deviates
      int count = 0;
      bool any_fresh = false;
      const std::int64_t chunk_begin = chunk * kChunk;
      const std::int64_t chunk_end = std::min(n, chunk_begin + kChunk);
      const Fate* chunk_fate = p.fate.data() + chunk_begin;
      if (count_of(chunk_fate, chunk_end - chunk_begin, Fate::drifting) == chunk_end - chunk_begin) {
        // The common case between releases and the first settlements.
        for (std::int64_t i = chunk_begin; i < chunk_end; ++i) drifting[count++] = i;
      } else if (count_of(chunk_fate, chunk_end - chunk_begin, Fate::waiting) == 0) {
        // Settled, dead or lost larvae here and there, none to release: the
        // drifting ones listed without branches (fresh[] stays unread).
        for (std::int64_t i = chunk_begin; i < chunk_end; ++i) {
          drifting[count] = i;
          count += p.fate[i] == Fate::drifting ? 1 : 0;
        }
      } else {
        for (std::int64_t i = chunk_begin; i < chunk_end; ++i) {
          Fate fate = p.fate[i];
          if (fate == Fate::waiting) {
            if (p.release_s[i] > t0) continue;
            p.fate[i] = Fate::drifting;
            p.release_s[i] = static_cast<float>(t0);
            ++released;
            fate = Fate::drifting;
            fresh[count] = true;
            any_fresh = true;
            drifting[count++] = i;
            continue;
          }
          if (fate == Fate::drifting) fresh[count] = false, drifting[count++] = i;
        }
      }
      particle_steps += static_cast<std::uint64_t>(count);
      if (count > 0) std::fill_n(drifting + count, kLanes, drifting[(count - 1) / kLanes * kLanes]);
      for (int first = 0; first < count; first += kLanes) {
        const std::int64_t* idx = drifting + first;
        const int m = std::min<int>(kLanes, count - first);
        // A full batch of neighbours in the array (most of them): plain
        // contiguous loads, the same values.
        const bool run = m == kLanes && idx[kLanes - 1] - idx[0] == kLanes - 1;

        lanes::Batch b;
        b.walk_cached = kept;
        if (any_fresh) {
          for (int l = 0; l < m; ++l) b.walk_cached = b.walk_cached && !fresh[first + l];
        }
        // Stream ids only when the kernel draws deviates: half the steps
        // read neither array.
        load_batch(p, walk_next, idx, run, walking && !b.walk_cached, b);
        advance(g, plan, b);
        if (keep_next) keep_deviates(b, idx, m, run, walk_next);
        // (spare lanes repeat lane 0: the same maximum)
        max_speed = batch_max(b.speed, max_speed);

        // What the batch's larvae met (conditions_at()) first, where each
        // ends the step, held or not: short loops, so the exponentials and
        // logarithms of successive larvae run side by side.
        alignas(64) double rate[kLanes], food_log2[kLanes];
        if (develops) {
          alignas(64) double temperature[kLanes], chlorophyll[kLanes], lon[kLanes], lat[kLanes];
          alignas(64) bool feeding[kLanes];
          for (int l = 0; l < m; ++l) {
            const bool held = b.where[l] == lanes::kLand;
            lon[l] = held ? b.lon0[l] : b.lon[l];
            lat[l] = held ? b.lat0[l] : b.lat[l];
            feeding[l] = feeds(environment, clock, p.development_s[idx[l]]);
          }
          scalars.at(lon, lat, m, temperature, chlorophyll);
          // (1 with temperature off: development_rate() says so, and the
          // temperature is NaN then anyway)
          for (int l = 0; l < m; ++l) rate[l] = environment.development_rate(temperature[l]);
          for (int l = 0; l < m; ++l) food_log2[l] = environment.food_log2(chlorophyll[l]);
          for (int l = 0; l < m; ++l) food_log2[l] = feeding[l] ? food_log2[l] : Conditions{}.food_log2;
        }

        if (!develops && !clock.random_deaths() && constant_hazard) {
          // (spare lanes of a partial batch repeat its lane 0: the tests
          // below hold for them when they hold for it)
          alignas(64) double age1[kLanes];
          if (run) {
            const float* release = p.release_s.data() + idx[0];
            for (int l = 0; l < kLanes; ++l) age1[l] = t1 - release[l];
          } else {
            for (int l = 0; l < kLanes; ++l) age1[l] = t1 - p.release_s[idx[l]];
          }
          if (plain_ends(b, age1, clock)) {
            died += end_plain(p, idx, m, run, b, age1, constant_survive, clock.max_age_s());
            continue;
          }
        }
        for (int l = 0; l < m; ++l) {
          const std::int64_t i = idx[l];
          double lon = b.lon[l], lat = b.lat[l];
          if (b.where[l] == lanes::kOutside) {
            p.lon[i] = lon;
            p.lat[i] = lat;
            p.fate[i] = Fate::lost;
            ++lost;
            continue;
          }
          if (b.where[l] == lanes::kLand) {
            ++land_contacts;
            if (s.land == LandRule::strand) {
              p.fate[i] = Fate::stranded;
              ++stranded;
              continue;
            }
            lon = b.lon0[l];  // hold: the step is undone
            lat = b.lat0[l];
          }
          p.lon[i] = lon;
          p.lat[i] = lat;

          const StreamId id{s.event, p.source[i], p.index[i]};
          const double age0 = t0 - p.release_s[i];
          const double age1 = t1 - p.release_s[i];
          double development = age1;  // the real age unless temperature/food act
          if (develops) {
            development = develop(p, i, id, step, environment, Conditions{rate[l], food_log2[l]}, s.dt_s, age1,
                                  clock, rng);
            if (development < 0) {
              ++died;
              continue;
            }
          }
          const double survive = constant_hazard ? constant_survive : clock.step_survival(age0, age1);
          // Open water (no reef near the node's cell): the look-up would say none.
          const StepEnd end =
              b.where[l] == lanes::kWater
                  ? end_step(p, i, id, step, survive, development, lon, lat, settle_p, clock, OpenWater{}, rng)
                  : end_step(p, i, id, step, survive, development, lon, lat, settle_p, clock, reefs, rng);
          switch (end) {
            case StepEnd::died: ++died; break;
            case StepEnd::settled: settled_now[i] = 1; ++settled; break;
            case StepEnd::drifting: break;
          }
        }
      }
    }
  }
  if (side_error) std::rethrow_exception(side_error);

  p.walk_next_step = keep_next ? step + 1 : ParticleSet::kNoWalkCache;
  p.walk_next_event = s.event;
  return StepTally{particle_steps, land_contacts, released, settled,
                   died,           stranded,      lost,     max_speed};
}

}  // namespace cullcast::drift
