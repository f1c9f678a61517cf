#!/usr/bin/env bash
# Peak memory of a whole `stipple batch` process against the number of files: N copies of
# the demo plot file sample-plots/season/north.gpkg (one 1 ha plot, about 240 sightings),
# density and randomness with 19 simulations, figures and maps written. Prints files,
# wall seconds and peak resident memory (GNU time's maximum resident set size).
# Usage: bash bench/batch_memory.sh [STIPPLE] [N ...]   (default: build/stipple 100 1000)
set -euo pipefail
cd "$(dirname "$0")/.."
stipple=${1:-build/stipple}
shift || true
counts=("$@")
[ ${#counts[@]} -gt 0 ] || counts=(100 1000)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
printf '%8s %10s %12s\n' files seconds peak_MB
for n in "${counts[@]}"; do
  rm -rf "$work/in" "$work/out"
  mkdir -p "$work/in"
  for i in $(seq -w 1 "$n"); do cp sample-plots/season/north.gpkg "$work/in/plot-$i.gpkg"; done
  /usr/bin/time -f '%e %M' -o "$work/time" "$stipple" batch "$work/in" --out "$work/out" --simulations 19 --quiet
  read -r seconds kb < "$work/time"
  printf '%8s %10s %12s\n' "$n" "$seconds" "$((kb / 1024))"
done
