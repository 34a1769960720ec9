#pragma once
// The hot path of CurrentField::sample(): plain data plus inline arithmetic,
// rebuilt by CurrentField::prepare() and only read afterwards, so concurrent
// sample() calls need no lock. No allocation, no virtual call, no exception.
//
// Layout of one loaded time interval [t_k, t_k+1] ("block"): for every node
// (level, row, column), in that order with columns fastest, `channels` floats
//   u_k, v_k, u_k+1 - u_k, v_k+1 - v_k [, w_k, w_k+1 - w_k]
// so time interpolation is one fused multiply-add per component and the
// velocities of one node share a cache line. Masked nodes hold 0.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>

namespace cullcast::currents {


// Where a horizontal position falls: cell (i, j) between columns i..i+1 and
// rows j..j+1, with fractions fx, fy in [0, 1] (bilinear weights).
struct CellHit {
  std::ptrdiff_t i = 0, j = 0;
  double fx = 0, fy = 0;
  bool inside = false;
};

// Four floats as one SIMD value (GCC/Clang vector extension: SSE on x86-64,
// NEON on ARM, plain code elsewhere).
typedef float Float4 __attribute__((vector_size(16)));
inline Float4 load4(const float* p) noexcept {
  Float4 v;
  __builtin_memcpy(&v, p, sizeof v);
  return v;
}

class CurvilinearLocator;  // cell search on 2-D lon/lat arrays (curvilinear_grid.hpp)
bool locate_curvilinear(const CurvilinearLocator& locator, double lon, double lat, CellHit& hit) noexcept;

struct TimeBlock {
  double t0_s = 0;      // model seconds of the first frame
  double t1_s = 0;      // model seconds of the second frame (== t0_s for a steady field)
  double inv_dt = 0;    // 1 / (t1_s - t0_s), 0 for a steady field
  const float* data = nullptr;
};

struct FlowSampler {
  // Horizontal grid (regular): node coordinates ascending, longitudes unwrapped
  // to a continuous run starting at lon_first (degrees).
  bool curvilinear = false;
  const CurvilinearLocator* locator = nullptr;
  std::ptrdiff_t nx = 0, ny = 0, nz = 1;
  double lon_first = 0, lon_last = 0;  // degrees east
  double lat_first = 0, lat_last = 0;  // degrees north
  bool lon_uniform = false, lat_uniform = false;
  double inv_dlon = 0, inv_dlat = 0;   // 1/degree, for uniform axes
  const double* lon = nullptr;         // nx node longitudes (non-uniform axes)
  const double* lat = nullptr;         // ny node latitudes
  const double* depth = nullptr;       // nz depths, metres positive down, ascending
  const std::uint8_t* mask = nullptr;  // nz*ny*nx, 1 = wet node (from the first frame)
  int channels = 4;                    // floats per node in a block: 4, or 6 with w
  const TimeBlock* blocks = nullptr;   // loaded intervals, ascending in time
  std::size_t block_count = 0;

  // Brings a longitude into [lon_first, lon_first + 360).
  double wrap_lon(double lon_deg) const noexcept {
    double x = lon_deg - lon_first;
    if (x < 0.0 || x >= 360.0) x -= 360.0 * std::floor(x / 360.0);
    return lon_first + x;
  }

  static bool axis_find(double x, double first, double last, bool uniform, double inv_d, const double* nodes,
                        std::ptrdiff_t n, std::ptrdiff_t& i, double& f) noexcept {
    if (!(x >= first && x <= last)) return false;  // also rejects NaN
    if (uniform) {
      const double g = (x - first) * inv_d;
      i = static_cast<std::ptrdiff_t>(g);
      if (i > n - 2) i = n - 2;
      f = g - static_cast<double>(i);
    } else {
      std::ptrdiff_t lo = 0, hi = n - 1;  // nodes[lo] <= x <= nodes[hi]
      while (hi - lo > 1) {
        const std::ptrdiff_t mid = (lo + hi) >> 1;
        if (nodes[mid] <= x) lo = mid; else hi = mid;
      }
      i = lo;
      f = (x - nodes[lo]) / (nodes[lo + 1] - nodes[lo]);
    }
    return true;
  }

