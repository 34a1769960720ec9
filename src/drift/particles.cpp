#include "cullcast/drift/particles.hpp"

namespace cullcast::drift {

void ParticleSet::resize(std::size_t n) {
  lon.assign(n, 0.0);
  lat.assign(n, 0.0);
  depth_m.assign(n, 0.0f);
  release_s.assign(n, 0.0f);
  weight.assign(n, 1.0);
  source.assign(n, 0);
  index.assign(n, 0);
  fate.assign(n, Fate::waiting);
  reef.assign(n, -1);
  development_s.clear();
  food_log2_s.clear();
  walk_next.clear();
  walk_next_step = kNoWalkCache;
}

void ParticleSet::enable_development() {
  development_s.assign(size(), 0.0f);
  food_log2_s.assign(size(), 0.0f);
}

}  // namespace cullcast::drift
