#pragma once
// A time-invariant field on a regular lon/lat grid (optionally with depth
// levels) read from one CF-NetCDF file: eddy diffusivities
// (ocean_tracer_xy_laplacian_diffusivity, ocean_vertical_tracer_diffusivity,
// m2 s-1) and the sea-floor depth derived from a velocity variable's mask.
// A variable with a time dimension contributes its first record (documented
// limitation: time-varying diffusivity is not supported).
//
// Dimensions are recognised by their coordinate variables (CF-1.13 §4.1–4.3):
// longitude (units degrees_east or standard_name longitude), latitude
// (degrees_north / latitude), depth (standard_name depth, axis Z or a
// `positive` attribute; metres positive down), time (units "... since ...").
// The variable must be laid out [time,][depth,]lat,lon.
#include <filesystem>
#include <string>
#include <vector>

namespace cullcast::currents {

class GriddedField {
 public:
  // Reads `variable` (or, when empty, the variable with `standard_name`).
  // Applies scale_factor/add_offset (CF-1.13 §8.1); _FillValue, missing_value
  // and NaN become missing. Throws InputError naming file and variable.
  static GriddedField read(const std::filesystem::path& file, const std::string& variable,
                           const std::string& standard_name);
  // Depth of the deepest level holding a valid value of `variable` in the
  // first time record, per column (metres positive down); missing where the
  // top level is already dry. For a variable without depth: every wet column
  // gets +infinity (no bottom known).
  static GriddedField sea_floor(const std::filesystem::path& file, const std::string& variable);

  // Bilinear in lon/lat (linear in depth between levels, clamped at the
  // first/last level) over the valid nodes only; NaN outside the grid or
  // where every surrounding node is missing. Never throws.
  double sample(double lon, double lat, double depth_m) const noexcept;

  std::size_t nx() const { return lon_.size(); }
  std::size_t ny() const { return lat_.size(); }
  std::size_t nz() const { return depth_.empty() ? 1 : depth_.size(); }
  const std::string& description() const { return what_; }  // "file: variable"

 private:
  double horizontal(std::size_t level, double lon, double lat) const noexcept;
  std::vector<double> lon_, lat_, depth_;  // ascending; depth empty for 2-D
  std::vector<double> values_;             // [level][lat][lon], NaN = missing
  std::string what_;
};

}  // namespace cullcast::currents
