#pragma once
// CONTRACT (public API used by drift, hydro-check and the briefing).
// Gridded ocean currents from CF-NetCDF files, streamed frame by frame.
// Internal time: seconds since 1970-01-01T00:00:00 counted in the files'
// calendar ("model seconds"). Positions: degrees east (-180..180 or 0..360,
// both accepted) and degrees north; depth in metres, positive down.
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "cullcast/base/civil_time.hpp"
#include "cullcast/currents/calendar.hpp"
#include "cullcast/currents/flow_sampler.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::currents {

enum class SampleStatus : std::uint8_t {
  water = 0,    // inside the grid, over a wet cell
  land = 1,     // inside the grid, the model cell holding the point is masked
  outside = 2,  // beyond the grid or beyond the loaded time span
};

struct FlowSample {
  double u_m_s = 0;  // eastward velocity, m/s
  double v_m_s = 0;  // northward velocity, m/s
  double w_m_s = 0;  // upward velocity, m/s (0 when the files have none)
  SampleStatus status = SampleStatus::outside;
};

enum class GridKind { regular, curvilinear };

struct GridSummary {
  GridKind kind = GridKind::regular;
  std::size_t nx = 0, ny = 0, nz = 1;     // nodes along x (lon), y (lat), depth
  double lon_min = 0, lon_max = 0, lat_min = 0, lat_max = 0;  // extent, degrees
  double min_spacing_m = 0;     // smallest node spacing, metres
  double mean_spacing_m = 0;    // typical node spacing, metres
  std::vector<double> depths_m; // depth levels, metres positive down (empty for 2-D)
  double land_fraction = 0;     // share of masked nodes on the top level
};

// A stretch of time without frames, longer than 1.5 typical steps.
struct TimeGap {
  double from_s = 0;  // last frame before the gap, model seconds
  double to_s = 0;    // first frame after the gap, model seconds
};

// Optional scalar fields sampled like the velocities (bilinear, linear in time)
// but averaged over wet nodes only, so land does not drag values to 0.
enum class ScalarKind {
  temperature,  // sea_water_temperature; sampled in degrees Celsius
  chlorophyll,  // mass_concentration_of_chlorophyll_a_in_sea_water; sampled in mg m-3 (= ug/L)
};

// Names of the variables in use (empty when absent).
struct VariableNames {
  std::string u, v, w, temperature, chlorophyll, time, depth, lon, lat;
};

// Statistics of one frame, for hydro-check.
struct FrameScan {
  double time_s = 0;            // model seconds
  double max_speed_m_s = 0;     // over wet nodes, all levels
  double courant_dt_s = 0;      // largest step with |u|dt/dx + |v|dt/dy <= 1 at every wet node; inf if still
  std::size_t wet_nodes = 0;
};

class CurrentField {
 public:
  // Discovers variables (CF standard names, or the scenario's names), checks
  // that all files share one grid, reads and orders every file's time axis.
  // Reads no velocity frames yet. Throws InputError naming file and variable.
  static CurrentField open(const study::CurrentsSettings& settings);
  static CurrentField open_files(const std::vector<std::string>& files);

  CurrentField(CurrentField&&) noexcept;
  CurrentField& operator=(CurrentField&&) noexcept;
  ~CurrentField();

  const GridSummary& grid() const;
  const Calendar& calendar() const;
  double time_begin_s() const;   // first frame, model seconds
  double time_end_s() const;     // last frame, model seconds
  double frame_step_s() const;   // typical spacing of frames
  std::size_t frame_count() const;

