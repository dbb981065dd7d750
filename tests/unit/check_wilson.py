#!/usr/bin/env python3
"""Compares moonwright's Wilson intervals with SciPy's binomtest(...).proportion_ci("wilson")."""
import subprocess
import sys

from scipy.stats import binomtest

lines = subprocess.run([sys.argv[1]], capture_output=True, text=True, check=True).stdout.split("\n")
failures, passed = [], 0
for line in filter(None, lines):
    k, n, lo, hi = line.split()
    ci = binomtest(int(k), int(n)).proportion_ci(confidence_level=0.95, method="wilson")
    for ours, theirs, side in ((float(lo), ci.low, "lower"), (float(hi), ci.high, "upper")):
        if abs(ours - theirs) <= 1e-12 + 1e-12 * abs(theirs):
            passed += 1
        else:
            failures.append(f"k={k} n={n} {side}: ours {ours!r} scipy {theirs!r}")
for f in failures:
    print("FAIL:", f)
print(f"{passed} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
