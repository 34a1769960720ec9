// Curvilinear cell search: bucket index + Newton inversion of the bilinear
// cell map (standard finite-element technique; common practice, no source).
#include "cullcast/currents/curvilinear_grid.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace cullcast::currents {
namespace {
double wrap180(double d) { return d - 360.0 * std::floor((d + 180.0) / 360.0); }
}  // namespace

CurvilinearLocator::CurvilinearLocator(std::vector<double> lon, std::vector<double> lat, std::ptrdiff_t nx,
                                       std::ptrdiff_t ny)
    : lon_(std::move(lon)), lat_(std::move(lat)), nx_(nx), ny_(ny) {
  if (nx < 2 || ny < 2 || lon_.size() != static_cast<size_t>(nx * ny) || lat_.size() != lon_.size()) {
    throw std::invalid_argument("a curvilinear grid needs at least 2x2 nodes with matching lon/lat arrays");
  }
  lon_ref_ = lon_[0];
  lon_min_ = lat_min_ = 1e300;
  lon_max_ = lat_max_ = -1e300;
  for (size_t n = 0; n < lon_.size(); ++n) {
    if (!std::isfinite(lon_[n]) || !std::isfinite(lat_[n])) {
      throw std::invalid_argument("coordinate of node (row " + std::to_string(n / nx) + ", column " +
                                  std::to_string(n % nx) + ") is missing or not finite");
    }
    lon_[n] = lon_ref_ + wrap180(lon_[n] - lon_ref_);
    lon_min_ = std::min(lon_min_, lon_[n]);
    lon_max_ = std::max(lon_max_, lon_[n]);
    lat_min_ = std::min(lat_min_, lat_[n]);
    lat_max_ = std::max(lat_max_, lat_[n]);
  }
  // About one bucket per 2x2 cells.
  const std::ptrdiff_t cells = (nx - 1) * (ny - 1);
  const double aspect = (lon_max_ - lon_min_ + 1e-12) / (lat_max_ - lat_min_ + 1e-12);
  const double target = std::max(1.0, cells / 4.0);
  bx_ = std::clamp<std::ptrdiff_t>(static_cast<std::ptrdiff_t>(std::sqrt(target * aspect)), 1, 4096);
  by_ = std::clamp<std::ptrdiff_t>(static_cast<std::ptrdiff_t>(target / bx_), 1, 4096);
  inv_bw_ = bx_ / (lon_max_ - lon_min_ + 1e-12);
  inv_bh_ = by_ / (lat_max_ - lat_min_ + 1e-12);
  std::vector<std::uint32_t> count(static_cast<size_t>(bx_ * by_) + 1, 0);
  auto bucket_range = [&](std::ptrdiff_t i, std::ptrdiff_t j, std::ptrdiff_t& x0, std::ptrdiff_t& x1,
                          std::ptrdiff_t& y0, std::ptrdiff_t& y1) {
    double a = 1e300, b = -1e300, c = 1e300, d = -1e300;
    for (std::ptrdiff_t dj = 0; dj < 2; ++dj)
      for (std::ptrdiff_t di = 0; di < 2; ++di) {
        const size_t n = static_cast<size_t>((j + dj) * nx_ + i + di);
        a = std::min(a, lon_[n]); b = std::max(b, lon_[n]);
        c = std::min(c, lat_[n]); d = std::max(d, lat_[n]);
      }
    x0 = std::clamp<std::ptrdiff_t>(static_cast<std::ptrdiff_t>((a - lon_min_) * inv_bw_), 0, bx_ - 1);
    x1 = std::clamp<std::ptrdiff_t>(static_cast<std::ptrdiff_t>((b - lon_min_) * inv_bw_), 0, bx_ - 1);
    y0 = std::clamp<std::ptrdiff_t>(static_cast<std::ptrdiff_t>((c - lat_min_) * inv_bh_), 0, by_ - 1);
    y1 = std::clamp<std::ptrdiff_t>(static_cast<std::ptrdiff_t>((d - lat_min_) * inv_bh_), 0, by_ - 1);
  };
  for (int pass = 0; pass < 2; ++pass) {
    for (std::ptrdiff_t j = 0; j + 1 < ny_; ++j)
      for (std::ptrdiff_t i = 0; i + 1 < nx_; ++i) {
        std::ptrdiff_t x0, x1, y0, y1;
        bucket_range(i, j, x0, x1, y0, y1);
        for (std::ptrdiff_t y = y0; y <= y1; ++y)
          for (std::ptrdiff_t x = x0; x <= x1; ++x) {
            const size_t b = static_cast<size_t>(y * bx_ + x);
            if (pass == 0) ++count[b + 1];
            else cells_[count[b]++] = static_cast<std::uint32_t>(j * (nx_ - 1) + i);
          }
      }
    if (pass == 0) {
      for (size_t b = 1; b < count.size(); ++b) count[b] += count[b - 1];
      start_ = count;
      cells_.resize(count.back());
    }
  }
  // `count` now holds bucket ends; start_ kept the starts (copied before the fill).
}

