#!/usr/bin/env python3
"""End-to-end tests of `moonwright survey` and `survey-merge`: --jobs 1 and --jobs 2 give
identical summaries and HDF5 tables; the HDF5 layout (units and descriptions, sorted rows, clone
seeds, invalid designs with findings); bad input (exit 2) and unwritable output (exit 4); a
survey killed with SIGKILL and rerun ends with the same files as an uninterrupted one; shards
merged give the unsharded survey.

Usage: survey_cli.py MOONWRIGHT_BINARY SOURCE_DIR WORK_DIR
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


def mw(*args, timeout=300, **kw):
    return subprocess.run([binary, *map(str, args)], capture_output=True, text=True,
                          timeout=timeout, **kw)


def tables(path):
    """Every dataset of a survey file (values) and the root attributes."""
    found = {}
    with h5py.File(path, "r") as f:
        f.visititems(lambda n, o: found.__setitem__(n, o[()]) if isinstance(o, h5py.Dataset) else None)
        attrs = {k: f.attrs[k] for k in f.attrs}
    return found, attrs


def same_tables(a, b):
    ta, aa = tables(a)
    tb, ab = tables(b)
    if sorted(ta) != sorted(tb):
        return f"dataset lists differ: {sorted(set(ta) ^ set(tb))[:5]}"
    for name in ta:
        x, y = ta[name], tb[name]
        if isinstance(x, np.ndarray) and x.dtype.kind == "f":
            if x.shape != y.shape or not np.array_equal(x, y, equal_nan=True):
                return f"{name} differs"
        elif isinstance(x, np.ndarray) and x.dtype.names:
            if x.shape != y.shape or x.tobytes() != y.tobytes():
                return f"{name} differs"
        elif not np.array_equal(x, y):
            return f"{name} differs"
    if {k: str(v) for k, v in aa.items()} != {k: str(v) for k, v in ab.items()}:
        return "root attributes differ"
    return ""


# Inputs: generated designs as JSON lines (one broken line among them), a folder with a
# hand-made design and a design with a rule error, and a single design file.
gen = mw("generate", "--count", "5", "--seed", "77", "--kind", "rocky")
lines = gen.stdout.splitlines()
lines.insert(2, '{"system": {"name": "Broken"')  # does not parse
(work / "batch.jsonl").write_text("\n".join(lines) + "\n\n")
folder = work / "folder"
folder.mkdir()
shutil.copy(source / "scenarios/teodora.toml", folder / "b_teodora.toml")
bad_moon = (source / "scenarios/teodora.toml").read_text()
(folder / "a_notes.txt").write_text("not a design, ignored")
shutil.copy(source / "scenarios/crowded.toml", work / "crowded.toml")
inputs = [work / "batch.jsonl", folder, work / "crowded.toml"]
common = ["--clones", "3", "--orbits", "100", "--seed", "9", "--quiet"]

# --jobs 1 and --jobs 2: identical summaries (bytes) and tables.
runs = {}
for jobs in (1, 2):
    out = work / f"jobs{jobs}.h5"
    r = mw("survey", *inputs, "--out", out, "--jobs", jobs, "--summary", work / f"jobs{jobs}.jsonl", *common)
    expect(r.returncode == 0, f"--jobs {jobs}: exit {r.returncode}: {r.stderr}")
    r = mw("survey", *inputs, "--out", work / f"jobs{jobs}b.h5", "--jobs", jobs,
           "--summary", work / f"jobs{jobs}.csv", *common)
    expect(r.returncode == 0, f"--jobs {jobs} csv: exit {r.returncode}: {r.stderr}")
    runs[jobs] = out
    expect(not pathlib.Path(str(out) + ".journal").exists(), "journal removed after success")
j1 = (work / "jobs1.jsonl").read_bytes()
expect(j1 == (work / "jobs2.jsonl").read_bytes(), "JSON-lines summaries of --jobs 1 and 2 differ")
expect((work / "jobs1.csv").read_bytes() == (work / "jobs2.csv").read_bytes(), "CSV summaries differ")
diff = same_tables(runs[1], runs[2])
expect(not diff, f"HDF5 of --jobs 1 and 2: {diff}")

# Layout and contents.
summary = [json.loads(l) for l in j1.decode().splitlines()]
expect(len(summary) == 8, f"8 designs expected (6 lines + 1 folder design + 1 file), got {len(summary)}")
expect([s["design"] for s in summary] == list(range(len(summary))), "designs in order")
expect(summary[2]["verdict"] == "invalid" and summary[2]["clones"] == 0, f"broken line: {summary[2]}")
expect(summary[2]["source"].endswith("batch.jsonl:3"), f"source of the broken line: {summary[2]['source']}")
expect(summary[6]["source"].endswith("b_teodora.toml"), f"folder design: {summary[6]['source']}")
allowed = {"stable", "chaotic", "at_risk", "unstable", "unreliable", "invalid"}
expect(all(s["verdict"] in allowed for s in summary), "verdict names")
for s in summary:
    if s["verdict"] == "invalid":
        continue
    expect(s["clones"] == 3 and sum(s["first_events"].values()) == 3, f"3 clones: {s}")
    expect(s["wilson_lower"] <= s["survival_fraction"] <= s["wilson_upper"], f"Wilson bounds: {s}")
    if s["verdict"] == "stable":
        expect(s["survivors"] == 3 and s["first_events"]["none"] == 3, f"stable means all survived: {s}")
crowded = summary[7]
expect(crowded["name"] == "Ormund", f"last design is the crowded one: {crowded['name']}")
print("crowded:", crowded["verdict"], crowded["headline"])

with h5py.File(runs[1], "r") as f:
    missing = []
    f.visititems(lambda n, o: missing.extend(f"{n}@{a}" for a in ("units", "description")
                                             if isinstance(o, h5py.Dataset) and a not in o.attrs))
    expect(not missing, f"datasets without units/description: {missing[:5]}")
    tasks = f["tasks"][()]
    keys = [(int(t["design"]), int(t["clone"])) for t in tasks]
    expect(keys == sorted(keys), "task rows sorted by (design, clone)")
    valid = [s["design"] for s in summary if s["verdict"] != "invalid"]
    expect(len(tasks) == 3 * len(valid), f"{len(tasks)} task rows for {len(valid)} valid designs")
    expect(2 not in {k[0] for k in keys}, "no tasks for the invalid design")
    seeds = {(int(t["design"]), int(t["clone"])): int(t["seed"]) for t in tasks}
    teodora_seed = json.loads(json.dumps(1))
    expect(seeds[(6, 1)] != seeds[(6, 2)], "clones have their own seeds")
    expect(f["findings"].shape[0] >= 1 and int(f["findings"][0]["design"]) == 2, "findings of the invalid design")
    expect("design/000002/findings" in f, "per-design group of the invalid design holds its findings")
    g = f["design/000000"]
    expect(g["survival"].shape == (3,) and g["first_events"].shape == (8,), "per-design statistics")
    expect(g["kaplan_meier"].shape[1] == 6, "Kaplan-Meier curve has 6 columns")
    expect(f.attrs["clones"] == 3 and f.attrs["megno"] == 0, "settings attributes")
    stats = f["statistics"][()]
    expect([x["verdict"].decode() for x in stats] == [s["verdict"] for s in summary], "statistics table = summary")

# Clone 0 is the design as `run` sees it: same verdict (MEGNO off, same span).
r = mw("run", folder / "b_teodora.toml", "--orbits", "100", "--no-megno", "--quiet", "--json",
       "--out", work / "teodora_run.h5")
with h5py.File(runs[1], "r") as f:
    row = [t for t in f["tasks"][()] if int(t["design"]) == 6 and int(t["clone"]) == 0][0]
expect(r.returncode == 0 and json.loads(r.stdout)["verdict"] == row["verdict"].decode(),
       "clone 0 verdict = moonwright run verdict")

# JSON lines on standard input ("-"): the same designs, labelled <stdin>:LINE.
r = mw("survey", "-", "--out", work / "stdin.h5", "--summary", work / "stdin.jsonl", *common,
       input=(work / "batch.jsonl").read_text())
stdin_summary = [json.loads(l) for l in (work / "stdin.jsonl").read_text().splitlines()]
expect(r.returncode == 0 and len(stdin_summary) == 6, f"stdin survey: {r.returncode} {r.stderr}")
expect(stdin_summary and stdin_summary[2]["source"] == "<stdin>:3", "stdin source labels")
# (Headlines of the invalid line name its source, so compare verdicts and counts.)
expect([(s["verdict"], s["survivors"], s["first_events"]) for s in stdin_summary]
       == [(s["verdict"], s["survivors"], s["first_events"]) for s in summary[:6]],
       "stdin gives the same verdicts as the file")

# Bad input exits 2, unwritable output 4; the journal refuses other settings.
expect(mw("survey", work / "nope.jsonl", "--out", work / "x.h5").returncode == 2, "missing input: exit 2")
expect(mw("survey", *inputs, "--out", work / "x.h5", "--shard", "2/2").returncode == 2, "bad shard: exit 2")
expect(mw("survey", *inputs, "--out", work / "x.h5", "--summary", work / "x.txt").returncode == 2, "bad summary: exit 2")
expect(mw("survey", *inputs, "--out", "/nonexistent/dir/x.h5", *common).returncode == 4, "unwritable out: exit 4")
(work / "other.h5.journal").write_text('{"journal":"moonwright survey","settings":"something else"}\n')
r = mw("survey", *inputs, "--out", work / "other.h5", *common)
expect(r.returncode == 2 and "other settings" in r.stderr, f"journal of other settings: {r.returncode} {r.stderr}")

# Killed with SIGKILL and rerun: the same files as an uninterrupted run.
gen = mw("generate", "--count", "8", "--seed", "3", "--kind", "rocky", "--out", work / "kill.jsonl")
kill_args = [work / "kill.jsonl", "--clones", "4", "--orbits", "3000", "--seed", "5", "--quiet"]
ref = work / "kill_ref.h5"
t0 = time.time()
r = mw("survey", *kill_args, "--out", ref, "--summary", work / "kill_ref.jsonl", "--jobs", "1")
full_time = time.time() - t0
expect(r.returncode == 0, f"reference survey: {r.stderr}")
out = work / "kill.h5"
journal = pathlib.Path(str(out) + ".journal")
p = subprocess.Popen([binary, "survey", *map(str, kill_args), "--out", str(out),
                      "--summary", str(work / "kill_sum.jsonl"), "--jobs", "2"])
killed_with = -1
deadline = time.time() + 120
while time.time() < deadline and p.poll() is None:
    if journal.exists() and journal.read_text().count('"type":"task"') >= 8:
        p.send_signal(signal.SIGKILL)
        p.wait()
        killed_with = journal.read_text().count('"type":"task"')
        break
    time.sleep(0.01)
if p.poll() is None:
    p.kill()
    p.wait()
print(f"reference survey {full_time:.1f} s; killed after {killed_with} of 32 tasks")
expect(0 < killed_with < 32, f"the survey was killed part-way (tasks in journal: {killed_with})")
expect(not out.exists(), "no survey file after the kill")
# A torn last line (as a kill in mid-write leaves) is dropped on replay.
with open(journal, "a") as j:
    j.write('{"type":"task","design":7,"clo')
rerun_args = [a for a in kill_args if a != "--quiet"]
r = mw("survey", *rerun_args, "--out", out, "--summary", work / "kill_sum.jsonl", "--jobs", "1")
expect(r.returncode == 0, f"rerun after kill: {r.stderr}")
expect(f"{32 - killed_with} tasks run, {killed_with} resumed" in r.stdout, f"the rerun resumed: {r.stdout}")
expect((work / "kill_sum.jsonl").read_bytes() == (work / "kill_ref.jsonl").read_bytes(),
       "summary after kill + rerun differs from the uninterrupted one")
diff = same_tables(out, ref) if out.exists() else "no file"
expect(not diff, f"HDF5 after kill + rerun: {diff}")

# Ctrl-C (SIGINT): exit code 130 with a message, the journal kept, no result file; the same
# command again finishes with the same summary as the uninterrupted run.
out = work / "int.h5"
journal = pathlib.Path(str(out) + ".journal")
p = subprocess.Popen([binary, "survey", *map(str, kill_args), "--out", str(out),
                      "--summary", str(work / "int.jsonl"), "--jobs", "2"],
                     stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
interrupted_at = -1
deadline = time.time() + 120
while time.time() < deadline and p.poll() is None:
    if journal.exists() and journal.read_text().count('"type":"task"') >= 8:
        p.send_signal(signal.SIGINT)
        interrupted_at = journal.read_text().count('"type":"task"')
        break
    time.sleep(0.01)
stdout, stderr = p.communicate(timeout=120)
expect(0 < interrupted_at < 32, f"the survey was interrupted part-way ({interrupted_at} tasks)")
expect(p.returncode == 130, f"Ctrl-C exit code {p.returncode}: {stderr}")
expect("interrupted" in stderr and "again to continue" in stderr, f"Ctrl-C message: {stderr!r}")
expect(not out.exists() and journal.exists(), "after Ctrl-C: the journal, no survey file")
kept = journal.read_text().count('"type":"task"') if journal.exists() else -1
print(f"Ctrl-C after {interrupted_at} tasks: exit {p.returncode}, {kept} tasks in the journal")
r = mw("survey", *rerun_args, "--out", out, "--summary", work / "int.jsonl", "--jobs", "2")
expect(r.returncode == 0, f"rerun after Ctrl-C: {r.stderr}")
expect(f"{32 - kept} tasks run, {kept} resumed" in r.stdout, f"the rerun resumed: {r.stdout}")
expect((work / "int.jsonl").read_bytes() == (work / "kill_ref.jsonl").read_bytes(),
       "summary after Ctrl-C + rerun differs from the uninterrupted one")

# Shards 0/2 and 1/2, merged, give the unsharded survey.
shard_files = []
for k in (1, 0):
    s = work / f"shard{k}.h5"
    r = mw("survey", *inputs, "--out", s, "--shard", f"{k}/2", *common)
    expect(r.returncode == 0, f"shard {k}/2: {r.stderr}")
    shard_files.append(s)
r = mw("survey-merge", work / "merged.h5", *shard_files, "--summary", work / "merged.jsonl", "--quiet")
expect(r.returncode == 0, f"survey-merge: {r.stderr}")
expect((work / "merged.jsonl").read_bytes() == j1, "merged summary differs from the unsharded one")
diff = same_tables(work / "merged.h5", runs[1])
expect(not diff, f"merged HDF5 vs unsharded: {diff}")
r = mw("survey-merge", work / "m2.h5", shard_files[0], "--quiet")
expect(r.returncode == 2 and "shard 0/2" in r.stderr, f"merge with a missing shard: {r.returncode} {r.stderr}")

print(f"{passed} checks passed")
if failures:
    print("FAILED:\n  " + "\n  ".join(failures))
    sys.exit(1)