  // Makes sure the frames bracketing [t0, t1] are in memory (plus read-ahead),
  // dropping older ones. Not thread-safe; call between steps, outside the
  // parallel loop. Throws InputError if [t0, t1] is outside the files' span.
  // Moving forward in time with a processor to spare (fewer OpenMP threads
  // than usable processors), the last read-ahead interval is decoded on a
  // background thread while the caller works; without one it waits as
  // pending work for read_pending(). A later prepare() takes it over when it
  // is needed (decoding it then if nobody has) and throws its decoding error
  // then. Either way the data are the same.
  void prepare(double t0_s, double t1_s);
  // Decodes the pending read-ahead interval, if any, on the calling thread:
  // meant for one thread of a parallel step while the others move particles
  // (GridStepper::step's side job), so the decoding overlaps the step on a
  // machine with no processor to spare. It touches only that interval:
  // other threads may sample the prepared frames meanwhile; not concurrently
  // with prepare(), settle() or another read_pending(). Never throws: a
  // decoding error waits for the prepare() that needs the interval.
  // Returns whether there was an interval to decode.
  bool read_pending();
  // Waits for the background decoder. Call before using the NetCDF library
  // elsewhere in the process (the library is not thread-safe); the
  // destructor waits too.
  void settle();
  // Forces the background decoder on or off (by default it runs when a
  // processor is spare; off, read-ahead is pending work); either way the
  // data are the same.
  void set_background_reads(bool on);
  // Whether prepare() hands read-ahead to the background decoder now.
  bool background_reads() const;

  // Bilinear in space (trilinear with depth), linear in time, between the
  // prepared frames. Masked nodes count as velocity 0. Thread-safe for
  // concurrent callers after prepare(); never throws, never allocates.
  FlowSample sample(double t_s, double lon, double lat, double depth_m) const noexcept;

  // Water, land or outside for a position (no time needed).
  SampleStatus status(double lon, double lat) const noexcept;

  // Bytes held by loaded frames right now (for the memory benchmark).
  std::size_t frame_bytes() const;

  // Keeps only the depth levels from the surface down to the first at or
  // below `deepest_m` (all of them when none is that deep, or for infinity):
  // larvae that never go deeper need no others, and every frame shrinks by
  // the levels left out. Values at kept levels, and so every sample down to
  // `deepest_m`, are unchanged; grid() then describes the kept levels.
  // Returns the number of levels kept. Frames already read are dropped.
  int limit_depth(double deepest_m);

  // --- additions beyond the first contract -------------------------------
  const std::vector<TimeGap>& gaps() const;                 // holes in the time axis
  // The first gap whose open interval (from_s, to_s) overlaps [t0_s, t1_s], or
  // nullptr. Stages that must not interpolate across a gap check their span
  // with this before they step (prepare() itself interpolates across gaps).
  const TimeGap* gap_within(double t0_s, double t1_s) const;
  // The last frame time reachable from t_s without crossing a gap
  // (time_end_s() when no gap follows t_s).
  double stretch_end_s(double t_s) const;
  const std::vector<double>& frame_times_s() const;         // every frame, sorted, unique
  const std::vector<std::string>& files() const;            // files in use, in time order
  const VariableNames& variables() const;
  // Model seconds <-> ISO 8601 text in the files' calendar.
  std::string format_time(double t_s) const;

  bool has_scalar(ScalarKind kind) const;
  // Loads the scalar with the velocities from the next prepare() on.
  // Throws InputError when the files have no such variable.
  void enable_scalar(ScalarKind kind);
  // NaN outside the grid/time span or where every surrounding node is masked.
  double sample_scalar(ScalarKind kind, double t_s, double lon, double lat, double depth_m) const noexcept;
  // The scalar at one time and depth on every horizontal node, for many
  // look-ups at that time: two floats per node (row-major, lon fastest),
  // the sum over the bracketing depth levels of weight × value and the sum
  // of the weights, both over the levels where the value is known (0 and 0
  // where none is). Bilinear weights w over a cell then give
  // Σ w·sum / Σ w·weight — sample_scalar()'s value up to rounding. False
  // (and `out` untouched) when t is outside the prepared frames or the
  // scalar is not enabled.
  bool scalar_slice(ScalarKind kind, double t_s, double depth_m, std::vector<float>& out) const;

