#include "cullcast/currents/netcdf_lock.hpp"

namespace cullcast::currents {

std::recursive_mutex& netcdf_mutex() {
  static std::recursive_mutex m;
  return m;
}

}  // namespace cullcast::currents
