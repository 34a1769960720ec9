#pragma once
// CONTRACT. (lon, lat) -> reef index in O(1) on average: a raster index finer
// than the smallest reef; exact point-in-polygon only in cells crossed by an
// edge. An optional settlement buffer (metres, geodesic) widens each reef.
#include <cstdint>
#include <vector>

#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::reefs {

class ReefLookup {
 public:
  ReefLookup(const ReefSet& reefs, double buffer_m);
  // Reef index, or -1 when over no reef. Thread-safe, never throws or allocates.
  // Where reefs (or their buffers) overlap, the lowest index wins.
  int reef_at(double lon, double lat) const noexcept;
  // (implementation members are the helper's choice)
 private:
  struct Cell;
  // ...
};

}  // namespace cullcast::reefs
