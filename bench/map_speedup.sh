#!/usr/bin/env bash
# Wall time of `moonwright map` on an N x N grid (a, e of a small moon) with --jobs 2, against
# the same cells run one by one through `moonwright run` (one process per cell, same span,
# same seed). Not a test: prints the numbers only. The default 40 x 40 grid of 10^3-orbit
# cells takes many minutes.
# Usage: bench/map_speedup.sh [BUILD_DIR] [N] [ORBITS]
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
n=${2:-40}
orbits=${3:-1000}
bin="$(pwd)/$build/tools/moonwright"
design="$(pwd)/tests/map/data/vela.toml"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

a_from=0.2 a_to=0.7 e_from=0 e_to=0.6
now() { date +%s.%N; }

t0=$(now)
"$bin" map "$design" --vary "Vela.a=${a_from}RH:${a_to}RH:$n" --vary "Vela.e=${e_from}:${e_to}:$n" \
    --orbits "$orbits" --jobs 2 --quiet --out "$work/map.h5" > "$work/map.txt"
t1=$(now)
map_s=$(awk -v a="$t0" -v b="$t1" 'BEGIN{printf "%.2f", b - a}')

# The span each cell ran for (the planet's orbits), read back from the map's own record.
span_s=$(/usr/bin/python3 -c "import h5py,sys; print(repr(float(h5py.File(sys.argv[1])['/run'].attrs['span_s'])))" "$work/map.h5")

t2=$(now)
for ((i = 0; i < n; ++i)); do
    for ((j = 0; j < n; ++j)); do
        read -r a e < <(awk -v i="$i" -v j="$j" -v n="$n" -v a0="$a_from" -v a1="$a_to" \
            -v e0="$e_from" -v e1="$e_to" 'BEGIN{d = (n > 1) ? n - 1 : 1;
            printf "%.17g %.17g\n", a0 + (a1 - a0) * i / d, e0 + (e1 - e0) * j / d}')
        sed -e "s|^orbit = { a = \"0.3 RH\", e = 0,|orbit = { a = \"$a RH\", e = $e,|" \
            "$design" > "$work/cell.toml"
        "$bin" run "$work/cell.toml" --span "$span_s s" --samples 100 --quiet \
            --out "$work/cell.h5" > /dev/null
    done
done
t3=$(now)
run_s=$(awk -v a="$t2" -v b="$t3" 'BEGIN{printf "%.2f", b - a}')

cat "$work/map.txt"
echo "grid ${n} x ${n}, ${orbits} planet orbits per cell"
echo "moonwright map --jobs 2:            ${map_s} s wall"
echo "moonwright run, cells one by one:   ${run_s} s wall"
awk -v a="$map_s" -v b="$run_s" 'BEGIN{ if (a > 0) printf "speed-up: %.2fx\n", b / a }'
