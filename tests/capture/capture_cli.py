#!/usr/bin/env python3
"""End-to-end tests of `moonwright capture`: summary with units, the HDF5 layout read by h5py,
moons recorded, the same file for 1 and 2 jobs, and bad input with exit code 2.

Usage: capture_cli.py MOONWRIGHT_BINARY SOURCE_DIR WORK_DIR
"""
import pathlib
import shutil
import subprocess
import sys

import h5py
import numpy as np

binary, source, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
shutil.rmtree(work, ignore_errors=True)
work.mkdir(parents=True)
data = source / "tests/capture/data"
failures = []
passed = 0


def expect(condition, what):
    global passed
    if condition:
        passed += 1
    else:
        failures.append(what)


def capture(*args, timeout=200):
    return subprocess.run([binary, "capture", *args], capture_output=True, text=True, timeout=timeout)


drag = ["--planet", "Garrow", "--mechanism", "drag", "--trials", "6", "--seed", "4", "--span", "0.1 yr",
        "--intruder", "mass=1e15 kg, vinf=1 km/s, q=1.2:6 Rp, start=0.5 RH",
        "--envelope", "rho0=1e-2 kg/m3, k=2, cutoff=10 Rp", "--quiet"]

# A drag experiment with an existing moon, on one and on two threads.
outs = []
for jobs in ("1", "2"):
    out = work / f"moon_{jobs}.h5"
    r = capture(str(data / "garrow_moon.toml"), *drag, "--jobs", jobs, "--out", str(out))
    expect(r.returncode == 0, f"jobs {jobs}: exit {r.returncode}: {r.stderr}")
    expect("Captured" in r.stdout and "Kept" in r.stdout and "Wilson" in r.stdout, f"summary: {r.stdout!r}")
    expect("Existing moons (Lisk)" in r.stdout, f"moons line: {r.stdout!r}")
    expect(" km" in r.stdout and " yr" in r.stdout or " d" in r.stdout, "units in the summary")
    outs.append(out)

with h5py.File(outs[0], "r") as f, h5py.File(outs[1], "r") as g:
    expect(f["run"].attrs["command"] == "capture", "/run@command")
    expect(f["run"].attrs["mechanism"] == "drag", "/run@mechanism")
    missing = []
    def check_attrs(name, obj):
        if isinstance(obj, h5py.Dataset):
            for attr in ("units", "description"):
                if attr not in obj.attrs:
                    missing.append(f"{name}@{attr}")
    f.visititems(check_attrs)
    expect(not missing, f"datasets without units/description: {missing}")
    t1, t2 = f["capture/trials"][()], g["capture/trials"][()]
    expect(len(t1) == 6, f"6 trial records, got {len(t1)}")
    expect(np.array_equal(t1["outcome"], t2["outcome"]) and np.array_equal(t1["end_time"], t2["end_time"]),
           "the same trials on 1 and 2 threads")
    kept = int(f["capture"].attrs["kept"])
    expect(kept == int(np.sum(t1["m1_kept"] == 1)), "kept attribute matches the table")
    expect(f["figures/final_a_e"].shape == (kept, 2) or kept == 0, "final a-e array shape")
    expect(f["figures/capture_durations"].attrs["units"] == "s", "durations in s")
    lo, p, hi = (f["capture"].attrs[k] for k in ("keep_probability_lower", "keep_probability",
                                                   "keep_probability_upper"))
    expect(lo <= p <= hi, "Wilson interval brackets the estimate")

# --plot PREFIX writes both figures as PNG files.
prefix = work / "plot"
r = capture(str(data / "garrow.toml"), *drag, "--out", str(work / "plot.h5"), "--plot", str(prefix))
for name in ("durations", "final-orbits"):
    png = pathlib.Path(f"{prefix}-{name}.png")
    expect(r.returncode == 0 and png.is_file() and png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n",
           f"--plot {name}: exit {r.returncode}, {r.stderr!r}")

# Bad input: exit 2 with a message naming the key.
r = capture(str(data / "garrow.toml"), "--planet", "Garrow", "--intruder", "mass=1e15 kg, vinf=1 kg, b=0.1:1 RH")
expect(r.returncode == 2 and "--intruder vinf" in r.stderr, f"bad vinf: {r.returncode} {r.stderr!r}")
r = capture(str(data / "garrow.toml"), "--planet", "Nowhere", "--intruder", "mass=1e15 kg, vinf=1 km/s, b=0.1:1 RH")
expect(r.returncode == 2 and "--planet" in r.stderr and "Garrow" in r.stderr, f"bad planet: {r.stderr!r}")
r = capture(str(data / "garrow.toml"), "--planet", "Garrow", "--mechanism", "drag",
            "--intruder", "mass=1e15 kg, vinf=1 km/s, b=0.1:1 RH")
expect(r.returncode == 2 and "--envelope" in r.stderr, f"drag without envelope: {r.stderr!r}")
r = capture(str(data / "garrow.toml"), *drag, "--out", "/nonexistent-dir/x.h5")
expect(r.returncode == 4, f"unwritable output: exit {r.returncode}")

print(f"{passed} passed, {len(failures)} failed")
for what in failures:
    print("FAILED:", what)
sys.exit(1 if failures else 0)
