#!/usr/bin/env bash
# First command of the README: install what is missing, build, and run moonwright on a bundled
# scenario. Usage: bash tools/quickstart.sh [scenario.toml]
set -euo pipefail
cd "$(dirname "$0")/.."
scenario=${1:-scenarios/teodora.toml}

bash tools/setup-debian.sh
cmake -S . -B build -G Ninja -DCMAKE_BUILD_TYPE=Release -DMOONWRIGHT_TESTS=OFF \
      -DMOONWRIGHT_BENCH=OFF > build-configure.log 2>&1 || { cat build-configure.log; exit 1; }
cmake --build build --target moonwright
echo
echo "== moonwright check ${scenario}"
./build/tools/moonwright check "${scenario}" || true
