#!/bin/sh
# Survey throughput (printed, not asserted): designs per minute for 1,000 generated designs x 4
# clones x 10^3 outer orbits with --jobs 1 and --jobs 2 (the speed-up of threads), and the peak
# memory of a 10^4-design survey with a short span (flat memory: the input is streamed).
# Usage: bench/survey_throughput.sh BUILD_DIR [DESIGNS] [ORBITS] [BIG_DESIGNS]
set -eu
build=${1:?build dir}
designs=${2:-1000}
orbits=${3:-1000}
big=${4:-10000}
mw="$build/tools/moonwright"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

"$mw" generate --count "$designs" --seed 2026 --out "$work/in.jsonl"
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

"$mw" generate --count "$big" --seed 7 --out "$work/big.jsonl"
/usr/bin/time -v "$mw" survey "$work/big.jsonl" --clones 4 --orbits 10 --jobs 2 --quiet \
    --out "$work/big.h5" --summary "$work/big.csv" 2> "$work/time.txt"
grep -E "Maximum resident|Elapsed" "$work/time.txt"
echo "designs in the big survey: $(($(wc -l < "$work/big.csv") - 1))"
