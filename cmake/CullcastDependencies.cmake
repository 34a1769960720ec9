# Finds every Debian 12 package cullcast builds against, with a message that
# names the package to install when one is missing.
find_package(PkgConfig)
if(NOT PkgConfig_FOUND)
  message(FATAL_ERROR "pkg-config not found: apt-get install pkg-config")
endif()

macro(cullcast_require found package)
  if(NOT ${found})
    message(FATAL_ERROR "cullcast needs the Debian package '${package}': apt-get install ${package} (or run: bash tools/setup.sh deps)")
  endif()
endmacro()

find_package(tomlplusplus QUIET)
cullcast_require(tomlplusplus_FOUND libtomlplusplus-dev)

pkg_check_modules(NETCDF_CXX QUIET IMPORTED_TARGET netcdf-cxx4)
cullcast_require(NETCDF_CXX_FOUND libnetcdf-c++4-dev)
# HDF5 (under NetCDF-4) directly, for one call: silencing its error printing
# on the currents' background decoder thread (current_field.cpp).
pkg_check_modules(HDF5_C QUIET IMPORTED_TARGET hdf5-serial)
cullcast_require(HDF5_C_FOUND libhdf5-dev)

find_package(Eigen3 3.4 QUIET NO_MODULE)
cullcast_require(Eigen3_FOUND libeigen3-dev)

find_package(GDAL QUIET)
cullcast_require(GDAL_FOUND libgdal-dev)

find_package(Boost 1.74 QUIET COMPONENTS graph)
cullcast_require(Boost_FOUND libboost-graph-dev)

find_package(GeographicLib QUIET)
cullcast_require(GeographicLib_FOUND libgeographiclib-dev)

find_package(OpenMP QUIET)
cullcast_require(OpenMP_CXX_FOUND "g++ (OpenMP)")

find_package(CLI11 QUIET CONFIG)
cullcast_require(CLI11_FOUND libcli11-dev)

if(CULLCAST_TESTS)
  find_package(Catch2 QUIET CONFIG)
  cullcast_require(Catch2_FOUND catch2)
endif()

if(CULLCAST_MPI)
  find_package(MPI QUIET)
  cullcast_require(MPI_CXX_FOUND libopenmpi-dev)
endif()
