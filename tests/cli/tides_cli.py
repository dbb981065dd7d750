#!/usr/bin/env python3
"""End-to-end tests of `moonwright tides`: text, JSON, HDF5 and PNG outputs, exit codes, and the
`tidal_fate` field of `check --json`.

Usage: tides_cli.py MOONWRIGHT_BINARY SOURCE_DIR   (needs h5py: run with /usr/bin/python3)
"""
import json
import math
import shutil
import pathlib
import subprocess
import sys
import tempfile

import h5py

binary, source = sys.argv[1], pathlib.Path(sys.argv[2])
teodora = source / "scenarios/teodora.toml"
failures = []
passed = 0
YEAR = 365.25 * 86400.0  # Julian year (IAU)


def run(*args, stdin=None):
    return subprocess.run([binary, *args], input=stdin, capture_output=True, text=True, timeout=120)


def expect(condition, what):
    global passed
    if condition:
        passed += 1
    else:
        failures.append(what)


work = pathlib.Path(tempfile.mkdtemp(prefix="moonwright-tides-"))

# The habitable scenario: a fate in words, the default span named, exit 0.
r = run("tides", str(teodora))
expect(r.returncode == 0, f"tides teodora: exit {r.returncode}: {r.stderr}")
expect("fates:" in r.stdout, "text output has a fates section")
expect("moon 'Brannoc' survives" in r.stdout or "moon 'Brannoc' reaches" in r.stdout
       or "moon 'Brannoc' migrates" in r.stdout, f"a fate for Brannoc in {r.stdout[-400:]!r}")
expect("(the star's age)" in r.stdout, "the default span says where it comes from")

# JSON: the documented fields.
r = run("tides", str(teodora), "--json")
expect(r.returncode == 0, f"tides --json: exit {r.returncode}: {r.stderr}")
j = json.loads(r.stdout)
for key in ("system", "tide_model", "planets", "spin_axes", "fates", "notes"):
    expect(key in j, f"JSON has {key}")
expect(j["tide_model"] == "constant_q", "default model is constant Q")
planet = j["planets"][0]
for key in ("name", "span_s", "span_from", "t_end_s", "k2", "tidal_q", "spin_period_start_s",
            "spin_period_end_s", "moons", "series", "assumptions"):
    expect(key in planet, f"planet JSON has {key}")
expect(planet["span_from"] == "star_age", "span from the star's age (3.9 Gyr in the design)")
expect(math.isclose(planet["span_s"], 3.9e9 * YEAR, rel_tol=1e-12), "span is 3.9 Gyr")
moon = planet["moons"][0]
for key in ("name", "a_start_m", "a_end_m", "fate", "fate_time_s", "inner_limit_m",
            "stability_limit_m", "synchronous_orbit_m"):
    expect(key in moon, f"moon JSON has {key}")
expect(moon["fate"] in ("survives", "roche_limit", "stability_limit"), f"fate {moon['fate']}")
expect(len(j["fates"]) >= 1 and all(isinstance(x, str) for x in j["fates"]), "fates in words")
expect(len(planet["series"]["t_s"]) == 201, "201 samples by default")

# --span: a quantity with a time unit; a bare number is in Gyr.
for text, seconds in (("2Gyr", 2e9 * YEAR), ("500 Myr", 5e8 * YEAR), ("1.5", 1.5e9 * YEAR)):
    r = run("tides", str(teodora), "--json", "--span", text, "--samples", "5")
    expect(r.returncode == 0, f"--span {text}: exit {r.returncode}: {r.stderr}")
    if r.returncode == 0:
        p = json.loads(r.stdout)["planets"][0]
        expect(math.isclose(p["span_s"], seconds, rel_tol=1e-12), f"--span {text} gives {seconds} s")
        expect(p["span_from"] == "given", f"--span {text} is reported as given")
        expect(len(p["series"]["t_s"]) == 5, "--samples 5 gives 5 rows")

