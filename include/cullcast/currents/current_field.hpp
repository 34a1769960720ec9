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
  void prepare(double t0_s, double t1_s);

  // Bilinear in space (trilinear with depth), linear in time, between the
  // prepared frames. Masked nodes count as velocity 0. Thread-safe for
  // concurrent callers after prepare(); never throws, never allocates.
  FlowSample sample(double t_s, double lon, double lat, double depth_m) const noexcept;

  // Water, land or outside for a position (no time needed).
  SampleStatus status(double lon, double lat) const noexcept;

  // Bytes held by loaded frames right now (for the memory benchmark).
  std::size_t frame_bytes() const;

 private:
  struct Impl;
  CurrentField();
  std::unique_ptr<Impl> impl_;
};

}  // namespace cullcast::currents
