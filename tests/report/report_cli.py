#!/usr/bin/env python3
"""End-to-end tests of `moonwright report`.

Usage: report_cli.py errors  MOONWRIGHT SOURCE_DIR WORK_DIR
       report_cli.py survey  MOONWRIGHT SOURCE_DIR WORK_DIR
       report_cli.py browser MOONWRIGHT SOURCE_DIR WORK_DIR CHROMIUM

errors:  bad input gives exit 2 (missing file, not HDF5, HDF5 not from moonwright, a file that
         says it is a survey but is not one), an output that cannot be written gives exit 4, and nothing half
         written is left behind.
survey:  a small real survey (3 generated rocky designs, crowded, one broken design; 3 clones,
         30 orbits) through `moonwright report --figures`: banner, table, figures, findings;
         a shard file is refused.
browser: `moonwright run` on scenarios/teodora.toml (500 orbits) and scenarios/crowded.toml, then
         `moonwright report --figures DIR`; headless Chromium renders each page (screenshots must
         not be blank), and the dumped DOM must hold the verdict from the HDF5 file, every figure
         as an img with data-figure (at least 4), and for crowded the close-approach event row.
"""
import os
import pathlib
import re
import shutil
import subprocess
import sys
import tempfile

import h5py

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import png_stats  # noqa: E402

FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--hide-scrollbars"]
failures = []
passed = 0


def check(ok, what):
    global passed
    print(("ok   " if ok else "FAIL ") + what)
    if ok:
        passed += 1
    else:
        failures.append(what)


def mw(binary, *args, timeout=300):
    return subprocess.run([binary, *map(str, args)], capture_output=True, text=True,
                          timeout=timeout)


def leftovers(folder):
    return [p.name for p in pathlib.Path(folder).iterdir() if ".tmp" in p.name]


def errors(binary, source, work):
    h5 = work / "small.h5"
    r = mw(binary, "run", source / "scenarios/teodora.toml", "--orbits", "20", "--samples", "20",
           "--quiet", "--out", h5)
    check(r.returncode == 0 and h5.exists(), f"small run written (exit {r.returncode}) {r.stderr}")

    r = mw(binary, "report", work / "missing.h5", "--out", work / "missing.html")
    check(r.returncode == 2, f"missing file: exit {r.returncode} == 2")
    check("no such result file" in r.stderr and "missing.h5" in r.stderr,
          f"missing file message names the file: {r.stderr.strip()!r}")
    check(not (work / "missing.html").exists(), "missing file: no page written")

    r = mw(binary, "report", source / "scenarios/teodora.toml", "--out", work / "toml.html")
    check(r.returncode == 2, f"a TOML file: exit {r.returncode} == 2")
    check("not an HDF5 result file" in r.stderr, f"TOML file message: {r.stderr.strip()!r}")
    check(not (work / "toml.html").exists(), "TOML file: no page written")

    foreign = work / "foreign.h5"
    with h5py.File(foreign, "w") as f:
        f["data"] = [1.0, 2.0]
    r = mw(binary, "report", foreign, "--out", work / "foreign.html")
    check(r.returncode == 2, f"HDF5 not from moonwright: exit {r.returncode} == 2")
    check("/run@command" in r.stderr, f"foreign HDF5 message: {r.stderr.strip()!r}")

    survey = work / "survey.h5"
    with h5py.File(survey, "w") as f:
        f.create_group("run").attrs["command"] = "survey"
    r = mw(binary, "report", survey, "--out", work / "survey.html")
    check(r.returncode == 2 and "format is not 'moonwright survey'" in r.stderr,
          f"survey kind without a survey file: exit {r.returncode}: {r.stderr.strip()!r}")
    check(not (work / "survey.html").exists(), "not a survey file: no page written")

    # Kinds with a page but an incomplete file: bad input naming what is missing.
    for kind, missing in (("tides", "/design/text is missing"), ("map", "/design/text is missing"),
                          ("capture", "/capture is missing")):
        stub = work / f"{kind}-stub.h5"
        with h5py.File(stub, "w") as f:
            f.create_group("run").attrs["command"] = kind
        r = mw(binary, "report", stub, "--out", work / f"{kind}-stub.html")
        check(r.returncode == 2 and missing in r.stderr,
              f"incomplete {kind} result: exit {r.returncode}: {r.stderr.strip()!r}")
        check(not (work / f"{kind}-stub.html").exists(), f"incomplete {kind} result: no page")

    # A run result cut short: the series are gone.
    broken = work / "broken.h5"
    shutil.copy(h5, broken)
    with h5py.File(broken, "a") as f:
        del f["series/e"]
    r = mw(binary, "report", broken, "--out", work / "broken.html")
    check(r.returncode == 2 and "/series/e is missing" in r.stderr,
          f"broken run result: exit {r.returncode}: {r.stderr.strip()!r}")

    r = mw(binary, "report", h5, "--out", "/nonexistent-dir/x.html")
    check(r.returncode == 4, f"unwritable --out: exit {r.returncode} == 4 {r.stderr.strip()!r}")
    blocker = work / "a-file"
    blocker.write_text("not a folder\n")
    r = mw(binary, "report", h5, "--out", work / "fig.html", "--figures", blocker / "figs")
    check(r.returncode == 4, f"unwritable --figures: exit {r.returncode} == 4 {r.stderr.strip()!r}")
    check(not (work / "fig.html").exists(), "unwritable --figures: no page written")
    check(not leftovers(work), f"no temporary files left: {leftovers(work)}")

    r = mw(binary, "report", h5, "--out", work / "ok.html")
    check(r.returncode == 0 and (work / "ok.html").exists(), f"small report written: {r.stderr}")


