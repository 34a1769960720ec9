#pragma once
// The drift step at one fixed depth with constant Kh — the core, and the
// core with temperature- and food-dependent development
// (larval_environment.hpp) — specialised for a regular grid with uniform
// spacing, the common case of a study.
// Same rules and the same random streams as drift_step() (drift_step.hpp);
// faster because of three choices (docs/performance.md):
//  - time (and depth) interpolation is done once per RK stage time on the
//    grid (CurrentField::horizontal_slice), not once per particle and stage;
//  - the RK stages work in grid units: a lane's start cell plus single-
//    precision offsets (src/drift/grid_lanes.hpp, Origin), twice the lanes
//    per vector of double; positions stay double;
//  - on fine grids the metres→cells factor of each row is folded into
//    those slices (bilinear interpolation of u/cos φ; the relative
//    difference bound is checked, see the constructor); on coarse grids the
//    sine and cosine of each row's latitude are tabulated, so the factor at
//    a particle is a short Taylor step from its row (no library call);
//  - the random walk's Box–Muller uses the inline log and sin/cos of
//    plain_math.hpp;
//  - particles go through the step in batches whose every loop is vector
//    instructions (src/drift/grid_lanes.hpp), compiled for baseline x86-64,
//    AVX2 and AVX-512 and chosen at run time, with the same bits on each.
// The results equal drift_step()'s up to floating-point rounding (the order
// of interpolation differs) and, on fine grids, the random walk's metric
// taken at the row where the step started (within 3e-5 of the exact one);
// the tests bound the difference.
#include <cstdint>
#include <functional>
#include <vector>

#include "cullcast/currents/current_field.hpp"
#include "cullcast/drift/drift_step.hpp"
#include "cullcast/drift/larval_environment.hpp"
#include "cullcast/reefs/reef_lookup.hpp"

namespace cullcast::drift {

// Instruction sets the stepper's kernel is compiled for (src/drift/grid_lanes.hpp).
enum class VectorIsa { baseline, avx2, avx512 };

class GridStepper {
 public:
  // The instruction sets this processor can run, narrowest first.
  static std::vector<VectorIsa> instruction_sets();
  static const char* isa_name(VectorIsa isa) noexcept;

  // True when this path applies: a regular grid with uniform lon and lat
  // spacing (at most 2 degrees), and every particle of the set at one depth.
  static bool applies(const currents::CurrentField& field, const ParticleSet& particles);

  // Uses the widest instruction set available, capped by the environment
  // variable CULLCAST_VECTOR_ISA (InputError when it names none of them).
  GridStepper(const currents::CurrentField& field, const EarthModel& earth);

  VectorIsa instruction_set() const noexcept { return isa_; }
  // Another instruction set from instruction_sets() (tests compare them).
  void use_instruction_set(VectorIsa isa) noexcept { isa_ = isa; }

  // One step, with drift_step()'s contract. The field must be prepared for
  // [event_start + step·dt, event_start + (step+1)·dt]. With `environment`
  // on, development follows the field's temperature and chlorophyll as in
  // drift_step() with StepExtras (p.enable_development() first).
  // `side_job`, if given, runs once on one of the step's threads while the
  // others move particles (run_drift: CurrentField::read_pending); it must
  // not touch the particles or what the step reads. Its exception, if any,
  // is rethrown after the step.
  StepTally step(ParticleSet& p, std::uint32_t step, const StepSettings& s, const LarvalClock& clock,
                 const reefs::ReefLookup& reefs, const CounterRandom& rng,
                 std::vector<std::uint8_t>& settled_now,
                 const LarvalEnvironment& environment = LarvalEnvironment(study::LarvaeSettings{}, false, false),
                 const std::function<void()>& side_job = {});

 private:
  const currents::CurrentField& field_;
  const EarthModel& earth_;
  VectorIsa isa_ = VectorIsa::baseline;
  std::vector<float> stage_uv_[3];         // (u, v) at the stage times t0, t0 + dt/2, t0 + dt
  std::vector<float> temperature_, chlorophyll_;  // scalar slices at t0 + dt/2 (CurrentField::scalar_slice)
  // The top level's nodes, one word each: 0 land, 1 water, 2 water where a
  // reef may lie within the node's cell (for the look-up of serial
  // reef_serial_; mark_reef_nodes()).
  std::vector<std::int32_t> wet_;
  std::uint64_t reef_serial_ = 0;
  void mark_reef_nodes(const reefs::ReefLookup& reefs);
  std::vector<double> row_sin_, row_cos_;  // sine and cosine of each row's latitude
  // Fine grids: the slices hold cells/s (the metric folded in per row).
  bool folded_ = false;
  std::vector<double> row_east_, row_north_;  // degrees per metre at each row
  std::vector<float> row_scale_;              // cells per metre at each row, as (east, north) pairs
  std::vector<float> row_m_per_cell_x_, row_m_per_cell_y_;  // metres per cell at each row (speeds)
  // The end slice of the last RK4 step and what it was computed from: the
  // next step's start slice when the key matches.
  bool end_reusable_ = false;
  currents::CurrentField::SliceKey end_key_;
};

}  // namespace cullcast::drift
