#!/usr/bin/env bash
# Second command of the README (and what CI runs): install what is missing, build everything with
# warnings as errors, run the whole test suite, then the quick tests again under
# AddressSanitizer + UndefinedBehaviorSanitizer.
set -euo pipefail
cd "$(dirname "$0")/.."
jobs=$(nproc)

bash tools/setup-debian.sh --with-browser

echo "== build (warnings are errors)"
cmake -S . -B build-test -G Ninja -DCMAKE_BUILD_TYPE=RelWithDebInfo -DMOONWRIGHT_CI=ON \
      -DPython3_EXECUTABLE=/usr/bin/python3
cmake --build build-test -j "${jobs}"

echo "== test suite"
ctest --test-dir build-test --output-on-failure -j "${jobs}"

echo "== sanitizers (AddressSanitizer + UBSan): unit and design tests, and check on every malformed design"
cmake -S . -B build-asan -G Ninja -DCMAKE_BUILD_TYPE=Debug -DMOONWRIGHT_CI=ON \
      -DMOONWRIGHT_SANITIZE=ON -DMOONWRIGHT_BENCH=OFF -DMOONWRIGHT_INSTALL=OFF \
      -DPython3_EXECUTABLE=/usr/bin/python3
cmake --build build-asan -j "${jobs}"
ctest --test-dir build-asan --output-on-failure -j "${jobs}" -L "unit|design|sanitize"