# --out: an HDF5 file that h5py opens; every dataset has units and description.
out = work / "teodora.h5"
r = run("tides", str(teodora), "--out", str(out), "--samples", "31", "--seed", "7", "--json")
expect(r.returncode == 0, f"--out: exit {r.returncode}: {r.stderr}")
expect(out.exists(), "--out wrote the file")
expect(not (work / "teodora.h5.partial").exists(), "no partial file left after success")
if out.exists():
    jj = json.loads(r.stdout)
    with h5py.File(out, "r") as f:
        datasets = []
        f.visititems(lambda name, obj: datasets.append((name, obj))
                     if isinstance(obj, h5py.Dataset) else None)
        expect(len(datasets) >= 8, f"at least 8 datasets, found {[n for n, _ in datasets]}")
        for name, d in datasets:
            expect("units" in d.attrs, f"{name} has units")
            expect("description" in d.attrs and len(d.attrs["description"]) > 0,
                   f"{name} has a description")
        for name in ("design/text", "tides/time", "tides/planet_spin_period", "tides/moon_a",
                     "tides/moon_e", "tides/fates", "tides/precession_constant",
                     "tides/secular_f", "tides/secular_g"):
            expect(name in f, f"file has /{name}")
        run_attrs = f["run"].attrs
        expect(run_attrs.get("command") == "tides", "/run command = tides")
        expect(run_attrs.get("seed") == "7", f"/run seed = 7, got {run_attrs.get('seed')!r}")
        expect(len(run_attrs.get("version", "")) > 0, "/run has a version")
        text = f["design/text"][()]
        text = text.decode() if isinstance(text, bytes) else text
        expect(text == teodora.read_text(), "/design/text is the design file as given")
        t = f["tides/time"][:]
        a = f["tides/moon_a"][:]
        expect(t.shape == (31,) and a.shape == (31, 1), f"shapes {t.shape} {a.shape}")
        expect(f["tides/time"].attrs["units"] == "s" and f["tides/moon_a"].attrs["units"] == "m",
               "time in s, a in m")
        expect(f["tides/moon_a"].attrs["columns"] == "Brannoc", "moon_a columns name the moon")
        p = jj["planets"][0]
        expect(math.isclose(t[-1], p["span_s"], rel_tol=1e-12), "last time is the span")
        # The same run seen two ways: HDF5 and JSON agree on the final a.
        expect(math.isclose(a[-1, 0], p["moons"][0]["a_end_m"], rel_tol=1e-12),
               "final a in the file equals the JSON a_end_m")
        fates = f["tides/fates"][:]
        expect(len(fates) == len(jj["fates"]), "one fates record per fate line")
        expect(fates[0]["body"].decode() == "Brannoc", "the fate record names the moon")
        expect(fates[0]["detail"].decode() == jj["fates"][0], "the record carries the line")
        pc = f["tides/precession_constant"]
        expect(pc.attrs["units"] == "rad/s" and pc.attrs["planets"] == "Teodora",
               "precession constant in rad/s per planet")

# Bad --span: exit 2, a clear message, no file and no partial file.
for bad in ("two Gyr", "3 km", "-1 Gyr", "0"):
    target = work / "bad_span.h5"
    r = run("tides", str(teodora), "--span", bad, "--out", str(target))
    expect(r.returncode == 2, f"--span {bad!r}: exit {r.returncode} (want 2)")
    expect("--span" in r.stderr and "Gyr" in r.stderr, f"--span {bad!r}: message {r.stderr!r}")
    expect(r.stdout == "", f"--span {bad!r}: nothing on stdout")
    expect(not target.exists() and not (work / "bad_span.h5.partial").exists(),
           f"--span {bad!r}: no file written")

# A planet without a rotation period: exit 2, the message says what to write and where.
norot = work / "norot.toml"
norot.write_text(teodora.read_text().replace('rotation_period = "22.6 h"\n', ""))
r = run("tides", str(norot))
expect(r.returncode == 2, f"no rotation period: exit {r.returncode} (want 2)")
expect("rotation_period = \"24 h\"" in r.stderr and "Teodora" in r.stderr,
       f"no rotation period: message {r.stderr!r}")
expect(f"{norot}:" in r.stderr, f"no rotation period: location in {r.stderr!r}")

# The time-lag model needs a time lag.
r = run("tides", str(teodora), "--model", "lag")
expect(r.returncode == 2 and "time_lag" in r.stderr, f"--model lag: {r.returncode} {r.stderr!r}")
expect(run("tides", str(teodora), "--model", "fast").returncode == 2, "unknown model: exit 2")
expect(run("tides", str(teodora), "--samples", "1").returncode == 2, "--samples 1: exit 2")

# Unwritable --out: exit 4 and no partial file.
missing_dir = work / "no_such_dir" / "x.h5"
r = run("tides", str(teodora), "--out", str(missing_dir))
expect(r.returncode == 4, f"--out in a missing directory: exit {r.returncode} (want 4)")
expect(not missing_dir.parent.exists(), "no directory created")
expect(r.stdout == "", "nothing printed when the output failed")
# A directory as the target: the partial file can be written but not renamed over it.
blocker = work / "a_directory.h5"
blocker.mkdir()
r = run("tides", str(teodora), "--out", str(blocker))
expect(r.returncode == 4, f"--out onto a directory: exit {r.returncode} (want 4): {r.stderr}")
expect(not (work / "a_directory.h5.partial").exists(), "--out onto a directory: partial removed")
expect("a_directory.h5" in r.stderr, f"the message names the file: {r.stderr!r}")

# --plot writes a PNG.
png = work / "teodora.png"
r = run("tides", str(teodora), "--plot", str(png), "--samples", "40")
expect(r.returncode == 0, f"--plot: exit {r.returncode}: {r.stderr}")
expect(png.exists() and png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n", "--plot wrote a PNG")
r = run("tides", str(teodora), "--plot", str(work / "no_such_dir" / "x.png"))
expect(r.returncode == 4, f"--plot in a missing directory: exit {r.returncode} (want 4)")

# check --json carries the short tidal fate.
r = run("check", str(teodora), "--json")
expect(r.returncode == 0, f"check --json: exit {r.returncode}")
bodies = {b["name"]: b for b in json.loads(r.stdout)["bodies"]}
expect(bodies["Ysolde"]["tidal_fate"] is None, "the star has no tidal fate")
expect(isinstance(bodies["Brannoc"]["tidal_fate"], str) and "Brannoc" in bodies["Brannoc"]["tidal_fate"],
       "the moon's tidal fate is a string")
codes = [x["code"] for x in bodies["Brannoc"]["findings"]]
expect("tidal_fate" in codes, f"a tidal_fate note on the moon, codes {codes}")

shutil.rmtree(work, ignore_errors=True)
for f in failures:
    print("FAIL:", f)
print(f"{passed} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
