#!/usr/bin/env python3
"""End-to-end tests of `moonwright map`: HDF5 record with units, PNG and SVG figures, exit codes.

Usage: map_cli.py MOONWRIGHT_BINARY SOURCE_DIR WORK_DIR   (needs h5py: run with /usr/bin/python3)
"""
import html
import pathlib
import shutil
import subprocess
import sys

import h5py

binary, source, work = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3])
vela = source / "tests/map/data/vela.toml"
failures = []
passed = 0


def run(*args):
    return subprocess.run([binary, *args], capture_output=True, text=True, timeout=120)


def expect(condition, what):
    global passed
    if condition:
        passed += 1
    else:
        failures.append(what)


shutil.rmtree(work, ignore_errors=True)
work.mkdir(parents=True)

# A 1-D scan of a with a PNG line plot.
out, png = work / "scan.h5", work / "scan.png"
r = run("map", str(vela), "--vary", "Vela.a=0.3RH:0.7RH:3", "--orbits", "5", "--out", str(out),
        "--plot", str(png), "--jobs", "2")
expect(r.returncode == 0, f"1-D map: exit {r.returncode}: {r.stderr}")
expect("3 cells" in r.stdout, f"1-D map summary: {r.stdout}")
expect(png.exists() and png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n", "1-D map: PNG written")
if out.exists():
    with h5py.File(out, "r") as f:
        expect(f["/run"].attrs["command"] == "map", "command attribute is map")
        expect(f["/map/axis0"].attrs["units"] == "RH", "axis0 units RH")
        expect(list(f["/map/axis0"][:]) == [0.3, 0.5, 0.7], f"axis0 values {f['/map/axis0'][:]}")
        for name in ("mean_megno", "survival_time", "survived", "first_event", "max_e", "span"):
            ds = f["/map/" + name]
            expect(ds.shape == (3,), f"{name} shape {ds.shape}")
            expect("units" in ds.attrs and "description" in ds.attrs, f"{name} units/description")
        expect("escape" in f["/map/first_event"].attrs["legend"], "event legend")
        expect(f["/map/references/stability_limit"].attrs["units"] == "m", "limit units")

# A 2-D grid of a and e with an SVG heat map and the Domingos et al. curve over e.
out2, svg = work / "grid.h5", work / "grid.svg"
r = run("map", str(vela), "--vary", "Vela.a=0.2RH:1.1RH:3", "--vary", "Vela.e=0:0.4:2",
        "--orbits", "3", "--out", str(out2), "--plot", str(svg), "--show", "megno")
expect(r.returncode == 0, f"2-D map: exit {r.returncode}: {r.stderr}")
expect(svg.exists() and "<svg" in svg.read_text(errors="replace")[:2000], "2-D map: SVG written")
if out2.exists():
    with h5py.File(out2, "r") as f:
        expect(f["/map/mean_megno"].shape == (3, 2), f"grid shape {f['/map/mean_megno'].shape}")
if svg.exists():
    text = html.unescape(svg.read_text(errors="replace"))  # PLplot's svg writes &#x..; refs
    expect("Domingos" in text and "Hill radius" in text, "2-D map: limit curves labelled")

# Input errors: exit 2 with the field and what was expected.
r = run("map", str(vela), "--vary", "Nobody.a=0.2RH:0.7RH:3", "--out", str(work / "x.h5"))
expect(r.returncode == 2 and "Nobody" in r.stderr, f"unknown body: {r.returncode} {r.stderr}")
r = run("map", str(vela), "--vary", "Vela.a=0.2kg:0.7kg:3", "--out", str(work / "x.h5"))
expect(r.returncode == 2 and "length" in r.stderr, f"wrong unit: {r.returncode} {r.stderr}")
r = run("map", str(vela), "--vary", "Vela.a=0.2RH:0.7RH:3", "--out", str(work / "x.h5"),
        "--plot", str(work / "x.gif"))
expect(r.returncode == 2 and ".png or .svg" in r.stderr, f"bad plot: {r.returncode} {r.stderr}")

print(f"{passed} checks passed")
for f in failures:
    print("FAIL:", f)
sys.exit(1 if failures else 0)
