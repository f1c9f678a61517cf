#!/usr/bin/env bash
# Installs everything stipple needs to build, test and regenerate its demo data, from
# Debian's packages (Debian 12 bookworm or later). Run as root or with sudo.
set -euo pipefail
packages=(
  build-essential cmake            # compiler and build system
  libgdal-dev gdal-bin             # GDAL/OGR vector I/O, OSR/PROJ reprojection; ogr2ogr for demo data
  libproj-dev                      # PROJ geodesic areas (Karney 2013) for the CRS area check
  libboost-dev                     # Boost.Geometry, Boost.Math, Boost.Random (header-only)
  libcli11-dev                     # command-line option parsing
  nlohmann-json3-dev               # JSON output
  libcairo2-dev fonts-dejavu-core  # figures (SVG, PNG) and their font
  pkg-config                       # finds cairo
  libnlopt-dev libnlopt-cxx-dev    # NLopt: maximum-likelihood fits of detection functions
  libssl-dev                       # SHA-256 checksums of inputs in batch manifests
  libeigen3-dev                    # Eigen: linear algebra of the habitat model fits
  libtomlplusplus-dev              # run files for stipple batch (TOML)
  chromium                         # headless rendering test of the HTML report
  libgtest-dev libgmock-dev        # GoogleTest
  libbenchmark-dev                 # Google Benchmark (bench/)
  python3                          # demo-data generator
  python3-gdal python3-scipy python3-numpy  # bench/whole_process.py: the GDAL-Python + SciPy reference
  python3-statsmodels              # tests/habitat/poisson_fit_reference.py: the Poisson GLM reference
  time                             # GNU time: whole-process peak memory in bench/batch_memory.sh
  clang-format clang-tidy          # style and static checks enforced by scripts/lint.sh
  locales                          # localedef: the decimal-comma locale the tests run under
)
if [ "$(id -u)" -ne 0 ]; then sudo=sudo; else sudo=; fi
missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -gt 0 ]; then
  $sudo apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi
# A locale with a decimal comma: the test main switches to it, so any formatting or parsing
# that follows the locale fails a test (tests/format_test.cpp reports itself skipped without).
if ! locale -a 2>/dev/null | grep -qi '^de_DE\.utf-\?8$'; then
  $sudo localedef -i de_DE -f UTF-8 de_DE.UTF-8
fi
