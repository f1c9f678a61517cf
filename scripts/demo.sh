#!/usr/bin/env bash
# Installs dependencies, builds stipple, runs the density job on the demo survey in
# sample-plots/ (plots and sightings in one GeoPackage, detection probabilities in a CSV),
# then the batch over the season's plot files with the HTML report, GIS layer and surfaces.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
cmake -S . -B build -DCMAKE_BUILD_TYPE=RelWithDebInfo > /dev/null
cmake --build build -j "$(nproc)" > /dev/null
./build/stipple density sample-plots/reserve.gpkg --plots sample-plots/reserve.gpkg \
  --detection sample-plots/detection.csv
./build/stipple batch sample-plots/season --out demo-output --detection sample-plots/detection.csv \
  --report --gis --surface
echo "open demo-output/report.html in a browser"