  // Reads and decodes frame `index` on its own (not cached), for whole-record
  // scans; `speeds` (optional) receives the speed of every wet node, m/s.
  FrameScan scan_frame(std::size_t index, std::vector<float>* speeds = nullptr);

  // For the drift's grid stepper: the prepared frames as plain data (valid
  // until the next prepare()), and the velocities at every node of the
  // horizontal grid at one time and depth, interpolated as sample() does
  // (linear in time and depth; masked nodes 0), as interleaved (u, v) floats
  // in m/s, row by row from the first latitude: ny·nx·2 values. Returns false
  // when t is outside the prepared frames.
  const FlowSampler& sampler() const noexcept { return hot_; }
  // `row_scale` (optional): two factors per row, multiplied into that row's
  // u and v in the same pass (the grid stepper's metric).
  bool horizontal_slice(double t_s, double depth_m, std::vector<float>& uv,
                        const float* row_scale = nullptr) const;
  // What a slice at (t, depth) is computed from: the loaded interval and the
  // time fraction in it. Equal keys give the same slice, bit for bit (the
  // frames of an interval always decode alike). False outside the prepared frames.
  struct SliceKey {
    double t0_s = 0, t1_s = 0, a = 0, depth_m = 0;
    bool operator==(const SliceKey&) const = default;
  };
  bool slice_key(double t_s, double depth_m, SliceKey& key) const noexcept;

 private:
  struct Impl;
  CurrentField();
  std::unique_ptr<Impl> impl_;
  FlowSampler hot_;  // views into impl_'s loaded blocks; rebuilt by prepare()
  // Forgets every decoded frame and block (the background decoder's too):
  // the next prepare() reads them again, after a change to what they hold.
  void drop_loaded_frames();
};

inline FlowSample CurrentField::sample(double t_s, double lon, double lat, double depth_m) const noexcept {
  const FlowSampler& s = hot_;
  FlowSample out;
  double a = 0;
  const TimeBlock* blk = s.find_block(t_s, a);
  CellHit h;
  if (blk == nullptr || !s.locate(lon, lat, h)) return out;  // outside
  std::ptrdiff_t k = 0;
  double fz = 0;
  s.locate_depth(depth_m, k, fz);
  const std::ptrdiff_t c = s.channels;
  const std::ptrdiff_t row = s.nx * c;
  const float* p = blk->data + (k * s.ny + h.j) * row + h.i * c;
  // Four channels (u, v, du, dv) of a node are one 16-byte vector: the
  // bilinear sum runs on all four at once, then time is one multiply-add.
  const float fx = static_cast<float>(h.fx), fy = static_cast<float>(h.fy);
  const float w00 = (1.0f - fx) * (1.0f - fy), w10 = fx * (1.0f - fy), w01 = (1.0f - fx) * fy, w11 = fx * fy;
  const float af = static_cast<float>(a);
  auto layer = [&](const float* q, double& u, double& v, double& w) noexcept {
    const float* q1 = q + row;
    const Float4 acc = w00 * load4(q) + w10 * load4(q + c) + w01 * load4(q1) + w11 * load4(q1 + c);
    u = acc[0] + af * acc[2];
    v = acc[1] + af * acc[3];
    if (c == 6) {
      w = w00 * (q[4] + af * q[5]) + w10 * (q[c + 4] + af * q[c + 5]) + w01 * (q1[4] + af * q1[5]) +
          w11 * (q1[c + 4] + af * q1[c + 5]);
    } else {
      w = 0.0;
    }
  };
  layer(p, out.u_m_s, out.v_m_s, out.w_m_s);
  if (fz > 0.0) {
    double u2, v2, w2;
    layer(p + s.ny * row, u2, v2, w2);
    out.u_m_s += fz * (u2 - out.u_m_s);
    out.v_m_s += fz * (v2 - out.v_m_s);
    out.w_m_s += fz * (w2 - out.w_m_s);
  }
  out.status = s.nearest_wet(h, k, fz) ? SampleStatus::water : SampleStatus::land;
  return out;
}

}  // namespace cullcast::currents