  bool locate(double lon_deg, double lat_deg, CellHit& hit) const noexcept {
    if (curvilinear) return locate_curvilinear(*locator, lon_deg, lat_deg, hit);
    const double x = wrap_lon(lon_deg);
    hit.inside = axis_find(x, lon_first, lon_last, lon_uniform, inv_dlon, lon, nx, hit.i, hit.fx) &&
                 axis_find(lat_deg, lat_first, lat_last, lat_uniform, inv_dlat, lat, ny, hit.j, hit.fy);
    return hit.inside;
  }

  // Level k and fraction fz for a depth; clamps above the top and below the deepest level.
  void locate_depth(double depth_m, std::ptrdiff_t& k, double& fz) const noexcept {
    k = 0;
    fz = 0;
    if (nz <= 1 || !(depth_m > depth[0])) return;
    if (depth_m >= depth[nz - 1]) { k = nz - 2; fz = 1; return; }
    while (k < nz - 2 && depth[k + 1] <= depth_m) ++k;
    fz = (depth_m - depth[k]) / (depth[k + 1] - depth[k]);
  }

  // The loaded interval holding t and the time fraction; nullptr when t is outside.
  const TimeBlock* find_block(double t_s, double& a) const noexcept {
    for (std::size_t b = 0; b < block_count; ++b) {
      const TimeBlock& blk = blocks[b];
      if (t_s <= blk.t1_s || blk.inv_dt == 0.0) {
        if (t_s < blk.t0_s && blk.inv_dt != 0.0) return nullptr;
        a = (t_s - blk.t0_s) * blk.inv_dt;
        return &blk;
      }
    }
    return nullptr;
  }

  bool wet(std::ptrdiff_t k, std::ptrdiff_t j, std::ptrdiff_t i) const noexcept {
    return mask[(k * ny + j) * nx + i] != 0;
  }

  // A scalar at a point from a slice of CurrentField::scalar_slice() (per
  // node: weighted sum and weight of the known values): the bilinear mean
  // over the known values, NaN outside the grid or where none is known.
  double from_scalar_slice(const float* slice, double lon_deg, double lat_deg) const noexcept {
    CellHit h;
    locate(lon_deg, lat_deg, h);
    double value;
    from_scalar_slice(slice, &h, 1, &value);
    return value;
  }

  // The same at n points located beforehand (locate(); `hits`), in one loop
  // without branches, so that for a batch of larvae (the grid stepper)
  // successive points' loads and divisions overlap. A node of weight 0 adds
  // +0.0 to a sum that is never -0.0 (it starts at +0.0): a node the point
  // does not reach does not count, even if unknown; locate() keeps a cell's
  // far nodes on the grid.
  void from_scalar_slice(const float* slice, const CellHit* hits, int n, double* out) const noexcept {
    for (int p = 0; p < n; ++p) {
      const CellHit& h = hits[p];
      const double gx = h.inside ? h.fx : 0.0, gy = h.inside ? h.fy : 0.0;
      const std::ptrdiff_t base = h.inside ? 2 * (h.j * nx + h.i) : 0;
      const float* south = slice + base;
      const float* north = slice + base + (h.inside ? 2 * nx : 0);
      const double w00 = (1.0 - gx) * (1.0 - gy), w10 = gx * (1.0 - gy);
      const double w01 = (1.0 - gx) * gy, w11 = gx * gy;
      double sum = 0, wsum = 0;
      sum += w00 * south[0], wsum += w00 * south[1];
      sum += w10 * south[2], wsum += w10 * south[3];
      sum += w01 * north[0], wsum += w01 * north[1];
      sum += w11 * north[2], wsum += w11 * north[3];
      out[p] = h.inside & (wsum > 0) ? sum / wsum : std::nan("");
    }
  }

  // Land when the node nearest to the point (in cell coordinates) is masked.
  bool nearest_wet(const CellHit& h, std::ptrdiff_t k, double fz) const noexcept {
    const std::ptrdiff_t kk = (fz > 0.5) ? k + 1 : k;
    return wet(kk, h.j + (h.fy > 0.5 ? 1 : 0), h.i + (h.fx > 0.5 ? 1 : 0));
  }
};

}  // namespace cullcast::currents
