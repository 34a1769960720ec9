#!/usr/bin/env bash
# One entry point for a fresh Debian 12 machine.
#   bash tools/setup.sh demo   install what is missing, build, run the demo study
#   bash tools/setup.sh test   install what is missing, build, run every test
#                              (Release with MPI, so the mpirun tests run too;
#                              then each libFuzzer target, under ASan+UBSan,
#                              for a few seconds). What CI runs.
#   bash tools/setup.sh sanitize
#                              the fast tests under ASan+UBSan (a build of its
#                              own, without MPI): run it before submitting a
#                              change; it doubles the time of `test`, which CI
#                              must finish in 30 minutes on a slow 2-core machine
#   bash tools/setup.sh deps   only install the Debian packages
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
build_dir="${CULLCAST_BUILD_DIR:-$root/build}"
sanitize_dir="${CULLCAST_SANITIZE_DIR:-$root/build-sanitize}"
fuzz_dir="${CULLCAST_FUZZ_DIR:-$root/build-fuzz}"
jobs="$(nproc)"

packages=(
  build-essential cmake ninja-build pkg-config
  libnetcdf-c++4-dev libnetcdf-dev libhdf5-dev netcdf-bin
  libeigen3-dev libgdal-dev gdal-bin
  libboost-graph-dev libboost-dev
  libcli11-dev catch2 libtomlplusplus-dev libgeographiclib-dev
  python3 python3-numpy python3-scipy python3-netcdf4
  chromium
  clang libclang-rt-14-dev libomp-dev
)
# Only for `test`: its main build is the MPI variant (-DCULLCAST_MPI=ON).
mpi_packages=(libopenmpi-dev openmpi-bin)

install_missing() {
  local missing=()
  for p in "${packages[@]}"; do
    if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed"; then
      missing+=("$p")
    fi
  done
  if ((${#missing[@]})); then
    echo "setup: installing ${missing[*]}"
    local sudo=""
    if [[ $(id -u) -ne 0 ]]; then sudo="sudo"; fi
    $sudo apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}"
  else
    echo "setup: all Debian packages present"
  fi
}

configure_and_build() {  # dir, extra cmake args...
  local dir="$1"; shift
  cmake -S "$root" -B "$dir" -G Ninja -DCMAKE_BUILD_TYPE=Release "$@" >/dev/null
  cmake --build "$dir" -j "$jobs"
}

case "${1:-}" in
  deps)
    install_missing
    ;;
  demo)
    install_missing
    configure_and_build "$build_dir" -DCULLCAST_MPI=OFF
    # Both seasons' records (an older checkout may hold only the first).
    if [[ ! -e "$root/scenarios/lantern-reach/currents/lantern_reach_20280110.nc" ]]; then
      echo "setup: generating the demo currents (synthetic, deterministic)"
      "$build_dir/cullcast" demo-data "$root/scenarios/lantern-reach/currents"
    fi
    "$build_dir/cullcast" run "$root/scenarios/lantern-reach.toml"
    ;;
  test)
    packages+=("${mpi_packages[@]}")
    install_missing
    configure_and_build "$build_dir" -DCULLCAST_MPI=ON
    # ctest -j runs one test per processor: each program then gets one
    # OpenMP thread (tests that compare thread counts set their own), and
    # waiting threads sleep instead of spinning, so no test's threads fight
    # another's for a processor (that made the long end-to-end tests up to
    # five times slower).
    export OMP_NUM_THREADS=1 OMP_WAIT_POLICY=passive
    (cd "$build_dir" && ctest --output-on-failure -j "$jobs" --timeout 900)
    if [[ "${CULLCAST_SKIP_FUZZ:-0}" != 1 ]]; then
      echo "setup: libFuzzer targets (clang), ${CULLCAST_FUZZ_SECONDS:-12} s each"
      # Only the fuzz targets and the libraries they link (base, study, reefs).
      CC=clang CXX=clang++ cmake -S "$root" -B "$fuzz_dir" -G Ninja -DCULLCAST_FUZZ=ON -DCULLCAST_TESTS=OFF \
        -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_FLAGS_RELWITHDEBINFO="-O1 -g1" >/dev/null
      cmake --build "$fuzz_dir" -j "$jobs" --target fuzz_targets
      bash "$root/tools/fuzz.sh" "$fuzz_dir" "${CULLCAST_FUZZ_SECONDS:-12}"
    fi
    ;;
  sanitize)
    install_missing
    echo "setup: fast tests under AddressSanitizer + UndefinedBehaviorSanitizer"
    # -O1: a third of the compile time of -O3, and what the sanitizers are meant for.
    configure_and_build "$sanitize_dir" -DCULLCAST_SANITIZE=ON -DCULLCAST_MPI=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo \
      -DCMAKE_CXX_FLAGS_RELWITHDEBINFO="-O1 -g1 -DNDEBUG"
    export OMP_NUM_THREADS=1 OMP_WAIT_POLICY=passive  # as in `test`
    (cd "$sanitize_dir" && ASAN_OPTIONS=detect_leaks=0 ctest --output-on-failure -j "$jobs" -L fast --timeout 900)
    ;;
  *)
    echo "usage: bash tools/setup.sh demo|test|sanitize|deps" >&2
    exit 2
    ;;
esac
