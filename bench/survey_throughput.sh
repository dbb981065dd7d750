#!/bin/sh
# Survey throughput (printed, not asserted): designs per minute for 1,000 generated designs x 4
# clones x 10^3 outer orbits with --jobs 1 and --jobs 2 (the speed-up of threads), and the peak
# memory of a 10^4-design survey with a short span (flat memory: the input is streamed).
# Usage: bench/survey_throughput.sh BUILD_DIR [DESIGNS] [ORBITS] [BIG_DESIGNS] [BIG_KIND] [KIND]
# (DESIGNS 0 or BIG_DESIGNS 0 skips that part.)
# Orbits are those of the outermost moon, so a generated giant with a distant small moon costs
# far more steps per orbit than a rocky planet: mixed designs at 10^3 orbits take tens of seconds
# per clone on this machine, so the full 1,000-design run takes hours. The memory run uses rocky
# designs by default so that 10^4 designs finish in minutes.
set -eu
build=${1:?build dir}
designs=${2:-1000}
orbits=${3:-1000}
big=${4:-10000}
big_kind=${5:-rocky}
kind=${6:-mixed}
mw="$build/tools/moonwright"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

if [ "$designs" -gt 0 ]; then
echo "throughput: $designs $kind designs x 4 clones x $orbits orbits"
"$mw" generate --count "$designs" --seed 2026 --kind "$kind" --out "$work/in.jsonl"
for jobs in 1 2; do
    start=$(date +%s.%N)
    "$mw" survey "$work/in.jsonl" --clones 4 --orbits "$orbits" --jobs "$jobs" --quiet \
        --out "$work/j$jobs.h5" --summary "$work/j$jobs.jsonl"
    end=$(date +%s.%N)
    echo "$start $end" > "$work/t$jobs"
    awk -v s="$start" -v e="$end" -v n="$designs" -v j="$jobs" \
        'BEGIN { printf "jobs %d: %.1f s, %.1f designs per minute\n", j, e - s, 60 * n / (e - s) }'
done
cmp -s "$work/j1.jsonl" "$work/j2.jsonl" && echo "summaries of --jobs 1 and 2 identical" \
    || echo "summaries of --jobs 1 and 2 DIFFER"
t1=$(awk '{ print $2 - $1 }' "$work/t1")
t2=$(awk '{ print $2 - $1 }' "$work/t2")
awk -v a="$t1" -v b="$t2" 'BEGIN { printf "speed-up of --jobs 2 over --jobs 1: %.2fx\n", a / b }'
fi
[ "$big" -gt 0 ] || exit 0
echo "memory: $big $big_kind designs x 4 clones x 10 orbits, --jobs 2"
"$mw" generate --count "$big" --seed 7 --kind "$big_kind" --out "$work/big.jsonl"
/usr/bin/time -v "$mw" survey "$work/big.jsonl" --clones 4 --orbits 10 --jobs 2 --quiet \
    --out "$work/big.h5" --summary "$work/big.csv" 2> "$work/time.txt"
grep -E "Maximum resident|Elapsed" "$work/time.txt"
echo "designs in the big survey: $(($(wc -l < "$work/big.csv") - 1))"
