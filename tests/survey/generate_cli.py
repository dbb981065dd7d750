#!/usr/bin/env python3
"""`moonwright generate` through the command line: 1,000 designs of a fixed seed, each one
checked by `moonwright check` (exit 0 = no error finding); --out and --toml-dir give the same
designs; bad options exit 2.

Usage: generate_cli.py MOONWRIGHT_BINARY WORK_DIR
"""
import concurrent.futures
import json
import pathlib
import shutil
import subprocess
import sys

binary, work = sys.argv[1], pathlib.Path(sys.argv[2])
shutil.rmtree(work, ignore_errors=True)
work.mkdir(parents=True)
failures = []


def expect(condition, what):
    if not condition:
        failures.append(what)


r = subprocess.run([binary, "generate", "--count", "1000", "--seed", "20261201"],
                   capture_output=True, text=True, timeout=120)
expect(r.returncode == 0, f"generate exit {r.returncode}: {r.stderr}")
lines = r.stdout.splitlines()
expect(len(lines) == 1000, f"1000 lines expected, got {len(lines)}")
names = set()
for line in lines:
    d = json.loads(line)
    names.add(d["system"]["name"])
expect(len(names) > 900, f"designs should differ: only {len(names)} distinct names")


def check(line):
    c = subprocess.run([binary, "check", "-", "--stdin-format", "json"], input=line,
                       capture_output=True, text=True, timeout=60)
    return c.returncode, c.stdout[-400:] + c.stderr[-400:]


with concurrent.futures.ThreadPoolExecutor(max_workers=2) as pool:
    results = list(pool.map(check, lines))
bad = [(k, code, out) for k, (code, out) in enumerate(results) if code != 0]
expect(not bad, f"{len(bad)} generated designs fail check, first: {bad[:1]}")

# --out gives the same bytes as stdout; --kind changes the designs.
out = work / "batch.jsonl"
r2 = subprocess.run([binary, "generate", "--count", "20", "--seed", "20261201", "--out", str(out)],
                    capture_output=True, text=True, timeout=60)
expect(r2.returncode == 0 and out.read_text().splitlines() == lines[:20], "--out differs from stdout")
tdir = work / "toml"
r3 = subprocess.run([binary, "generate", "--count", "3", "--seed", "5", "--kind", "giant",
                     "--toml-dir", str(tdir)], capture_output=True, text=True, timeout=60)
files = sorted(tdir.glob("*.toml"))
expect(r3.returncode == 0 and len(files) == 3, f"--toml-dir: {r3.returncode} {files}")
expect(r3.stdout.split() == [str(f) for f in files], "--toml-dir prints the paths written")
for f in files:
    c = subprocess.run([binary, "check", str(f)], capture_output=True, text=True, timeout=60)
    expect(c.returncode == 0, f"{f.name} fails check")

r4 = subprocess.run([binary, "generate", "--kind", "icy"], capture_output=True, text=True)
expect(r4.returncode == 2, f"bad --kind exits 2, got {r4.returncode}")
r5 = subprocess.run([binary, "generate", "--count", "2", "--out", "/nonexistent/dir/x.jsonl"],
                    capture_output=True, text=True)
expect(r5.returncode == 4, f"unwritable --out exits 4, got {r5.returncode}")

if failures:
    print("FAILED:\n  " + "\n  ".join(failures))
    sys.exit(1)
print("generate CLI: all checks passed")
