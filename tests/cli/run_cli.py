#!/usr/bin/env python3
"""End-to-end tests of `moonwright run`: verdicts, the HDF5 layout read by h5py and h5dump,
bad input, unwritable output, and a run killed with SIGKILL then resumed (bitwise equal).

Usage: run_cli.py MOONWRIGHT_BINARY SOURCE_DIR WORK_DIR
"""
import json
import os
import pathlib
import shutil
import signal
import subprocess
import sys
import time

import h5py
import numpy as np

binary, source, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
shutil.rmtree(work, ignore_errors=True)
work.mkdir(parents=True)
failures = []
passed = 0


def expect(condition, what):
    global passed
    if condition:
        passed += 1
    else:
        failures.append(what)


def run(*args, timeout=300):
    return subprocess.run([binary, "run", *args], capture_output=True, text=True, timeout=timeout)


def datasets(path):
    found = {}
    with h5py.File(path, "r") as f:
        f.visititems(lambda name, obj: found.__setitem__(name, obj[()]) if isinstance(obj, h5py.Dataset) else None)
    return found


# The habitable scenario: stable, with a complete result file.
out = work / "teodora.h5"
r = run(str(source / "scenarios/teodora.toml"), "--out", str(out), "--orbits", "2000", "--quiet")
expect(r.returncode == 0, f"teodora: exit {r.returncode}: {r.stderr}")
expect(r.stdout.startswith("Verdict: stable"), f"teodora verdict: {r.stdout!r}")
expect(out.exists() and not pathlib.Path(str(out) + ".ckpt").exists(), "teodora: file written, no checkpoint left")
with h5py.File(out, "r") as f:
    missing = []
    def check_attrs(name, obj):
        if isinstance(obj, h5py.Dataset):
            for attr in ("units", "description"):
                if attr not in obj.attrs:
                    missing.append(f"{name}@{attr}")
    f.visititems(check_attrs)
    expect(not missing, f"datasets without units/description: {missing}")
    expect(f["verdict"].attrs["verdict"] == "stable", "verdict attribute")
    expect(f["series/time"].shape[0] == 1001, f"1000 samples + the start: {f['series/time'].shape}")
    expect(f["series/e"].shape[1] == 3, "one column per body")
    names = [n.decode() for n in f["bodies"]["name"]]
    expect(names == ["Ysolde", "Teodora", "Brannoc"], f"bodies: {names}")
    e = f["series/e"][:, 2]
    e_max = f["series/e_max"][1:, 2]
    expect(np.all(e_max >= e[1:] - 1e-15), "envelope e_max holds each sample")
    expect(f["design/text"][()].decode().startswith("# Demonstrates"), "design text stored as written")
h5dump = subprocess.run(["h5dump", "-H", str(out)], capture_output=True, text=True)
expect(h5dump.returncode == 0 and "series" in h5dump.stdout, "h5dump reads the file")

# The crowded scenario: unstable, first event a close approach, in JSON.
r = run(str(source / "scenarios/crowded.toml"), "--out", str(work / "crowded.h5"), "--json")
expect(r.returncode == 0, f"crowded: exit {r.returncode}: {r.stderr}")
report = json.loads(r.stdout)
expect(report["verdict"] == "unstable", f"crowded verdict {report['verdict']}")
expect(report["events"] and report["events"][0]["kind"] == "close_approach", f"crowded events {report['events']}")

# Bad input: exit 2, nothing written.
bad = work / "bad.h5"
r = run(str(source / "scenarios/teodora.toml"), "--out", str(bad), "--span", "fast")
expect(r.returncode == 2, f"bad span: exit {r.returncode}")
expect("--span" in r.stderr or "span" in r.stderr, f"bad span message: {r.stderr!r}")
expect(not list(work.glob("bad.h5*")), "bad input leaves no file")
r = run(str(source / "tests/design/malformed/expected.txt"))
expect(r.returncode == 2, f"not a design: exit {r.returncode}")

# The modified kick needs the corrector: exit 2 naming the option, nothing written; with
# --corrector 7 the run goes through and the file says which kick it used.
r = run(str(source / "scenarios/teodora.toml"), "--out", str(bad), "--modified-kick")
expect(r.returncode == 2, f"--modified-kick alone: exit {r.returncode}")
expect("--modified-kick" in r.stderr and "--corrector" in r.stderr,
       f"--modified-kick message: {r.stderr!r}")
expect(not list(work.glob("bad.h5*")), "--modified-kick alone leaves no file")
mk = work / "modified.h5"
r = run(str(source / "scenarios/teodora.toml"), "--out", str(mk), "--orbits", "500",
        "--corrector", "7", "--modified-kick", "--quiet")
expect(r.returncode == 0 and r.stdout.startswith("Verdict: stable"),
       f"--corrector 7 --modified-kick: exit {r.returncode}: {r.stdout!r} {r.stderr}")
with h5py.File(mk, "r") as f:
    expect(f["run"].attrs["option_modified_kick"] == 1, "option_modified_kick recorded")
    expect(f["run"].attrs["option_corrector_order"] == 7, "option_corrector_order recorded")

# Unwritable output: exit 4, nothing left behind.
r = run(str(source / "scenarios/teodora.toml"), "--out", "/nonexistent-dir/x.h5", "--orbits", "10")
expect(r.returncode == 4, f"unwritable output: exit {r.returncode}: {r.stderr}")

# Killed with SIGKILL mid-way, resumed: the same datasets as an uninterrupted run, bit for bit.
args = [str(source / "scenarios/teodora.toml"), "--orbits", "300000", "--samples", "500",
        "--checkpoint-every", "0.2", "--quiet"]
whole = work / "whole.h5"
r = run(*args, "--out", str(whole))
expect(r.returncode == 0, f"uninterrupted run: exit {r.returncode}: {r.stderr}")
killed = work / "killed.h5"
proc = subprocess.Popen([binary, "run", *args, "--out", str(killed)], stdout=subprocess.DEVNULL,
                        stderr=subprocess.DEVNULL)
ckpt = pathlib.Path(str(killed) + ".ckpt")
deadline = time.time() + 60
# Wait for a checkpoint written after the start (rewritten every 0.2 s), then kill.
first = None
while time.time() < deadline and proc.poll() is None:
    if ckpt.exists():
        stamp = ckpt.stat().st_mtime_ns
        if first is None:
            first = stamp
        elif stamp != first:
            break
    time.sleep(0.05)
still_running = proc.poll() is None
proc.send_signal(signal.SIGKILL)
proc.wait()
expect(still_running, "the run was still going when killed (make it longer if this fails)")
expect(not killed.exists(), "a killed run leaves no result file")
expect(ckpt.exists(), "a killed run leaves its checkpoint")
if ckpt.exists():
    with h5py.File(ckpt, "r") as f:  # the checkpoint file opens
        expect("checkpoint/state" in f, "checkpoint file has the state")
r = run("--resume", str(killed))
expect(r.returncode == 0, f"resume: exit {r.returncode}: {r.stderr}")
if killed.exists() and whole.exists():
    a, b = datasets(whole), datasets(killed)
    expect(sorted(a) == sorted(b), "same datasets")
    for name in sorted(a):
        if name in b:
            x, y = np.asarray(a[name]), np.asarray(b[name])
            same = x.dtype == y.dtype and x.shape == y.shape and x.tobytes() == y.tobytes()
            expect(same or name == "design/text" and str(x) == str(y), f"dataset {name} differs after resume")

for f in failures:
    print("FAIL:", f)
print(f"{passed} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
