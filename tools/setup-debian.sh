#!/usr/bin/env bash
# Installs the Debian 12 packages moonwright needs, only those missing (safe to run again).
# Usage: tools/setup-debian.sh [--with-browser]   (run as root; --with-browser adds Chromium for report tests)
set -euo pipefail

packages=(
  cmake ninja-build g++ pkg-config
  libboost-dev libeigen3-dev libhdf5-dev zlib1g-dev hdf5-tools libcli11-dev doctest-dev
  libtomlplusplus-dev nlohmann-json3-dev libfmt-dev libopenmpi-dev openmpi-bin
  libplplot-dev plplot-driver-cairo libcairo2-dev libbenchmark-dev
  python3-numpy python3-scipy python3-astropy python3-h5py
)
if [[ "${1:-}" == "--with-browser" ]]; then
  packages+=(chromium)
fi

missing=()
for p in "${packages[@]}"; do
  if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed"; then
    missing+=("$p")
  fi
done

if ((${#missing[@]} == 0)); then
  echo "setup: all ${#packages[@]} packages already installed"
  exit 0
fi

if [[ $(id -u) -ne 0 ]]; then
  echo "setup: missing packages: ${missing[*]}" >&2
  echo "setup: run as root (or install them with apt-get) and try again" >&2
  exit 1
fi

echo "setup: installing ${#missing[@]} missing packages: ${missing[*]}"
apt-get update -qq
DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}"
echo "setup: done"
