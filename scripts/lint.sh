#!/usr/bin/env bash
# The style and static checks CI enforces: no clang-format difference anywhere in the tree
# (.clang-format) and no clang-tidy finding in the library and command line (.clang-tidy;
# every enabled check is an error). Needs a configured build folder for
# compile_commands.json (default build/, made here when missing).
set -euo pipefail
cd "$(dirname "$0")/.."
build="${1:-build}"
mapfile -t files < <(git ls-files '*.cpp' '*.hpp')
clang-format --dry-run --Werror "${files[@]}"
echo "lint: ${#files[@]} files formatted as .clang-format says"
if [ ! -f "$build/compile_commands.json" ]; then
  cmake -S . -B "$build" -DSTIPPLE_WERROR=ON -DCMAKE_BUILD_TYPE=RelWithDebInfo > /dev/null
fi
# -Wno-unknown-warning-option: the build's GCC-only warning flags mean nothing to clang.
run-clang-tidy -p "$build" -quiet -j "$(nproc)" -extra-arg=-Wno-unknown-warning-option \
  "$(pwd)/src/.*\.cpp$" > "$build/clang-tidy.log" 2>&1 || {
  grep -E "error:|warning:" "$build/clang-tidy.log" | sort -u >&2
  echo "lint: clang-tidy findings (full log in $build/clang-tidy.log)" >&2
  exit 1
}
echo "lint: clang-tidy found nothing in src/"
