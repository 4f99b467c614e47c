#!/usr/bin/env bash
# Build ./build if needed (Release) and run the whole test suite.
set -euo pipefail
cd "$(dirname "$0")/.."
if [[ ! -f build/CMakeCache.txt ]]; then cmake -S . -B build -DCMAKE_BUILD_TYPE=Release; fi
cmake --build build -j2
ctest --test-dir build --output-on-failure -j2
