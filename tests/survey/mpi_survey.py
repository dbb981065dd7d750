#!/usr/bin/env python3
"""`mpirun -n 2 moonwright-mpi survey` gives the same summary (bytes) and the same HDF5 tables
as `moonwright survey --jobs 1`.

Usage: mpi_survey.py MPIEXEC MOONWRIGHT_MPI MOONWRIGHT SOURCE_DIR WORK_DIR
"""
import pathlib
import shutil
import subprocess
import sys

import h5py
import numpy as np

mpiexec, mpi_binary, binary = sys.argv[1], sys.argv[2], sys.argv[3]
source, work = pathlib.Path(sys.argv[4]), pathlib.Path(sys.argv[5])
shutil.rmtree(work, ignore_errors=True)
work.mkdir(parents=True)
failures = []

gen = subprocess.run([binary, "generate", "--count", "6", "--seed", "41", "--kind", "rocky", "--out", str(work / "in.jsonl")],
                     capture_output=True, text=True, timeout=60)
inputs = [str(work / "in.jsonl"), str(source / "scenarios/crowded.toml"), str(source / "scenarios/teodora.toml")]
common = ["--clones", "3", "--orbits", "100", "--seed", "4", "--quiet"]
r1 = subprocess.run([binary, "survey", *inputs, "--out", str(work / "threads.h5"), "--jobs", "1",
                     "--summary", str(work / "threads.jsonl"), *common],
                    capture_output=True, text=True, timeout=300)
if r1.returncode != 0:
    failures.append(f"threads run: {r1.stderr}")
r2 = subprocess.run([mpiexec, "-n", "2", "--allow-run-as-root", "--oversubscribe", mpi_binary, "survey",
                     *inputs, "--out", str(work / "mpi.h5"), "--summary", str(work / "mpi.jsonl"), *common],
                    capture_output=True, text=True, timeout=300)
if r2.returncode != 0:
    failures.append(f"mpirun: exit {r2.returncode}: {r2.stdout} {r2.stderr}")
else:
    if (work / "mpi.jsonl").read_bytes() != (work / "threads.jsonl").read_bytes():
        failures.append("MPI summary differs from --jobs 1")
    with h5py.File(work / "mpi.h5", "r") as a, h5py.File(work / "threads.h5", "r") as b:
        for name in ("tasks", "designs", "statistics", "findings"):
            if a[name][()].tobytes() != b[name][()].tobytes():
                failures.append(f"/{name} differs")
        if a["tasks"].shape[0] != 24:
            failures.append(f"24 task rows expected, got {a['tasks'].shape[0]}")

# A bad input under MPI: exit 2 from rank 0, no hang.
r3 = subprocess.run([mpiexec, "-n", "2", "--allow-run-as-root", "--oversubscribe", mpi_binary, "survey",
                     str(work / "missing.jsonl"), "--out", str(work / "bad.h5")],
                    capture_output=True, text=True, timeout=120)
if r3.returncode == 0:
    failures.append("missing input under MPI should fail")

if failures:
    print("FAILED:\n  " + "\n  ".join(failures))
    sys.exit(1)
print("MPI survey equals the threaded one")
