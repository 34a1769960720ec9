#include "cullcast/reefs/reef_lookup.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>

#include "cullcast/reefs/reef_geometry.hpp"

namespace cullcast::reefs {
namespace {

constexpr double kMaxCells = 8.0e6;     // 32 MB of cell codes; lists and edges come on top
constexpr double kCellsPerSide = 8.0;   // cells across the smallest reef (sqrt of its area)
constexpr double kMinCellM = 1.0;       // no finer than 1 m
constexpr double kEpsM = 1e-3;          // 1 mm: cells are widened by this to absorb rounding

template <class F>
void for_each_edge(const Reef& reef, F&& f) {
  auto ring_edges = [&](const Ring& ring) {
    for (std::size_t i = 0; i + 1 < ring.size(); ++i) f(ring[i], ring[i + 1]);
  };
  for (const auto& part : reef.parts) {
    ring_edges(part.outer);
    for (const auto& hole : part.holes) ring_edges(hole);
  }
}

}  // namespace

ReefLookup::ReefLookup(const ReefSet& reefs, double buffer_m) : buffer_m_(std::max(0.0, buffer_m)) {
  static std::atomic<std::uint64_t> built{0};
  serial_ = ++built;
  const auto& all = reefs.reefs();
  if (all.empty()) return;

  // --- raster geometry -------------------------------------------------------
  double lon_min = 180, lon_max = -180, lat_min = 90, lat_max = -90;
  double min_side_m = std::numeric_limits<double>::infinity();
  for (const auto& r : all) {
    lon_min = std::min(lon_min, r.lon_min);
    lon_max = std::max(lon_max, r.lon_max);
    lat_min = std::min(lat_min, r.lat_min);
    lat_max = std::max(lat_max, r.lat_max);
    if (r.area_ha > 0) min_side_m = std::min(min_side_m, std::sqrt(r.area_ha * 1e4));
  }
  if (!std::isfinite(min_side_m)) min_side_m = 100;
  const LocalMetric mid = LocalMetric::at((lat_min + lat_max) / 2);
  // Degrees that certainly cover buffer_m: fewest metres per degree in the region.
  const double worst_lat = std::min(89.0, std::max(std::abs(lat_min), std::abs(lat_max)) + 1);
  const double pad_lon = buffer_m_ / LocalMetric::at(worst_lat).m_per_deg_lon;
  const double pad_lat = buffer_m_ / LocalMetric::at(0).m_per_deg_lat;
  const double width_m = (lon_max - lon_min + 2 * pad_lon) * mid.m_per_deg_lon;
  const double height_m = (lat_max - lat_min + 2 * pad_lat) * mid.m_per_deg_lat;
  double side_m = std::max(kMinCellM, min_side_m / kCellsPerSide);
  side_m = std::max(side_m, std::sqrt(width_m * height_m / kMaxCells));
  cell_size_m_ = side_m;
  dlon_ = side_m / mid.m_per_deg_lon;
  dlat_ = side_m / mid.m_per_deg_lat;
  inv_dlon_ = 1 / dlon_;
  inv_dlat_ = 1 / dlat_;
  lon0_ = lon_min - pad_lon - 2 * dlon_;
  lat0_ = lat_min - pad_lat - 2 * dlat_;
  nx_ = static_cast<int>(std::ceil((lon_max + pad_lon + 2 * dlon_ - lon0_) * inv_dlon_));
  ny_ = static_cast<int>(std::ceil((lat_max + pad_lat + 2 * dlat_ - lat0_) * inv_dlat_));
  row_m_per_deg_lon_.resize(static_cast<std::size_t>(ny_));
  row_m_per_deg_lat_.resize(static_cast<std::size_t>(ny_));
  for (int j = 0; j < ny_; ++j) {
    const LocalMetric m = LocalMetric::at(lat0_ + (j + 0.5) * dlat_);
    row_m_per_deg_lon_[static_cast<std::size_t>(j)] = m.m_per_deg_lon;
    row_m_per_deg_lat_[static_cast<std::size_t>(j)] = m.m_per_deg_lat;
  }
  buffer_rows_ = buffer_m_ > 0 ? static_cast<int>(std::ceil(pad_lat * inv_dlat_)) + 1 : 0;

  auto col_of = [&](double lon) {
    return std::clamp(static_cast<int>(std::floor((lon - lon0_) * inv_dlon_)), 0, nx_ - 1);
  };
  auto row_of = [&](double lat) {
    return std::clamp(static_cast<int>(std::floor((lat - lat0_) * inv_dlat_)), 0, ny_ - 1);
  };

  // Cells are stored block by block (kBlock x kBlock), a block only once a
  // cell of it gets a code other than "none": the build never touches the
  // whole raster, most of which is open water. Blocks come in the order
  // they are first written; the end puts them back in block order.
  block_nx_ = (nx_ + kBlock - 1) / kBlock;
  const int block_ny = (ny_ + kBlock - 1) / kBlock;
  constexpr std::uint32_t kNoSlot = std::numeric_limits<std::uint32_t>::max();
  block_slot_.assign(static_cast<std::size_t>(block_nx_) * static_cast<std::size_t>(block_ny), kNoSlot);
  std::vector<std::int32_t> written;  // blocks in order of first write
  auto cell = [&](int c, int r) -> std::int32_t& {
    std::uint32_t& slot = block_slot_[block_of(c, r)];
    if (slot == kNoSlot) {
      slot = static_cast<std::uint32_t>(written.size() / kBlockCells);
      written.resize(written.size() + kBlockCells, -1);
    }
    return written[static_cast<std::size_t>(slot) * kBlockCells + within_block(c, r)];
  };

  std::vector<std::vector<std::int32_t>> build_lists;
  std::vector<std::uint8_t> status;  // per window cell: 0 untouched, 1 check, 2 whole cell in buffer
  reef_rows_.resize(all.size());
  bucket_start_.push_back(0);

  for (std::size_t k = 0; k < all.size(); ++k) {
    const Reef& reef = all[k];
    const int c0 = col_of(reef.lon_min - pad_lon) - 1 < 0 ? 0 : col_of(reef.lon_min - pad_lon) - 1;
    const int c1 = std::min(nx_ - 1, col_of(reef.lon_max + pad_lon) + 1);
    const int r0 = std::max(0, row_of(reef.lat_min - pad_lat) - 1);
    const int r1 = std::min(ny_ - 1, row_of(reef.lat_max + pad_lat) + 1);
    const int w = c1 - c0 + 1, h = r1 - r0 + 1;

    // --- edges bucketed by the raster rows they span (for exact tests) ------
    ReefRows& rr = reef_rows_[k];
    rr.row_first = r0;
    rr.row_count = h;
    rr.bucket = bucket_start_.size() - 1;
    std::vector<std::uint32_t> counts(static_cast<std::size_t>(h), 0);
    for_each_edge(reef, [&](const LonLat& a, const LonLat& b) {
      const int ra = row_of(std::min(a.lat, b.lat)), rb = row_of(std::max(a.lat, b.lat));
      for (int r = std::max(ra, r0); r <= std::min(rb, r1); ++r) ++counts[static_cast<std::size_t>(r - r0)];
    });
    const std::size_t edge_base = edges_.size();
    std::vector<std::size_t> fill(static_cast<std::size_t>(h));
    std::size_t total = edge_base;
    for (int r = 0; r < h; ++r) {
      fill[static_cast<std::size_t>(r)] = total;
      total += counts[static_cast<std::size_t>(r)];
      bucket_start_.push_back(static_cast<std::uint32_t>(total));
    }
    edges_.resize(total);
    for_each_edge(reef, [&](const LonLat& a, const LonLat& b) {
      const int ra = row_of(std::min(a.lat, b.lat)), rb = row_of(std::max(a.lat, b.lat));
      for (int r = std::max(ra, r0); r <= std::min(rb, r1); ++r) {
        edges_[fill[static_cast<std::size_t>(r - r0)]++] = {a.lon, a.lat, b.lon, b.lat};
      }
    });

    // --- cells near an edge (within the buffer): exact test or whole-cell ---
    status.assign(static_cast<std::size_t>(w) * static_cast<std::size_t>(h), 0);
    for_each_edge(reef, [&](const LonLat& a, const LonLat& b) {
      const int ec0 = std::max(c0, col_of(std::min(a.lon, b.lon) - pad_lon) - 1);
      const int ec1 = std::min(c1, col_of(std::max(a.lon, b.lon) + pad_lon) + 1);
      const int er0 = std::max(r0, row_of(std::min(a.lat, b.lat) - pad_lat) - 1);
      const int er1 = std::min(r1, row_of(std::max(a.lat, b.lat) + pad_lat) + 1);
      for (int r = er0; r <= er1; ++r) {
        const double kx = row_m_per_deg_lon_[static_cast<std::size_t>(r)];
        const double ky = row_m_per_deg_lat_[static_cast<std::size_t>(r)];
        const double cell_lat = lat0_ + r * dlat_;
        const double ay = (a.lat - cell_lat) * ky, by = (b.lat - cell_lat) * ky;
        for (int c = ec0; c <= ec1; ++c) {
          std::uint8_t& s = status[static_cast<std::size_t>(r - r0) * static_cast<std::size_t>(w) +
                                   static_cast<std::size_t>(c - c0)];
          if (s == 2) continue;
          const double cell_lon = lon0_ + c * dlon_;
          const double ax = (a.lon - cell_lon) * kx, bx = (b.lon - cell_lon) * kx;
          const double x1 = dlon_ * kx, y1 = dlat_ * ky;
          const double dmin = planar::segment_rect_distance(ax, ay, bx, by, -kEpsM, -kEpsM,
                                                            x1 + kEpsM, y1 + kEpsM);
          if (dmin > buffer_m_ + kEpsM) continue;
          if (buffer_m_ > 0) {
            // Distance to a segment is convex: its maximum over the cell is at a corner.
            const double dmax2 = std::max({planar::segment_distance2(0, 0, ax, ay, bx, by),
                                           planar::segment_distance2(x1, 0, ax, ay, bx, by),
                                           planar::segment_distance2(0, y1, ax, ay, bx, by),
                                           planar::segment_distance2(x1, y1, ax, ay, bx, by)});
            if (std::sqrt(dmax2) <= buffer_m_ - kEpsM) {
              s = 2;
              continue;
            }
          }
          s = 1;
        }
      }
    });

    // --- merge into the raster, lowest reef index first ---------------------
    for (int r = r0; r <= r1; ++r) {
      for (int c = c0; c <= c1; ++c) {
        const std::uint8_t s = status[static_cast<std::size_t>(r - r0) * static_cast<std::size_t>(w) +
                                      static_cast<std::size_t>(c - c0)];
        bool always = s == 2;
        if (s == 0) {
          // No edge within the buffer of this cell: it is wholly inside or wholly out.
          always = inside_row(static_cast<int>(k), lon0_ + (c + 0.5) * dlon_, lat0_ + (r + 0.5) * dlat_, r);
          if (!always) continue;
        }
        std::int32_t& code = cell(c, r);  // never left "none" below
        const std::int32_t entry = static_cast<std::int32_t>(2 * k + (always ? 0 : 1));
        if (code >= 0) continue;  // a lower-index reef covers the whole cell
        if (code == -1) {
          if (always) {
            code = static_cast<std::int32_t>(k);
          } else {
            code = -2 - static_cast<std::int32_t>(build_lists.size());
            build_lists.push_back({entry});
          }
          continue;
        }
        auto& list = build_lists[static_cast<std::size_t>(-2 - code)];
        if ((list.back() & 1) == 0) continue;  // list already ends with a certain reef
        list.push_back(entry);
      }
    }
  }

  // --- coarse occupancy: most look-ups are over open water, and this small
  // table (one byte per kBlock x kBlock cells) answers them from cache. The
  // occupied blocks' cells are kept in block order: a larva's neighbours in
  // space then find theirs in the same few cache lines -------------------------
  occupied_.assign(block_slot_.size(), 0);
  cells_.assign(written.size(), -1);
  std::uint32_t slots = 0;
  for (std::size_t b = 0; b < block_slot_.size(); ++b) {
    if (block_slot_[b] == kNoSlot) {
      block_slot_[b] = 0;
      continue;
    }
    occupied_[b] = 1;
    std::copy_n(written.begin() + static_cast<std::ptrdiff_t>(block_slot_[b] * kBlockCells), kBlockCells,
                cells_.begin() + static_cast<std::ptrdiff_t>(slots * kBlockCells));
    block_slot_[b] = slots++;
  }

  // --- flatten candidate lists -----------------------------------------------
  list_start_.reserve(build_lists.size() + 1);
  list_start_.push_back(0);
  for (const auto& list : build_lists) {
    lists_.insert(lists_.end(), list.begin(), list.end());
    list_start_.push_back(static_cast<std::uint32_t>(lists_.size()));
  }
}

bool ReefLookup::inside_row(int reef, double lon, double lat, int row) const noexcept {
  const ReefRows& rr = reef_rows_[static_cast<std::size_t>(reef)];
  const int local = row - rr.row_first;
  if (local < 0 || local >= rr.row_count) return false;
  const std::size_t b = rr.bucket + static_cast<std::size_t>(local);
  bool inside = false;
  for (std::uint32_t i = bucket_start_[b]; i < bucket_start_[b + 1]; ++i) {
    const Edge& e = edges_[i];
    if ((e.y0 > lat) != (e.y1 > lat)) {
      const double x = e.x0 + (lat - e.y0) * (e.x1 - e.x0) / (e.y1 - e.y0);
      if (lon < x) inside = !inside;
    }
  }
  return inside;
}

bool ReefLookup::member(int reef, double lon, double lat, int row) const noexcept {
  if (inside_row(reef, lon, lat, row)) return true;
  if (buffer_m_ <= 0) return false;
  const ReefRows& rr = reef_rows_[static_cast<std::size_t>(reef)];
  const double kx = row_m_per_deg_lon_[static_cast<std::size_t>(row)];
  const double ky = row_m_per_deg_lat_[static_cast<std::size_t>(row)];
  const double limit2 = buffer_m_ * buffer_m_;
  const int first = std::max(0, row - rr.row_first - buffer_rows_);
  const int last = std::min(rr.row_count - 1, row - rr.row_first + buffer_rows_);
  for (int local = first; local <= last; ++local) {
    const std::size_t b = rr.bucket + static_cast<std::size_t>(local);
    for (std::uint32_t i = bucket_start_[b]; i < bucket_start_[b + 1]; ++i) {
      const Edge& e = edges_[i];
      const double d2 = planar::segment_distance2(0, 0, (e.x0 - lon) * kx, (e.y0 - lat) * ky,
                                                  (e.x1 - lon) * kx, (e.y1 - lat) * ky);
      if (d2 <= limit2) return true;
    }
  }
  return false;
}

int ReefLookup::from_candidates(std::int32_t code, double lon, double lat, int row) const noexcept {
  const std::size_t l = static_cast<std::size_t>(-2 - code);
  for (std::uint32_t i = list_start_[l]; i < list_start_[l + 1]; ++i) {
    const std::int32_t entry = lists_[i];
    const int reef = entry >> 1;
    if ((entry & 1) == 0 || member(reef, lon, lat, row)) return reef;
  }
  return -1;
}

bool ReefLookup::may_hold_reef(double lon_min, double lon_max, double lat_min, double lat_max) const noexcept {
  if (occupied_.empty()) return false;
  // The same arithmetic as reef_at(), which is monotonic in lon and lat, so
  // every point of the box maps into [fx0, fx1] x [fy0, fy1].
  const double fx0 = (lon_min - lon0_) * inv_dlon_, fx1 = (lon_max - lon0_) * inv_dlon_;
  const double fy0 = (lat_min - lat0_) * inv_dlat_, fy1 = (lat_max - lat0_) * inv_dlat_;
  if (std::isnan(fx0) || std::isnan(fx1) || std::isnan(fy0) || std::isnan(fy1)) return true;  // no claim
  if (fx1 < 0 || fy1 < 0 || fx0 >= nx_ || fy0 >= ny_) return false;  // reef_at() is -1 off the raster
  const int block_ny = static_cast<int>(occupied_.size() / static_cast<std::size_t>(block_nx_));
  auto block = [](double f, int cells) { return static_cast<int>(std::clamp(f, 0.0, cells - 1.0)) / kBlock; };
  const int bx0 = std::max(0, block(fx0, nx_) - 1), bx1 = std::min(block_nx_ - 1, block(fx1, nx_) + 1);
  const int by0 = std::max(0, block(fy0, ny_) - 1), by1 = std::min(block_ny - 1, block(fy1, ny_) + 1);
  for (int by = by0; by <= by1; ++by) {
    for (int bx = bx0; bx <= bx1; ++bx) {
      if (occupied_[static_cast<std::size_t>(by) * static_cast<std::size_t>(block_nx_) + static_cast<std::size_t>(bx)]) {
        return true;
      }
    }
  }
  return false;
}

std::size_t ReefLookup::edge_cell_count() const noexcept {
  return static_cast<std::size_t>(std::count_if(cells_.begin(), cells_.end(), [](std::int32_t c) { return c <= -2; }));
}

std::size_t ReefLookup::memory_bytes() const noexcept {
  return cells_.capacity() * sizeof(std::int32_t) + block_slot_.capacity() * sizeof(std::uint32_t) +
         list_start_.capacity() * sizeof(std::uint32_t) +
         lists_.capacity() * sizeof(std::int32_t) + reef_rows_.capacity() * sizeof(ReefRows) +
         bucket_start_.capacity() * sizeof(std::uint32_t) + edges_.capacity() * sizeof(Edge) +
         2 * row_m_per_deg_lon_.capacity() * sizeof(double) + occupied_.capacity();
}

}  // namespace cullcast::reefs
