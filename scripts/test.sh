#!/usr/bin/env bash
# Installs dependencies, configures with warnings as errors, builds and runs the whole test
# suite under CTest. Pass --sanitize for an AddressSanitizer + UBSan build in build-asan/.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
build=build
flags=(-DSTIPPLE_WERROR=ON -DCMAKE_BUILD_TYPE=RelWithDebInfo)
if [ "${1:-}" = "--sanitize" ]; then
  build=build-asan
  flags=(-DSTIPPLE_WERROR=ON -DSTIPPLE_SANITIZE=ON -DCMAKE_BUILD_TYPE=Debug)
fi
cmake -S . -B "$build" "${flags[@]}"
cmake --build "$build" -j "$(nproc)"
ctest --test-dir "$build" --output-on-failure -j "$(nproc)"
