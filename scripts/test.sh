#!/usr/bin/env bash
# Build ./build if needed (Release) and run the whole test suite; then the same with MPI in
# ./build-mpi (its own tests only).
set -euo pipefail
cd "$(dirname "$0")/.."
if [[ ! -f build/CMakeCache.txt ]]; then cmake -S . -B build -DCMAKE_BUILD_TYPE=Release; fi
cmake --build build -j2
ctest --test-dir build --output-on-failure -j2
# The MPI build (README "Clusters"): a second build directory with -DROUNDTRIP_USE_MPI=ON; only
# the program and its MPI tests are built there (mpirun -np 2 and 4 against the serial numbers,
# resume, failures): ctest -L mpi.
if [[ ! -f build-mpi/CMakeCache.txt ]]; then
  cmake -S . -B build-mpi -DCMAKE_BUILD_TYPE=Release -DROUNDTRIP_USE_MPI=ON -DROUNDTRIP_BUILD_BENCHMARKS=OFF
fi
cmake --build build-mpi -j2 --target roundtrip roundtrip_tests_mpi
ctest --test-dir build-mpi --output-on-failure -L mpi
