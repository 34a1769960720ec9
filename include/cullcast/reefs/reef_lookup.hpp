#pragma once
// CONTRACT. (lon, lat) -> reef index in O(1) on average: a raster index finer
// than the smallest reef; exact point-in-polygon only in cells crossed by an
// edge. An optional settlement buffer (metres, geodesic) widens each reef.
//
// How it works (docs/reefs.md, "Look-up"):
// - a regular lon/lat raster over all reefs (plus the buffer); cell side about
//   1/8 of the square root of the smallest reef's area, coarser if the raster
//   would exceed 8 M cells; only its 16 x 16 blocks holding some reef are
//   stored (also while it is built), block by block, for locality;
// - each cell holds "no reef", "inside reef k", or a short list of candidate
//   reefs, lowest index first, each "always" or "check exactly";
// - "check exactly" = even-odd crossing test (holes and multipolygons
//   respected) over only the reef's edges that span the cell's raster row,
//   then, with a buffer, the distance to the reef's edges measured in a local
//   metric (LocalMetric at the row's latitude, WGS84 radii of curvature).
// The buffer distance therefore matches the geodesic distance to the edge to
// about 1e-3 relative for buffers up to a few km (tested against GeographicLib).
#include <cstddef>
#include <cstdint>
#include <vector>

#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::reefs {

class ReefLookup {
 public:
  ReefLookup(const ReefSet& reefs, double buffer_m);
  // Reef index, or -1 when over no reef. Thread-safe, never throws or allocates.
  // Where reefs (or their buffers) overlap, the lowest index wins. Inline:
  // the drift asks once per larva and step, and most answers come from the
  // raster alone.
  int reef_at(double lon, double lat) const noexcept {
    const double fx = (lon - lon0_) * inv_dlon_;
    const double fy = (lat - lat0_) * inv_dlat_;
    // Written so that NaN coordinates fail the test too.
    if (!(fx >= 0 && fy >= 0 && fx < nx_ && fy < ny_)) return -1;
    const int ix = static_cast<int>(fx), iy = static_cast<int>(fy);
    const std::size_t block = block_of(ix, iy);
    if (!occupied_[block]) return -1;
    const std::int32_t code =
        cells_[static_cast<std::size_t>(block_slot_[block]) * kBlockCells + within_block(ix, iy)];
    return code >= -1 ? code : from_candidates(code, lon, lat, iy);
  }

  // Whether reef_at() could answer a reef anywhere in the box [lon_min,
  // lon_max] x [lat_min, lat_max] (degrees): false only when it answers -1
  // at every point of it. Conservative: one coarse block of margin. Lets the
  // drift skip look-ups over open water.
  bool may_hold_reef(double lon_min, double lon_max, double lat_min, double lat_max) const noexcept;
  // Distinct for every look-up built (a copy keeps its original's): what a
  // user derived from one look-up can be cached under it.
  std::uint64_t serial() const noexcept { return serial_; }

  // Diagnostics (for logs and the benchmark).
  double cell_size_m() const noexcept { return cell_size_m_; }  // nominal cell side, metres
  std::size_t cell_count() const noexcept {  // of the whole raster (only occupied blocks are stored)
    return static_cast<std::size_t>(nx_) * static_cast<std::size_t>(ny_);
  }
  std::size_t edge_cell_count() const noexcept;  // cells needing an exact test
  std::size_t memory_bytes() const noexcept;

 private:
  struct Edge {
    double x0, y0, x1, y1;  // lon, lat of both ends, degrees
  };
  struct ReefRows {
    std::int32_t row_first = 0;  // first raster row holding edges of this reef
    std::int32_t row_count = 0;
    std::size_t bucket = 0;      // index of its first row in bucket_start_
  };
  bool member(int reef, double lon, double lat, int row) const noexcept;
  int from_candidates(std::int32_t code, double lon, double lat, int row) const noexcept;  // a cell's list
  bool inside_row(int reef, double lon, double lat, int row) const noexcept;

  double lon0_ = 0, lat0_ = 0;          // south-west corner of cell (0, 0), degrees
  double dlon_ = 1, dlat_ = 1;          // cell size, degrees
  double inv_dlon_ = 1, inv_dlat_ = 1;  // 1 / cell size
  int nx_ = 0, ny_ = 0;                 // columns (east), rows (north)
  double cell_size_m_ = 0;              // nominal cell side, metres
  double buffer_m_ = 0;                 // settlement buffer, metres
  int buffer_rows_ = 0;                 // rows searched either side for buffer distances
  // Cell codes: -1 none, k >= 0 inside reef k, c <= -2 candidate list
  // number (-2 - c). Stored only for occupied blocks (see below), block by
  // block, each block's kBlock x kBlock cells row-major from its south-west.
  std::vector<std::int32_t> cells_;
  std::vector<std::uint32_t> list_start_;  // candidate list l = lists_[list_start_[l] .. [l+1])
  std::vector<std::int32_t> lists_;        // entry = 2 * reef + (1 if it needs an exact test)
  std::vector<ReefRows> reef_rows_;
  std::vector<std::uint32_t> bucket_start_;  // per (reef, row): edges_[start .. next start)
  std::vector<Edge> edges_;
  std::vector<double> row_m_per_deg_lon_, row_m_per_deg_lat_;  // LocalMetric at each row centre
  static constexpr int kBlock = 16;    // cells per side of one coarse block
  static constexpr std::size_t kBlockCells = kBlock * kBlock;
  int block_nx_ = 0;                   // coarse blocks per row
  std::vector<std::uint8_t> occupied_; // per coarse block: 1 if any cell is not "none"
  std::vector<std::uint32_t> block_slot_;  // per occupied block: its place in cells_ (in blocks)
  std::size_t block_of(int ix, int iy) const noexcept {
    return static_cast<std::size_t>(iy / kBlock) * static_cast<std::size_t>(block_nx_) +
           static_cast<std::size_t>(ix / kBlock);
  }
  static std::size_t within_block(int ix, int iy) noexcept {
    return static_cast<std::size_t>(iy % kBlock) * kBlock + static_cast<std::size_t>(ix % kBlock);
  }
  std::uint64_t serial_ = 0;
};

}  // namespace cullcast::reefs
