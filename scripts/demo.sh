#!/usr/bin/env bash
# Installs dependencies, builds stipple, and runs the density job on the demo survey in
# sample-plots/ (plots and sightings in one GeoPackage, detection probabilities in a CSV).
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
cmake -S . -B build -DCMAKE_BUILD_TYPE=RelWithDebInfo > /dev/null
cmake --build build -j "$(nproc)" > /dev/null
./build/stipple density sample-plots/reserve.gpkg --plots sample-plots/reserve.gpkg \
  --detection sample-plots/detection.csv
