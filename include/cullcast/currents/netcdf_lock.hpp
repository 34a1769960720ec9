#pragma once
// The NetCDF library (and HDF5 under it, as Debian builds them) is not
// thread-safe: two threads must never be inside it at once, even for
// different files. CurrentField decodes frames on a background thread
// (current_field.hpp), so the module's own readers and the drift module's
// writers hold this lock around their NetCDF calls. Code elsewhere runs only
// while no decoder is active (CurrentField::settle()).
#include <mutex>

namespace cullcast::currents {

// Recursive: a locked reader may call another (opening a file set decodes frames).
std::recursive_mutex& netcdf_mutex();

}  // namespace cullcast::currents
