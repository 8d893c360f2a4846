#!/usr/bin/env bash
# isohypse set-up on Debian 12, as root. Safe to run again: it installs only
# what is missing and rebuilds only what changed.
#   ./setup.sh demo   install, build, generate the demo world if absent, run every stage on it
#   ./setup.sh test   install, build, run the whole test suite
set -euo pipefail
cd "$(dirname "$0")"
MODE="${1:-}"
if [[ "$MODE" != demo && "$MODE" != test ]]; then
  echo "usage: $0 demo|test" >&2
  exit 1
fi

BUILD_PACKAGES=(build-essential cmake pkg-config libarmadillo-dev libopenblas-dev libhdf5-dev libnetcdf-dev libdeflate-dev
  libspdlog-dev nlohmann-json3-dev doctest-dev libcli11-dev libcpp-httplib-dev libeccodes-dev)
TEST_PACKAGES=(python3 python3-numpy python3-scipy python3-sklearn python3-netcdf4 python3-h5py
  python3-jsonschema python3-eccodes libncarg-data netcdf-bin chromium chromium-driver)
PACKAGES=("${BUILD_PACKAGES[@]}")
[[ "$MODE" == test ]] && PACKAGES+=("${TEST_PACKAGES[@]}")

missing=()
for p in "${PACKAGES[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if ((${#missing[@]})); then
  echo "== installing: ${missing[*]}"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi

echo "== building (Release) in build/"
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build build -j"$(nproc)"

if [[ "$MODE" == test ]]; then
  echo "== running the tests"
  cd build
  ctest --output-on-failure -j2 --timeout 900
  exit 0
fi

exec bash demo/run-demo.sh
