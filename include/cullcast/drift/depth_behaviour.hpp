#pragma once
// Where larvae are in the water column (docs/methods.md "Depth").
//  fixed: depth stays at the release depth; with a depth_by_age table the
//         larva sits at the middle of the table's band for its age.
//  band:  vertical random walk (constant Kv, Gaussian steps of variance
//         2·Kv·dt) inside [top, bottom], reflecting at both edges; the band
//         comes from the table when given. A larva outside the band (the band
//         moved, or it was released outside) swims towards it at swim_m_s.
//  3d:    vertical velocity w of the currents, Kv random walk (constant, or a
//         field with the drift-corrected step of Visser 1997), reflection at
//         the surface and at the sea floor (deepest wet level); with a table,
//         swimming towards the band as in "band".
// Depth in metres, positive down.
#include <algorithm>
#include <cstdint>
#include <limits>
#include <vector>

#include "cullcast/study/study.hpp"

namespace cullcast::drift {

enum class DepthMode : std::uint8_t { fixed, band, full3d };

struct DepthBand {
  double top_m = 0;
  double bottom_m = 0;
};

class DepthRule {
 public:
  DepthRule() = default;
  explicit DepthRule(const study::MotionSettings& m)
      : mode_(m.depth == "3d" ? DepthMode::full3d : m.depth == "band" ? DepthMode::band : DepthMode::fixed),
        band_{m.band_top_m, m.band_bottom_m},
        table_(m.depth_by_age),
        swim_m_s_(m.swim_m_s) {}

  DepthMode mode() const noexcept { return mode_; }
  bool has_table() const noexcept { return !table_.empty(); }
  bool moves() const noexcept { return mode_ != DepthMode::fixed || has_table(); }
  double swim_m_s() const noexcept { return swim_m_s_; }

  // The band at an age (seconds): linear between table rows, constant beyond them.
  DepthBand band_at(double age_s) const noexcept {
    if (table_.empty()) return band_;
    const double d = age_s / 86400.0;
    if (d <= table_.front().age_days) return {table_.front().top_m, table_.front().bottom_m};
    for (std::size_t k = 1; k < table_.size(); ++k) {
      if (d <= table_[k].age_days) {
        const auto& a = table_[k - 1];
        const auto& b = table_[k];
        const double f = (d - a.age_days) / (b.age_days - a.age_days);
        return {a.top_m + f * (b.top_m - a.top_m), a.bottom_m + f * (b.bottom_m - a.bottom_m)};
      }
    }
    return {table_.back().top_m, table_.back().bottom_m};
  }

  // Swimming displacement (metres, positive down) towards the band over dt_s.
  double swim_towards(double z, const DepthBand& b, double dt_s) const noexcept {
    const double reach = swim_m_s_ * dt_s;
    if (z < b.top_m) return std::min(reach, b.top_m - z);
    if (z > b.bottom_m) return -std::min(reach, z - b.bottom_m);
    return 0.0;
  }

 private:
  DepthMode mode_ = DepthMode::fixed;
  DepthBand band_;
  std::vector<study::DepthStage> table_;
  double swim_m_s_ = 0.001;
};

// The deepest a larva of `study` can be, metres positive down: its release
// depths and, where a band or an age table sets its depth, their deepest
// edge (the walk reflects inside the band; a larva outside swims towards
// it); infinity in full 3-D, where it may reach the sea floor. The drift
// reads no current levels below the first at or under it
// (CurrentField::limit_depth).
inline double deepest_reach_m(const study::Study& study) {
  const study::MotionSettings& m = study.motion;
  if (m.depth == "3d") return std::numeric_limits<double>::infinity();
  double deepest = study.backward.sink.empty() ? 0.0 : study.backward.depth_m;
  for (const auto& event : study.spawning) deepest = std::max(deepest, event.depth_m);
  if (m.depth == "band") deepest = std::max(deepest, m.band_bottom_m);
  for (const auto& row : m.depth_by_age) deepest = std::max(deepest, row.bottom_m);
  return deepest;
}

}  // namespace cullcast::drift
