#!/usr/bin/env bash
# Set up roundtrip from a fresh clone: install the Debian packages that are missing (only those),
# configure and build in ./build (Release), then run the demo case cases/gold_plates.toml, which
# prints a table and writes out/gold_plates.h5.
#   scripts/setup-and-demo.sh               everything (./build, and ./build-mpi with MPI)
#   scripts/setup-and-demo.sh --build-only  packages and build, no demo (used by .ci/run)
set -euo pipefail
cd "$(dirname "$0")/.."

packages=(cmake g++ make pkg-config libeigen3-dev libboost-dev libhdf5-dev hdf5-tools libgmsh-dev
          libtomlplusplus-dev libgtest-dev libbenchmark-dev libcli11-dev libfmt-dev zlib1g-dev libopenmpi-dev openmpi-bin python3-h5py
          python3-matplotlib python3-scipy python3-mpmath)
missing=()
for p in "${packages[@]}"; do
  if [[ "$(dpkg-query -W -f='${Status}' "$p" 2>/dev/null)" != "install ok installed" ]]; then
    missing+=("$p")
  fi
done
if ((${#missing[@]} > 0)); then
  echo "setup: installing missing packages: ${missing[*]}"
  sudo=()
  if [[ "$(id -u)" -ne 0 ]]; then sudo=(sudo); fi
  "${sudo[@]}" apt-get update
  "${sudo[@]}" apt-get install -y "${missing[@]}"
else
  echo "setup: all ${#packages[@]} Debian packages are installed"
fi

cmake -S . -B build -DCMAKE_BUILD_TYPE=Release
cmake --build build -j2
# The MPI build (README "Clusters"): the same program, to be started by mpirun or srun.
cmake -S . -B build-mpi -DCMAKE_BUILD_TYPE=Release -DROUNDTRIP_USE_MPI=ON -DROUNDTRIP_BUILD_BENCHMARKS=OFF
cmake --build build-mpi -j2 --target roundtrip

if [[ "${1:-}" == "--build-only" ]]; then exit 0; fi
mkdir -p out
echo "setup: ./build/roundtrip run cases/gold_plates.toml -o out/gold_plates.h5"
./build/roundtrip run cases/gold_plates.toml -o out/gold_plates.h5
