#pragma once
// Particles of one spawning event as a structure of arrays: the hot loop
// touches only the arrays it needs. 45 bytes per particle, 53 when the grid
// stepper keeps walk deviates.
#include <cstdint>
#include <vector>

namespace cullcast::drift {

// A particle's fate. Only `waiting` and `drifting` change; the rest are final.
enum class Fate : std::uint8_t {
  waiting = 0,   // not released yet
  drifting = 1,  // in the water, alive
  settled = 2,   // settled on a reef
  died = 3,      // mortality, or older than the end of competency
  stranded = 4,  // a step would have ended on land (land = "strand")
  lost = 5,      // left the currents grid
};

struct ParticleSet {
  std::vector<double> lon;           // degrees east
  std::vector<double> lat;           // degrees north
  std::vector<float> depth_m;        // metres below the surface
  std::vector<float> release_s;      // release time, seconds after the event start
  std::vector<double> weight;        // larvae represented (decays under weight mortality)
  std::vector<std::uint32_t> source; // index of the release source
  std::vector<std::uint32_t> index;  // index within the source (random streams)
  std::vector<Fate> fate;
  std::vector<std::int32_t> reef;    // settled reef, or -1
  // Only with temperature/food effects (enable_development()); empty otherwise.
  std::vector<float> development_s;  // development age, seconds at the reference temperature
  std::vector<float> food_log2_s;    // integral of log2(chlorophyll mg m-3) dt before competency, s
  // The random walk's deviates of step `walk_next_step` of event
  // `walk_next_event`, two per particle, kept by the grid stepper from the
  // step before (CounterRandom::walk_normal2: steps 2m and 2m+1 share one
  // generator block). Valid for particles drifting at that step's start;
  // a pure function of each particle's stream, so copies stay valid and
  // anything else (a loaded checkpoint) just leaves it unset.
  static constexpr std::uint32_t kNoWalkCache = 0xFFFFFFFFu;
  std::vector<float> walk_next;
  std::uint32_t walk_next_step = kNoWalkCache;
  std::uint32_t walk_next_event = 0;

  std::size_t size() const { return lon.size(); }
  void resize(std::size_t n);
  void enable_development();  // sizes development_s and food_log2_s to size(), zeroed
  static constexpr std::size_t bytes_per_particle =
      2 * sizeof(double) + 2 * sizeof(float) + sizeof(double) + 2 * sizeof(std::uint32_t) +
      sizeof(Fate) + sizeof(std::int32_t);
  static constexpr std::size_t walk_cache_bytes_per_particle = 2 * sizeof(float);
};

}  // namespace cullcast::drift
