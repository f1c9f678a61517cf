#!/usr/bin/env bash
# Installs dependencies, configures with warnings as errors, builds and runs the whole test
# suite under CTest. --sanitize: an AddressSanitizer + UBSan build in build-asan/ instead.
# --quick: only the tests labelled quick (the CI runs them under the sanitizers).
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
build=build
flags=(-DSTIPPLE_WERROR=ON -DCMAKE_BUILD_TYPE=RelWithDebInfo)
labels=()
targets=()
for arg in "$@"; do
  case "$arg" in
    --sanitize)
      build=build-asan
      # -O1: the usual optimisation for sanitizer runs (several times faster than -O0).
      flags=(-DSTIPPLE_WERROR=ON -DSTIPPLE_SANITIZE=ON -DCMAKE_BUILD_TYPE=Debug "-DCMAKE_CXX_FLAGS_DEBUG=-g -O1") ;;
    --quick)
      # Build only what the quick tests run (not the statistical-test executable).
      labels=(-L quick)
      targets=(--target stipple stipple_tests fuzz_option_values_replay fuzz_detection_table_replay
               fuzz_vector_input_replay fuzz_run_file_replay) ;;
    *) echo "scripts/test.sh: unknown option '$arg' (use --sanitize, --quick)" >&2; exit 2 ;;
  esac
done
cmake -S . -B "$build" "${flags[@]}"
cmake --build "$build" -j "$(nproc)" "${targets[@]}"
ctest --test-dir "$build" --output-on-failure -j "$(nproc)" "${labels[@]}"