bool CurvilinearLocator::try_cell(std::ptrdiff_t i, std::ptrdiff_t j, double x, double y,
                                  CellHit& hit) const noexcept {
  const std::ptrdiff_t n00 = j * nx_ + i, n10 = n00 + 1, n01 = n00 + nx_, n11 = n01 + 1;
  const double x00 = lon_[n00], x10 = lon_[n10], x01 = lon_[n01], x11 = lon_[n11];
  const double y00 = lat_[n00], y10 = lat_[n10], y01 = lat_[n01], y11 = lat_[n11];
  if (x < std::min(std::min(x00, x10), std::min(x01, x11)) || x > std::max(std::max(x00, x10), std::max(x01, x11)) ||
      y < std::min(std::min(y00, y10), std::min(y01, y11)) || y > std::max(std::max(y00, y10), std::max(y01, y11))) {
    return false;
  }
  // X(s,t) = a + b s + c t + d s t
  const double ax = x00, bx = x10 - x00, cx = x01 - x00, dx = x11 - x10 - x01 + x00;
  const double ay = y00, by = y10 - y00, cy = y01 - y00, dy = y11 - y10 - y01 + y00;
  double s = 0.5, t = 0.5;
  for (int it = 0; it < 12; ++it) {
    const double fx = ax + bx * s + cx * t + dx * s * t - x;
    const double fy = ay + by * s + cy * t + dy * s * t - y;
    const double j11 = bx + dx * t, j12 = cx + dx * s, j21 = by + dy * t, j22 = cy + dy * s;
    const double det = j11 * j22 - j12 * j21;
    if (det == 0.0) return false;
    const double ds = (fx * j22 - fy * j12) / det;
    const double dt = (fy * j11 - fx * j21) / det;
    s -= ds;
    t -= dt;
    if (std::fabs(ds) + std::fabs(dt) < 1e-13) break;
  }
  constexpr double tol = 1e-9;
  if (!(s >= -tol && s <= 1 + tol && t >= -tol && t <= 1 + tol)) return false;
  hit.i = i;
  hit.j = j;
  hit.fx = std::clamp(s, 0.0, 1.0);
  hit.fy = std::clamp(t, 0.0, 1.0);
  hit.inside = true;
  return true;
}

bool CurvilinearLocator::locate(double lon, double lat, CellHit& hit) const noexcept {
  hit.inside = false;
  const double x = lon_ref_ + wrap180(lon - lon_ref_);
  if (!(x >= lon_min_ && x <= lon_max_ && lat >= lat_min_ && lat <= lat_max_)) return false;
  const std::ptrdiff_t bi = std::min<std::ptrdiff_t>(static_cast<std::ptrdiff_t>((x - lon_min_) * inv_bw_), bx_ - 1);
  const std::ptrdiff_t bj = std::min<std::ptrdiff_t>(static_cast<std::ptrdiff_t>((lat - lat_min_) * inv_bh_), by_ - 1);
  const size_t b = static_cast<size_t>(bj * bx_ + bi);
  for (std::uint32_t n = start_[b]; n < start_[b + 1]; ++n) {
    const std::ptrdiff_t cell = cells_[n];
    if (try_cell(cell % (nx_ - 1), cell / (nx_ - 1), x, lat, hit)) return true;
  }
  return false;
}

bool locate_curvilinear(const CurvilinearLocator& locator, double lon, double lat, CellHit& hit) noexcept {
  return locator.locate(lon, lat, hit);
}

}  // namespace cullcast::currents