def chromium(exe, args, work):
    profile = tempfile.mkdtemp(prefix="profile-", dir=work)
    try:
        return subprocess.run([exe] + FLAGS + ["--user-data-dir=" + profile] + args,
                              capture_output=True, text=True, timeout=120)
    finally:
        shutil.rmtree(profile, ignore_errors=True)


def screenshot(exe, html, png, width, height, work):
    if png.exists():
        png.unlink()
    r = chromium(exe, ["--screenshot=" + str(png), "--window-size=%d,%d" % (width, height),
                       "file://" + str(html)], work)
    check(png.exists(), f"screenshot {png.name} written (exit {r.returncode})")
    if not png.exists():
        return
    s = png_stats.stats(str(png))
    total = s["width"] * s["height"]
    # Not blank: text, banner and figures darken a good part of the page (common practice,
    # no source); an error page or an empty render stays almost all white.
    check(s["non_white"] > total // 20,
          f"{png.name} not blank: {s['non_white']} of {total} pixels non-white")
    check(s["dark"] > total // 500, f"{png.name} has dark text/axes: {s['dark']} pixels")


def text_of(fragment):
    return re.sub(r"\s+", " ", re.sub(r"<[^>]+>", " ", fragment)).strip()


def unescape(s):
    return (s.replace("&lt;", "<").replace("&gt;", ">").replace("&quot;", '"')
            .replace("&#39;", "'").replace("&amp;", "&"))


def report_scenario(binary, exe, source, work, name, run_args):
    h5, html, figs = work / f"{name}.h5", work / f"{name}.html", work / f"{name}-figures"
    r = mw(binary, "run", source / f"scenarios/{name}.toml", "--quiet", "--out", h5, *run_args)
    check(r.returncode == 0 and h5.exists(), f"{name}: run written (exit {r.returncode}) {r.stderr}")
    r = mw(binary, "report", h5, "--out", html, "--figures", figs)
    check(r.returncode == 0 and html.exists(), f"{name}: report written (exit {r.returncode}) {r.stderr}")
    if not html.exists():
        return None, None
    with h5py.File(h5, "r") as f:
        verdict = f["verdict"].attrs["verdict"]
        headline = f["verdict"].attrs["headline"]
        events = [(e["kind"].decode(), e["body_name"].decode(), e["other_name"].decode())
                  for e in f["events"][:]] if f["events"].shape[0] else []

    screenshot(exe, html, work / f"{name}-wide.png", 1200, 2400, work)
    screenshot(exe, html, work / f"{name}-narrow.png", 400, 2400, work)

    dom = chromium(exe, ["--dump-dom", "file://" + str(html)], work).stdout
    check("<html" in dom, f"{name}: DOM dumped ({len(dom)} characters)")
    banner = re.search(r'<div[^>]*id="verdict"[^>]*>(.*?)</div>', dom, re.S)
    check(banner is not None, f"{name}: verdict banner present")
    if banner:
        words = unescape(text_of(banner.group(1)))
        check(verdict in words and headline in words,
              f"{name}: banner holds the HDF5 verdict {verdict!r} and headline {headline!r}")
    imgs = re.findall(r'<img data-figure="([a-z_]+)"[^>]*src="data:image/png;base64,', dom)
    check(len(imgs) >= 4, f"{name}: {len(imgs)} figures rendered as img with data-figure: {imgs}")
    pngs = sorted(figs.glob("*.png"))
    check(len(pngs) == len(imgs), f"{name}: --figures wrote {len(pngs)} PNG files for {len(imgs)} figures")
    for p in pngs:
        s = png_stats.stats(str(p))
        check(s["non_white"] > 0 and s["dark"] > 0, f"{name}: {p.name} {s['width']}x{s['height']} has drawing")
    return dom, events


def browser(binary, source, work, exe):
    dom, events = report_scenario(binary, exe, source, work, "teodora", ["--orbits", "500"])
    if dom:
        section = re.search(r'<section[^>]*id="events"[^>]*>(.*?)</section>', dom, re.S)
        check(section is not None and "No event over the" in section.group(1),
              "teodora: the event section says there was no event")
        check("Brannoc" in dom and "Hill radius" in dom, "teodora: bodies and derived quantities")
    dom, events = report_scenario(binary, exe, source, work, "crowded", [])
    if dom:
        check(bool(events) and events[0][0] == "close_approach",
              f"crowded: the HDF5 file has a close approach first: {events[:1]}")
        section = re.search(r'<section[^>]*id="events"[^>]*>(.*?)</section>', dom, re.S)
        check(section is not None, "crowded: event section present")
        if section and events:
            rows = [text_of(r) for r in re.findall(r"<tr>(.*?)</tr>", section.group(1), re.S)]
            kind, a, b = events[0]
            hit = [r for r in rows if kind.replace("_", " ") in r and a in r and b in r
                   and "mutual Hill radii" in r]
            check(bool(hit), f"crowded: event table row for the close approach of {a} and {b}: {rows[:2]}")


def make_survey(binary, source, work, name="survey", extra=()):
    """A small survey: three generated rocky designs, scenarios/crowded.toml and a design that
    does not parse, 3 clones each over 30 orbits. Returns the HDF5 path (None on failure)."""
    batch = work / "rocky.jsonl"
    if not batch.exists():
        r = mw(binary, "generate", "--count", "3", "--seed", "7", "--kind", "rocky", "--out", batch)
        check(r.returncode == 0 and batch.exists(), f"3 rocky designs generated: {r.stderr.strip()}")
        (work / "broken.toml").write_text('[system\nname = "Unfinished"\n')
    h5 = work / f"{name}.h5"
    r = mw(binary, "survey", batch, source / "scenarios/crowded.toml", work / "broken.toml",
           "--clones", "3", "--orbits", "30", "--jobs", "2", "--quiet", "--out", h5, *extra,
           timeout=600)
    check(r.returncode == 0 and h5.exists(), f"{name}: survey written (exit {r.returncode}) "
          f"{r.stderr.strip()[-400:]}")
    return h5 if h5.exists() else None


def survey_statistics(h5):
    """Verdict, headline and name of each design from /statistics of a survey file."""
    with h5py.File(h5, "r") as f:
        return [(r["verdict"].decode(), r["headline"].decode(), r["name"].decode())
                for r in f["statistics"][:]]


def survey(binary, source, work):
    """`moonwright report` on a real survey: the HTML (read as written, no browser) holds the
    banner counted from /statistics, every design's verdict and headline, the Kaplan-Meier step
    plot and two bar charts as embedded PNGs, the invalid design's finding; the figures written
    by --figures are not blank. A shard file is refused until merged."""
    h5 = make_survey(binary, source, work)
    if h5 is None:
        return
    html, figs = work / "survey.html", work / "survey-figures"
    r = mw(binary, "report", h5, "--out", html, "--figures", figs)
    check(r.returncode == 0 and html.exists(), f"survey report written (exit {r.returncode}) "
          f"{r.stderr.strip()}")
    if not html.exists():
        return
    page = html.read_text()
    stats = survey_statistics(h5)
    verdicts = [v for v, _, _ in stats]
    survive = sum(v in ("stable", "chaotic") for v in verdicts)
    check(verdicts.count("invalid") == 1, f"the broken design is the one invalid design: {verdicts}")
    banner = re.search(r'<div[^>]*id="verdict"[^>]*>(.*?)</div>', page, re.S)
    words = unescape(text_of(banner.group(1))).replace("\u00a0", " ") if banner else ""
    check(f"{survive} of {len(stats)} designs survived 30 orbits" in words,
          f"banner counts {survive} of {len(stats)} surviving designs: {words!r}")
    for v, headline, name in stats:
        if v == "invalid":
            continue
        check(unescape(text_of(page)).find(headline) >= 0 and f"<td>{name}</td>" in page,
              f"the table holds {name!r} with its headline {headline!r}")
    check("Unfinished" in page or "broken.toml" in page, "the invalid design is listed")
    check('data-severity="error"' in page, "the invalid design's error finding is listed")
    imgs = re.findall(r'<img data-figure="([a-z_]+)"[^>]*src="data:image/png;base64,', page)
    check(imgs == ["survival", "bars", "bars"],
          f"Kaplan-Meier step plot and verdict/first-event bar charts embedded: {imgs}")
    for name in ("survey-survival", "survey-verdicts", "survey-first-events"):
        p = figs / f"{name}.png"
        check(p.exists(), f"--figures wrote {p.name}")
        if p.exists():
            st = png_stats.stats(str(p))
            total = st["width"] * st["height"]
            # Not blank: axes, labels, curves or bars darken part of it and it has several
            # colours (common practice, no source).
            check(st["dark"] > total // 1000 and st["non_white"] > total // 100 and
                  st["colours"] > 4, f"{p.name} is not blank: {st}")

    shard = make_survey(binary, source, work, "shard", ("--shard", "0/2"))
    if shard:
        r = mw(binary, "report", shard, "--out", work / "shard.html")
        check(r.returncode == 2 and "survey-merge" in r.stderr,
              f"a shard file is refused until merged: exit {r.returncode}: {r.stderr.strip()!r}")


def main():
    mode, binary, source, work = sys.argv[1], sys.argv[2], pathlib.Path(sys.argv[3]), pathlib.Path(sys.argv[4])
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    if mode == "errors":
        errors(binary, source, work)
    elif mode == "survey":
        survey(binary, source, work)
    else:
        browser(binary, source, work, sys.argv[5])
    print(f"{passed} passed, {len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
