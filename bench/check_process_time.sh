#!/usr/bin/env bash
# Whole-process benchmark of `moonwright check` on a 20-body design: prints the process time
# (user + system CPU seconds) per run, averaged over N runs, beside the bare process start-up
# (`moonwright --version`) so the ratio shows what the check itself costs. Not a test: numbers only.
# Usage: bench/check_process_time.sh [BUILD_DIR] [N]
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
n=${2:-20}
bin="$build/tools/moonwright"
design=bench/data/twenty_bodies.toml

tfile=$(mktemp)
trap 'rm -f "$tfile"' EXIT
measure() { # prints the mean user+sys seconds of N runs of the given command
    local total=0 t
    for ((k = 0; k < n; ++k)); do
        # -o: GNU time writes its own line to a file, apart from the command's stderr.
        /usr/bin/time -o "$tfile" -f "%U %S" "$@" > /dev/null 2> /dev/null || true
        t=$(tail -1 "$tfile" | awk '{print $1 + $2}')
        total=$(awk -v a="$total" -v b="$t" 'BEGIN{print a + b}')
    done
    awk -v a="$total" -v n="$n" 'BEGIN{printf "%.4f", a / n}'
}

check_s=$(measure "$bin" check "$design")
start_s=$(measure "$bin" --version)
echo "moonwright check on a 20-body design: ${check_s} s process time per run (mean of ${n})"
echo "moonwright --version (start-up only):  ${start_s} s process time per run"
echo "target: well under 0.1 s"
