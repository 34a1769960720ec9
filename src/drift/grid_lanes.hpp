#pragma once
// The grid stepper's kernel: one batch of kLanes particles moved through a
// whole step (RK stages, random walk, where it ended) with every loop running
// over the full batch width, free of calls and branches, so the compiler
// turns each into vector instructions. grid_stepper.cpp compiles it once per
// instruction set (baseline x86-64, AVX2, AVX-512) and picks one at run time;
// with no fused multiply-add contraction (CMakeLists.txt) and only IEEE
// operations (+ − × ÷ √, conversions), every variant gives the same bits.
//
// Each lane's arithmetic depends only on its own particle, so results do not
// depend on the batching (nor on the thread count) either.
#include <bit>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <utility>

#include "cullcast/base/random.hpp"
#include "cullcast/drift/integrator.hpp"

namespace cullcast::drift::lanes {

constexpr int kLanes = 64;
constexpr double kRad = 3.14159265358979323846 / 180.0;

// The grid as the kernel needs it (copied out of the FlowSampler once per step).
struct Grid {
  double lon0, lat0;          // first node, degrees
  double inv_dlon, inv_dlat;  // nodes per degree
  double gx_max, gy_max;      // last node index, as doubles
  std::int32_t nx, ny;        // nodes (2·nx·ny < 2^31: GridStepper::applies)
  const std::int32_t* wet;    // top level: 0 land, 1 water, 2 water near a reef (32-bit: loads the compiler can gather)
  const double* row_sin;      // sine and cosine of each row's latitude
  const double* row_cos;
  double dlon, dlat;           // degrees between columns, rows
  double period_cells;        // columns to 360 degrees (longitudes wrap by it)
  // Earth model (earth_model.hpp): e², 1/(a·rad), and the factors of the
  // sphere's and the ellipsoid's north metric.
  double e2, inv_a_rad, north_sphere, north_ellipsoid;
  // Fine grids: the slices hold cells per second (the metric folded in per
  // row); metres per cell at each row turn them back into speeds for the
  // Courant check.
  bool folded;
  const float* row_m_per_cell_x;
  const float* row_m_per_cell_y;
  const double* row_east;     // degrees per metre at each row (the random walk)
  const double* row_north;
};

// What one step needs besides the grid.
struct StepPlan {
  const float* uv0;   // stage slices at t0, t0 + dt/2, t0 + dt (interleaved u, v)
  const float* mid;
  const float* end;
  Scheme scheme;
  double dt_s;        // seconds
  double walk_m;      // one standard deviation of the random walk per axis, metres (0: none)
  const CounterRandom* rng;
  std::uint32_t event, step;
};

// Where a lane ended its step (CurrentField::status's rule: nearest node's
// mask). kNearReef is water whose node's cell may hold a reef: elsewhere the
// reef look-up is sure to find none.
enum Where : std::int32_t { kWater = 0, kLand = 1, kOutside = 2, kNearReef = 3 };

// One batch. Lanes at or past the batch's count repeat lane 0 (the kernel
// always runs the full width; their results are ignored).
struct Batch {
  alignas(64) double lon0[kLanes];  // position at the step's start, degrees
  alignas(64) double lat0[kLanes];
  alignas(64) double lon[kLanes];   // position at its end (written by the kernel)
  alignas(64) double lat[kLanes];
  alignas(64) double speed[kLanes];  // largest stage speed, m/s (written)
  alignas(64) std::uint32_t source[kLanes];    // stream ids: read only when the
  alignas(64) std::uint32_t particle[kLanes];  // kernel draws walk deviates
  alignas(64) std::int32_t where[kLanes];  // Where (written)
  // The random walk's deviates (CounterRandom::walk_normal2). With
  // `walk_cached` (an odd step whose pair the even step kept) they are this
  // step's, read; otherwise the kernel draws the pair block, and on an even
  // step leaves the odd step's deviates here for the caller to keep.
  alignas(64) float walk0[kLanes];
  alignas(64) float walk1[kLanes];
  bool walk_cached;
};

// floor(q) for |q| < 2^51 by rounding through 1.5·2^52: plain double
// arithmetic, so it vectorises on any x86-64 (std::floor needs SSE4.1).
inline double floor_by_rounding(double q) noexcept {
  const double r = (q + 0x1.8p52) - 0x1.8p52;  // nearest integer
  return r - (r > q ? 1.0 : 0.0);
}

// Longitudes east of the grid's start, in [0, 360): a multiplication, not a
// division (several times cheaper in vector units); the two corrections
// catch the product's rounding next to multiples of 360.
inline double wrap_degrees(double x) noexcept {
  double wrapped = x - 360.0 * floor_by_rounding(x * (1.0 / 360.0));
  wrapped = wrapped >= 360.0 ? wrapped - 360.0 : wrapped;
  wrapped = wrapped < 0.0 ? wrapped + 360.0 : wrapped;
  return ((x < 0.0) | (x >= 360.0)) ? wrapped : x;
}

// The cell holding a position: its south-west node (i, j) and the fractions
// (fx, fy) across it, with (0, 0) standing in outside the grid (also for
// NaN); `inside` says which. Conditions are combined with & and | (not &&
// and ||) so the loops calling this stay free of branches.
//
// `Wrap`: longitudes are first brought into [0, 360) east of the grid's
// start. A batch whose every start lies in [0, 300) east of a grid narrower
// than 300 degrees skips that (wrap_needed()): within a step positions then
// stay within a few degrees of the start — far inside (-60, 360) — where a
// position west of the grid is outside either way (wrapped, it would lie
// more than 300 degrees east), so both forms give the same bits.
template <bool Wrap>
inline void cell(const Grid& g, double lon, double lat, std::int32_t& i, std::int32_t& j, double& fx, double& fy,
                 bool& inside) noexcept {
  double x = lon - g.lon0;
  if constexpr (Wrap) x = wrap_degrees(x);
  const double gx = x * g.inv_dlon, gy = (lat - g.lat0) * g.inv_dlat;
  inside = (gx >= 0.0) & (gx <= g.gx_max) & (gy >= 0.0) & (gy <= g.gy_max);
  const double cx = inside ? gx : 0.0, cy = inside ? gy : 0.0;
  const std::int32_t i_max = g.nx - 2, j_max = g.ny - 2;
  i = static_cast<std::int32_t>(cx);
  j = static_cast<std::int32_t>(cy);
  i = i > i_max ? i_max : i;  // the last node belongs to the cell before it
  j = j > j_max ? j_max : j;
  fx = cx - static_cast<double>(i);
  fy = cy - static_cast<double>(j);
}

// The grid row nearest a latitude, clamped to the grid (also NaN -> row 0).
inline std::int32_t nearest_row(const Grid& g, double lat) noexcept {
  double r = (lat - g.lat0) * g.inv_dlat + 0.5;
  r = r >= 0.0 ? (r > g.gy_max ? g.gy_max : r) : 0.0;
  return static_cast<std::int32_t>(r);
}

// The (u, v) values at the four corners of every lane's cell, lane by lane
// in each array (structure of arrays, as the weighting loop wants them).
struct Corners {
  alignas(64) float u00[kLanes], v00[kLanes], u10[kLanes], v10[kLanes];  // south row: west, east node
  alignas(64) float u01[kLanes], v01[kLanes], u11[kLanes], v11[kLanes];  // north row
};

// One row of a cell is four contiguous floats (u, v of its west node, then
// of its east node): one 128-bit load per row and lane, and 4 x 4
// transposes inside 128-bit blocks turn them into the four arrays. With
// vectors of `Width` floats (4 SSE2, 8 AVX2, 16 AVX-512), lanes l, l + 4,
// l + 8 ... of a group of Width lanes share a vector, one per 128-bit
// block, so the transposes leave every array's lanes in order; each array
// is then stored whole, and the loops that read it take it straight from
// the store (narrower stores than the loads that read them stall the
// processor until they reach the cache). The compiler's own form of this
// loop fetches every node separately through emulated gathers, with twice
// the loads and many more shuffles; the processor's gathers were no faster.
// Only loads and shuffles: the values, and so the results, are the same
// bits either way.
namespace shuffle {
// (GCC drops vector_size from an alias template whose size depends on its
// parameter, hence one specialisation per width.)
template <int Width>
struct FloatsOf;
template <>
struct FloatsOf<4> {
  using type = float __attribute__((vector_size(16)));
};
template <>
struct FloatsOf<8> {
  using type = float __attribute__((vector_size(32)));
};
template <>
struct FloatsOf<16> {
  using type = float __attribute__((vector_size(64)));
};
template <int Width>
using Floats = typename FloatsOf<Width>::type;

// Element i of the interleave of a and b (indices Width.. are b's) within
// each 128-bit block: the low (Half = 0) or high (1) pair of a and b's
// 32-bit (Pairs = false) or 64-bit (true) elements.
template <int Width, bool Pairs, int Half>
constexpr int interleave(int i) {
  const int block = i / 4 * 4, k = i % 4;
  const int from_b = Pairs ? k / 2 : k % 2;
  const int within = Pairs ? 2 * Half + k % 2 : 2 * Half + k / 2;
  return block + within + (from_b ? Width : 0);
}
// (Vectors wider than the baseline's registers go through references:
// passed by value they would have an ABI of their own per instruction set.)
template <int Width, bool Pairs, int Half, class V, std::size_t... I>
[[gnu::always_inline]] inline void interleave(const V& a, const V& b, V& out, std::index_sequence<I...>) noexcept {
  out = __builtin_shufflevector(a, b, interleave<Width, Pairs, Half>(static_cast<int>(I))...);
}

// Rows of lanes first, first + 4, ... (one per 128-bit block).
template <int Width>
[[gnu::always_inline]] inline void rows(const float* uv, const std::uint32_t* k, Floats<Width>& out) noexcept {
  if constexpr (Width == 4) {
    std::memcpy(&out, uv + k[0], sizeof out);
  } else {
    Floats<Width / 2> low, high;
    rows<Width / 2>(uv, k, low);
    rows<Width / 2>(uv, k + Width / 8, high);
    if constexpr (Width == 8) {
      out = __builtin_shufflevector(low, high, 0, 1, 2, 3, 4, 5, 6, 7);
    } else {
      out = __builtin_shufflevector(low, high, 0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15);
    }
  }
}
}  // namespace shuffle

template <int Width>
[[gnu::always_inline]] inline void row_corners(const float* uv, const std::uint32_t* k, float* west_u,
                                               float* west_v, float* east_u, float* east_v) noexcept {
  static_assert(Width == 4 || Width == 8 || Width == 16, "4, 8 or 16 floats per vector");
  static_assert(kLanes % Width == 0);
  using V = shuffle::Floats<Width>;
  constexpr auto all = std::make_index_sequence<Width>{};
  for (int first = 0; first < kLanes; first += Width) {
    // Vector r holds lanes first + r, first + r + 4, ... (one per block).
    alignas(64) std::uint32_t order[Width];
    for (int r = 0; r < 4; ++r) {
      for (int m = 0; m < Width / 4; ++m) order[r * (Width / 4) + m] = k[first + 4 * m + r];
    }
    V a, b, c, d;
    shuffle::rows<Width>(uv, order, a);
    shuffle::rows<Width>(uv, order + Width / 4, b);
    shuffle::rows<Width>(uv, order + 2 * (Width / 4), c);
    shuffle::rows<Width>(uv, order + 3 * (Width / 4), d);
    V ab_lo, ab_hi, cd_lo, cd_hi, wu, wv, eu, ev;
    shuffle::interleave<Width, false, 0>(a, b, ab_lo, all);
    shuffle::interleave<Width, false, 1>(a, b, ab_hi, all);
    shuffle::interleave<Width, false, 0>(c, d, cd_lo, all);
    shuffle::interleave<Width, false, 1>(c, d, cd_hi, all);
    shuffle::interleave<Width, true, 0>(ab_lo, cd_lo, wu, all);
    shuffle::interleave<Width, true, 1>(ab_lo, cd_lo, wv, all);
    shuffle::interleave<Width, true, 0>(ab_hi, cd_hi, eu, all);
    shuffle::interleave<Width, true, 1>(ab_hi, cd_hi, ev, all);
    std::memcpy(west_u + first, &wu, sizeof wu);
    std::memcpy(west_v + first, &wv, sizeof wv);
    std::memcpy(east_u + first, &eu, sizeof eu);
    std::memcpy(east_v + first, &ev, sizeof ev);
  }
}

// Where the lanes are during a step, in grid units: the node (i, j) south-
// west of the step's start plus single-precision offsets in cells (fx, fy).
// The RK stages move only the offsets — a few cells at most — so their cell
// arithmetic runs in single precision (twice the lanes per vector of
// double) with a resolution of about 1e-7 of a cell, as fine as the float
// currents and weights it feeds; positions themselves stay double.
struct Origin {
  alignas(64) std::int32_t i[kLanes], j[kLanes];
  alignas(64) float fx[kLanes], fy[kLanes];
};

// Grid units beyond which a position is far off the grid either way; it
// keeps every conversion to int32 (and the float floor below) in range.
constexpr double kFarCells = 1.0e6;
constexpr float kFarCellsF = 1.0e6f;

// The same in grid units, `period` cells to 360 degrees.
inline double wrap_cells(double gx, double period) noexcept {
  double wrapped = gx - period * floor_by_rounding(gx * (1.0 / period));
  wrapped = wrapped >= period ? wrapped - period : wrapped;
  wrapped = wrapped < 0.0 ? wrapped + period : wrapped;
  return ((gx < 0.0) | (gx >= period)) ? wrapped : gx;
}

// floor(q) in single precision for |q| < 2^22, by rounding through 1.5·2^23.
// The correction is a bit mask, not a select: GCC 12 would otherwise carry
// both candidates into later comparisons and stop vectorising.
inline float floor_by_rounding(float q) noexcept {
  const float r = (q + 0x1.8p23f) - 0x1.8p23f;
  const std::uint32_t above = 0u - static_cast<std::uint32_t>(r > q);
  return r - std::bit_cast<float>(above & std::bit_cast<std::uint32_t>(1.0f));
}

// Each lane's start in grid units (NaN or far off: a node far off the grid).
// With `Wrap`, longitudes first come into [0, 360) east of the grid's start.
// The floor comes from truncating the position moved 2^20 cells east
// (positive there): the fraction then keeps 2^-32 of a cell, far finer than
// the single precision it goes on in.
template <bool Wrap>
[[gnu::always_inline]] inline void origin(const Grid& g, const double* __restrict lon, const double* __restrict lat,
                                          Origin& o) noexcept {
  const Grid local = g;
  constexpr double kShift = 1048576.0;  // 2^20 > kFarCells
  constexpr std::int32_t kShiftCells = 1048576;
  for (int l = 0; l < kLanes; ++l) {
    double x = lon[l] - local.lon0;
    if constexpr (Wrap) x = wrap_degrees(x);
    double gx = x * local.inv_dlon, gy = (lat[l] - local.lat0) * local.inv_dlat;
    gx = gx > -kFarCells ? gx : -kFarCells;  // also NaN
    gy = gy > -kFarCells ? gy : -kFarCells;
    gx = (gx < kFarCells ? gx : kFarCells) + kShift;
    gy = (gy < kFarCells ? gy : kFarCells) + kShift;
    const std::int32_t ix = static_cast<std::int32_t>(gx), iy = static_cast<std::int32_t>(gy);
    o.i[l] = ix - kShiftCells;
    o.j[l] = iy - kShiftCells;
    o.fx[l] = static_cast<float>(gx - static_cast<double>(ix));
    o.fy[l] = static_cast<float>(gy - static_cast<double>(iy));
  }
}

// The cell along one axis of a lane `offset` cells from node `base`: its
// first node `index` and the fraction `w` across it; returns 1 when the
// position lies on the grid's `nodes` (the last node belongs to the cell
// before it), else 0. Flags are 32-bit integers combined with & (not bools
// and &&), so the loops calling this stay free of branches and vectorise.
template <int Width>
inline std::int32_t axis_cell(std::int32_t base, float offset, std::int32_t nodes, std::int32_t& index,
                              float& w) noexcept {
  offset = offset >= -kFarCellsF ? offset : -kFarCellsF;  // also NaN
  offset = offset > kFarCellsF ? kFarCellsF : offset;
  // (AVX2 and AVX-512 round in one instruction; the baseline's SSE2 cannot)
  float f;
  if constexpr (Width > 4) {
    f = __builtin_floorf(offset);
  } else {
    f = floor_by_rounding(offset);
  }
  const std::int32_t k = base + static_cast<std::int32_t>(f);
  index = k < nodes - 2 ? k : nodes - 2;
  // Across the last cell: 1 on the last node, more beyond it.
  w = (offset - f) + static_cast<float>(k - index);
  return static_cast<std::int32_t>(k >= 0) & static_cast<std::int32_t>(w <= 1.0f);
}

// The same along longitude on a batch that needs wrapping: the position
// brought into [0, 360) degrees east of the grid's start in double
// precision. A lane already there gets axis_cell()'s bits exactly (base +
// offset, its floor and their difference are exact in double).
template <int Width>
inline std::int32_t axis_cell_wrapped(const Grid& g, std::int32_t base, float offset, std::int32_t& index,
                                      float& w) noexcept {
  offset = offset >= -kFarCellsF ? offset : -kFarCellsF;  // also NaN
  offset = offset > kFarCellsF ? kFarCellsF : offset;
  const double gx = wrap_cells(static_cast<double>(base) + static_cast<double>(offset), g.period_cells);
  const double bx = floor_by_rounding(gx);
  return axis_cell<Width>(static_cast<std::int32_t>(bx), static_cast<float>(gx - bx), g.nx, index, w);
}

// `value` where `keep`, else +0.0f, as bit operations: a select the compiler
// could turn back into a branch around the loads feeding `value`, which
// would keep the loop from vectorising.
inline float keep_or_zero(bool keep, float value) noexcept {
  const std::uint32_t mask = 0u - static_cast<std::uint32_t>(keep);
  return std::bit_cast<float>(std::bit_cast<std::uint32_t>(value) & mask);
}

// Velocity of every lane at offsets (px, py) from its origin, from one
// stage slice, bilinear in space, 0 off the grid (as CurrentField::sample()).
template <bool Wrap, int Width>
[[gnu::always_inline]] inline void velocity(const Grid& g, const float* uv, const Origin& o,
                                            const float* __restrict px, const float* __restrict py,
                                            float* __restrict u, float* __restrict v) noexcept {
  const Grid local = g;  // a copy the stores below cannot alias (keeps it in registers)
  const auto nx = static_cast<std::uint32_t>(local.nx);
  alignas(64) std::uint32_t south[kLanes], north[kLanes];  // offsets of the cell's rows in uv
  alignas(64) float wx[kLanes], wy[kLanes];                // fractions across the cell
  alignas(64) std::uint32_t keep[kLanes];                  // 1 on the grid
  for (int l = 0; l < kLanes; ++l) {
    std::int32_t i, j;
    float fx, fy;
    std::int32_t in_x;
    if constexpr (Wrap) {
      in_x = axis_cell_wrapped<Width>(local, o.i[l], px[l], i, fx);
    } else {
      in_x = axis_cell<Width>(o.i[l], px[l], local.nx, i, fx);
    }
    const std::int32_t inside = in_x & axis_cell<Width>(o.j[l], py[l], local.ny, j, fy);
    i = inside ? i : 0;
    j = inside ? j : 0;
    // Unsigned 32-bit offsets: they widen to addresses without SSE4.1.
    south[l] = 2 * (static_cast<std::uint32_t>(j) * nx + static_cast<std::uint32_t>(i));
    north[l] = south[l] + 2 * nx;
    wx[l] = inside ? fx : 0.0f;
    wy[l] = inside ? fy : 0.0f;
    keep[l] = static_cast<std::uint32_t>(inside);
  }
  Corners c;
  row_corners<Width>(uv, south, c.u00, c.v00, c.u10, c.v10);
  row_corners<Width>(uv, north, c.u01, c.v01, c.u11, c.v11);
  for (int l = 0; l < kLanes; ++l) {
    const float gx = wx[l], gy = wy[l];
    const float w00 = (1 - gx) * (1 - gy), w10 = gx * (1 - gy), w01 = (1 - gx) * gy, w11 = gx * gy;
    const float uu = w00 * c.u00[l] + w10 * c.u10[l] + w01 * c.u01[l] + w11 * c.u11[l];
    const float vv = w00 * c.v00[l] + w10 * c.v10[l] + w01 * c.v01[l] + w11 * c.v11[l];
    u[l] = keep_or_zero(keep[l] != 0, uu);
    v[l] = keep_or_zero(keep[l] != 0, vv);
  }
}

// Degrees per metre east and north of the Earth model at sin/cos of a latitude.
template <bool Sphere>
inline void metric_from(const Grid& g, double s, double c, double& east, double& north) noexcept {
  if constexpr (Sphere) {
    north = g.north_sphere;
    east = g.north_sphere / c;
  } else {
    const double w = 1.0 - g.e2 * s * s, root = std::sqrt(w);
    north = w * root * g.north_ellipsoid;
    east = root * g.inv_a_rad / c;
  }
}

// Degrees per metre east and north at every lane's latitude: from the
// nearest tabulated row by a Taylor step (|d| <= half a row, at most 1
// degree: the truncation error of the series is under 1e-16 there). A lane
// beyond the grid's rows (a particle on its way out) gets the library's
// sine and cosine in a scalar pass afterwards.
template <bool Sphere>
[[gnu::always_inline]] inline void metric_lanes(const Grid& g, const double* lat, double* east,
                                                double* north) noexcept {
  const Grid local = g;
  std::int32_t far[kLanes];
  for (int l = 0; l < kLanes; ++l) {
    const std::int32_t j = nearest_row(local, lat[l]);
    const double d = (lat[l] - (local.lat0 + static_cast<double>(j) * local.dlat)) * kRad;
    const double d2 = d * d;
    const double cd = 1 - d2 * (0.5 - d2 * (1.0 / 24 - d2 * (1.0 / 720 - d2 * (1.0 / 40320))));
    const double sd = d * (1 - d2 * (1.0 / 6 - d2 * (1.0 / 120 - d2 * (1.0 / 5040 - d2 * (1.0 / 362880)))));
    const double rs = local.row_sin[j], rc = local.row_cos[j];
    const double s = rs * cd + rc * sd;
    const double c = rc * cd - rs * sd;
    far[l] = std::fabs(d) <= 0.0175 ? 0 : 1;
    metric_from<Sphere>(local, s, c, east[l], north[l]);
  }
  for (int l = 0; l < kLanes; ++l) {
    if (far[l]) metric_from<Sphere>(local, std::sin(lat[l] * kRad), std::cos(lat[l] * kRad), east[l], north[l]);
  }
}

[[gnu::always_inline]] inline void metric(const Grid& g, const double* lat, double* east, double* north) noexcept {
  if (g.e2 == 0.0) {
    metric_lanes<true>(g, lat, east, north);
  } else {
    metric_lanes<false>(g, lat, east, north);
  }
}

// The metric of the row nearest each lane's start: metres per cell (for
// speeds on fine grids) and degrees per metre (for the random walk).
struct StartRows {
  alignas(64) float m_x[kLanes], m_y[kLanes];
  alignas(64) double east[kLanes], north[kLanes];
};
// The rows come first in a loop of their own (vector instructions), then
// the table loads in a plain loop (this processor's gather instructions are
// no faster than separate loads).
[[gnu::always_inline]] inline void start_rows(const Grid& g, const Batch& b, StartRows& rows) noexcept {
  const Grid local = g;
  alignas(64) std::uint32_t row[kLanes];
  for (int l = 0; l < kLanes; ++l) row[l] = static_cast<std::uint32_t>(nearest_row(local, b.lat0[l]));
  for (int l = 0; l < kLanes; ++l) {
    const std::uint32_t j = row[l];
    rows.m_x[l] = local.row_m_per_cell_x[j];
    rows.m_y[l] = local.row_m_per_cell_y[j];
    rows.east[l] = local.row_east[j];
    rows.north[l] = local.row_north[j];
  }
}

// d(offset)/dt (cells per second) of every lane at offsets (px, py) from
// one stage slice; keeps each lane's largest speed (m/s). Fine grids hold
// cells per second in their slices already, and their speeds use the
// metres per cell of the row where the lane started the step (within about
// 1e-4 of the stage's own row: plenty for a Courant check). Coarse grids
// hold m/s, turned into cells per second with the exact metric at the
// stage's latitude.
template <bool Wrap, int Width>
[[gnu::always_inline]] inline void rates(const Grid& g, const float* uv, const Origin& o, const float* __restrict px,
                                         const float* __restrict py, float* __restrict ka, float* __restrict kb,
                                         float* __restrict speed, const StartRows& rows) noexcept {
  velocity<Wrap, Width>(g, uv, o, px, py, ka, kb);
  if (g.folded) {
    for (int l = 0; l < kLanes; ++l) {
      const float sp = std::fabs(ka[l]) * rows.m_x[l] + std::fabs(kb[l]) * rows.m_y[l];
      speed[l] = sp > speed[l] ? sp : speed[l];
    }
    return;
  }
  alignas(64) double lat[kLanes], east[kLanes], north[kLanes];
  const Grid local = g;
  for (int l = 0; l < kLanes; ++l) {
    lat[l] = local.lat0 + (static_cast<double>(o.j[l]) + static_cast<double>(py[l])) * local.dlat;
  }
  metric(g, lat, east, north);
  for (int l = 0; l < kLanes; ++l) {
    const float sp = std::fabs(ka[l]) + std::fabs(kb[l]);
    speed[l] = sp > speed[l] ? sp : speed[l];
    ka[l] = static_cast<float>(static_cast<double>(ka[l]) * (east[l] * local.inv_dlon));
    kb[l] = static_cast<float>(static_cast<double>(kb[l]) * (north[l] * local.inv_dlat));
  }
}

// Water, land or outside for every lane's end position. Separate restrict
// pointers, not the Batch: through one struct the compiler cannot tell the
// stores from the loads and leaves the loop scalar.
template <bool Wrap>
[[gnu::always_inline]] inline void where(const Grid& g, const double* __restrict lon, const double* __restrict lat,
                                         std::int32_t* __restrict out) noexcept {
  const Grid local = g;
  const auto nx = static_cast<std::uint32_t>(local.nx);
  for (int l = 0; l < kLanes; ++l) {
    std::int32_t i, j;
    double fx, fy;
    bool inside;
    cell<Wrap>(local, lon[l], lat[l], i, j, fx, fy, inside);
    const std::int32_t in = i + (fx > 0.5 ? 1 : 0);  // the nearest node
    const std::int32_t jn = j + (fy > 0.5 ? 1 : 0);
    const std::int32_t wet = local.wet[static_cast<std::uint32_t>(jn) * nx + static_cast<std::uint32_t>(in)];
    const std::int32_t on_grid = wet == 0 ? kLand : (wet == 1 ? kWater : kNearReef);
    out[l] = inside ? on_grid : kOutside;
  }
}

// The whole step of one batch: the scheme's stages, then the random walk
// (Gaussian steps of walk_m per axis, the particle's own stream), then where
// each lane ended.
template <bool Wrap, int Width>
[[gnu::always_inline]] inline void advance_lanes(const Grid& g, const StepPlan& plan, Batch& b) noexcept {
  Origin o;
  origin<Wrap>(g, b.lon0, b.lat0, o);
  StartRows rows;  // fine grids only (speeds and the walk's metric)
  if (g.folded) start_rows(g, b, rows);
  alignas(64) float ka[kLanes], kb[kLanes], sum_a[kLanes], sum_b[kLanes], x[kLanes], y[kLanes], speed[kLanes];
  for (int l = 0; l < kLanes; ++l) speed[l] = 0;
  const double dt = plan.dt_s;
  const float h = static_cast<float>(0.5 * dt), full = static_cast<float>(dt);
  rates<Wrap, Width>(g, plan.uv0, o, o.fx, o.fy, ka, kb, speed, rows);
  // Cells per second to degrees over the step.
  double to_lon = dt * g.dlon, to_lat = dt * g.dlat;
  if (plan.scheme == Scheme::rk4) {
    for (int l = 0; l < kLanes; ++l) {
      sum_a[l] = ka[l], sum_b[l] = kb[l];
      x[l] = o.fx[l] + h * ka[l], y[l] = o.fy[l] + h * kb[l];
    }
    rates<Wrap, Width>(g, plan.mid, o, x, y, ka, kb, speed, rows);
    for (int l = 0; l < kLanes; ++l) {
      sum_a[l] += 2 * ka[l], sum_b[l] += 2 * kb[l];
      x[l] = o.fx[l] + h * ka[l], y[l] = o.fy[l] + h * kb[l];
    }
    rates<Wrap, Width>(g, plan.mid, o, x, y, ka, kb, speed, rows);
    for (int l = 0; l < kLanes; ++l) {
      sum_a[l] += 2 * ka[l], sum_b[l] += 2 * kb[l];
      x[l] = o.fx[l] + full * ka[l], y[l] = o.fy[l] + full * kb[l];
    }
    rates<Wrap, Width>(g, plan.end, o, x, y, ka, kb, speed, rows);
    for (int l = 0; l < kLanes; ++l) ka[l] = sum_a[l] + ka[l], kb[l] = sum_b[l] + kb[l];
    to_lon /= 6, to_lat /= 6;
  } else if (plan.scheme == Scheme::rk2) {
    for (int l = 0; l < kLanes; ++l) x[l] = o.fx[l] + h * ka[l], y[l] = o.fy[l] + h * kb[l];
    rates<Wrap, Width>(g, plan.mid, o, x, y, ka, kb, speed, rows);
  }
  for (int l = 0; l < kLanes; ++l) {
    b.lon[l] = b.lon0[l] + static_cast<double>(ka[l]) * to_lon;
    b.lat[l] = b.lat0[l] + static_cast<double>(kb[l]) * to_lat;
    b.speed[l] = static_cast<double>(speed[l]);
  }
  if (plan.walk_m > 0) {
    double z0[kLanes], z1[kLanes], east[kLanes], north[kLanes];
    if (!b.walk_cached) {
      // One generator block serves steps 2m and 2m + 1: the even step's pair
      // into z0/z1, the odd step's into walk0/walk1.
      plan.rng->template walk_normal4_batch<Width>(plan.event, b.source, b.particle, kLanes, plan.step >> 1, z0, z1,
                                                   b.walk0, b.walk1);
    }
    if ((plan.step & 1u) != 0) {  // an odd step: kept or just drawn, its pair is in walk0/walk1
      for (int l = 0; l < kLanes; ++l) z0[l] = b.walk0[l], z1[l] = b.walk1[l];
    }
    if (g.folded) {
      // Fine grids: the metric of the start row. A step moves a larva a
      // fraction of a row, over which degrees per metre change by under
      // tan φ·Δφ (3e-5 on a 1 km grid at 22°): far below the sampling error
      // of the walk itself.
      for (int l = 0; l < kLanes; ++l) east[l] = rows.east[l], north[l] = rows.north[l];
    } else {
      metric(g, b.lat, east, north);
    }
    const double walk = plan.walk_m;
    for (int l = 0; l < kLanes; ++l) {
      b.lon[l] += z0[l] * walk * east[l];
      b.lat[l] += z1[l] * walk * north[l];
    }
  }
  where<Wrap>(g, b.lon, b.lat, b.where);
}

// Whether a batch needs longitudes wrapped (see cell()). Currents (at most
// the decoder's speed limit) and the random walk (deviates capped at 5.9 σ)
// move a larva a few degrees per step at the very most.
[[gnu::always_inline]] inline bool wrap_needed(const Grid& g, const Batch& b) noexcept {
  if (g.gx_max / g.inv_dlon >= 300.0) return true;  // (nearly) global grid
  // Counted in double (a select between two doubles): a bool or integer
  // reduction of double comparisons is left scalar by GCC 12. Eight running
  // counts, one per lane of a vector: a single sum would be a chain of
  // dependent additions (the compiler may not reorder them).
  constexpr int kRunning = 8;
  const double lon0 = g.lon0;
  double far[kRunning] = {};
  for (int l = 0; l < kLanes; l += kRunning) {
    for (int k = 0; k < kRunning; ++k) {
      const double x = b.lon0[l + k] - lon0;
      far[k] += ((x >= 0.0) & (x < 300.0)) ? 0.0 : 1.0;  // also NaN
    }
  }
  double total = 0.0;
  for (double count : far) total += count;
  return total != 0.0;
}

// `Width`: floats per vector register of the instruction set the caller is
// compiled for (4 SSE2, 8 AVX2, 16 AVX-512; see row_corners).
template <int Width>
[[gnu::always_inline]] inline void advance(const Grid& g, const StepPlan& plan, Batch& b) noexcept {
  if (wrap_needed(g, b)) {
    advance_lanes<true, Width>(g, plan, b);
  } else {
    advance_lanes<false, Width>(g, plan, b);
  }
}

}  // namespace cullcast::drift::lanes
