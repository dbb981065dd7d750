#!/usr/bin/env python3
"""End-to-end tests of `moonwright check`: exit codes, JSON fields, malformed designs, stdin.

Usage: check_cli.py MOONWRIGHT_BINARY SOURCE_DIR
"""
import json
import pathlib
import subprocess
import sys

binary, source = sys.argv[1], pathlib.Path(sys.argv[2])
failures = []
passed = 0


def run(*args, stdin=None):
    return subprocess.run([binary, *args], input=stdin, capture_output=True, text=True, timeout=60)


def expect(condition, what):
    global passed
    if condition:
        passed += 1
    else:
        failures.append(what)


# Every bundled scenario loads and checks; none is bad input.
for scenario in sorted((source / "scenarios").glob("*.*")):
    if scenario.suffix not in (".toml", ".json"):
        continue
    r = run("check", str(scenario))
    expect(r.returncode in (0, 3), f"{scenario.name}: exit {r.returncode}, stderr {r.stderr!r}")
    expect(r.stdout.strip() != "", f"{scenario.name}: no output")

# The habitable scenario: no error findings, and the documented JSON fields for every body.
r = run("check", str(source / "scenarios/teodora.toml"), "--json")
expect(r.returncode == 0, f"teodora --json: exit {r.returncode}: {r.stderr}")
report = json.loads(r.stdout)
required = ["mass_kg", "radius_m", "density_kg_m3", "surface_gravity_m_s2", "period_s",
            "hill_radius_m", "roche_limit_fluid_m", "roche_limit_rigid_m", "stability_limit_m",
            "findings"]
bodies = report["bodies"]
expect(len(bodies) >= 3, "teodora has a star, a planet and a moon")
for body in bodies:
    for field in required:
        expect(field in body, f"teodora body {body.get('name')}: missing {field}")
    for finding in body["findings"]:
        for key in ("severity", "code", "message"):
            expect(key in finding, f"finding without {key}: {finding}")
moon = [b for b in bodies if b.get("kind") == "moon"][0]
expect(moon["period_s"] > 0 and moon["hill_radius_m"] > 0, "moon has a period and a Hill radius")

# JSON copy of the habitable scenario gives the same report.
r2 = run("check", str(source / "scenarios/teodora.json"), "--json")
expect(r2.returncode == 0, f"teodora.json: exit {r2.returncode}: {r2.stderr}")
if r2.returncode == 0:
    expect(json.loads(r2.stdout)["bodies"] == bodies, "teodora.json and teodora.toml agree")

# Standard input.
text = (source / "scenarios/teodora.toml").read_text()
r = run("check", "-", "--json", stdin=text)
expect(r.returncode == 0 and json.loads(r.stdout)["bodies"] == bodies, "design from stdin")

# Malformed designs: exit 2, the expected fragment and location on stderr, nothing on stdout.
malformed = source / "tests/design/malformed"
count = 0
for line in (malformed / "expected.txt").read_text().splitlines():
    if not line.strip() or line.startswith("#"):
        continue
    name, fragment, location = [part.strip() for part in line.split("|")]
    r = run("check", str(malformed / name))
    count += 1
    expect(r.returncode == 2, f"{name}: exit {r.returncode} (want 2); stderr {r.stderr!r}")
    expect(fragment in r.stderr, f"{name}: {fragment!r} not in {r.stderr!r}")
    if location != "-":
        expect(f"{name}:{location}" in r.stderr, f"{name}: location {location} not in {r.stderr!r}")
    expect(r.stdout == "", f"{name}: wrote to stdout: {r.stdout!r}")
    expect(r.stderr.count("\n") == 1, f"{name}: want ONE message line, got {r.stderr!r}")
expect(count >= 25, f"at least 25 malformed designs (found {count})")

# Bad command lines are bad input too.
expect(run("check").returncode == 2, "missing design argument gives exit 2")
expect(run("check", "nowhere.toml").returncode == 2, "missing file gives exit 2")
expect(run("check", str(source / "scenarios/teodora.toml"), "--bogus").returncode == 2,
       "unknown option gives exit 2")

for f in failures:
    print("FAIL:", f)
print(f"{passed} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
