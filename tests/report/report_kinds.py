#!/usr/bin/env python3
"""`moonwright report` pages for map, tides, capture and survey results, rendered by headless Chromium.

Usage: report_kinds.py MOONWRIGHT SOURCE_DIR WORK_DIR CHROMIUM

For each kind a small result file is made with the real command, `moonwright report --figures`
turns it into a page, Chromium dumps the DOM and takes a screenshot, and the page must hold the
banner text derived here from the HDF5 file itself (the map's surviving cells and its edge, each
stored tides fate line, the capture counts and probabilities, the survey's verdict counts) and every expected figure as an
img with data-figure, with one PNG per figure in the --figures folder.
"""
import pathlib
import re
import shutil
import sys

import h5py

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))
import report_cli as rc  # noqa: E402


def page(binary, exe, work, name, make_args):
    h5, html, figs = work / f"{name}.h5", work / f"{name}.html", work / f"{name}-figures"
    r = rc.mw(binary, *make_args, "--out", h5, timeout=600)
    rc.check(r.returncode == 0 and h5.exists(),
             f"{name}: result written (exit {r.returncode}) {r.stderr.strip()[-400:]}")
    if not h5.exists():
        return None, None, None
    r = rc.mw(binary, "report", h5, "--out", html, "--figures", figs)
    rc.check(r.returncode == 0 and html.exists(),
             f"{name}: report written (exit {r.returncode}) {r.stderr.strip()}")
    if not html.exists():
        return None, None, None
    rc.screenshot(exe, html, work / f"{name}-wide.png", 1200, 2400, work)
    dom = rc.chromium(exe, ["--dump-dom", "file://" + str(html)], work).stdout
    rc.check("<html" in dom, f"{name}: DOM dumped ({len(dom)} characters)")
    m = re.search(r'<div[^>]*id="verdict"[^>]*>(.*?)</div>', dom, re.S)
    rc.check(m is not None, f"{name}: banner present")
    # Chromium serialises U+00A0 as &nbsp; in the dumped DOM.
    banner = rc.unescape(rc.text_of(m.group(1)).replace("&nbsp;", " ")).replace("\u00a0", " ") if m else ""
    imgs = re.findall(r'<img data-figure="([a-z_]+)"[^>]*src="data:image/png;base64,', dom)
    pngs = sorted(figs.glob("*.png"))
    rc.check(len(pngs) == len(imgs), f"{name}: {len(pngs)} PNG files for {len(imgs)} figures")
    return h5, banner, imgs


def number_after(text, prefix):
    m = re.search(re.escape(prefix) + r"\s*([-+0-9.eE]+)", text)
    return float(m.group(1)) if m else None


def close(a, b, rel):
    return a is not None and abs(a - b) <= rel * max(abs(b), 1e-300)


def check_map(binary, exe, source, work):
    h5, banner, imgs = page(binary, exe, work, "map", [
        "map", source / "tests/map/data/vela.toml", "--vary", "Vela.a=0.3RH:0.6RH:6",
        "--orbits", "50", "--quiet"])
    if h5 is None:
        return
    with h5py.File(h5, "r") as f:
        survived = f["map/survived"][...].ravel()
        edge = float(f["map/edge"][0]) if "map/edge" in f else None
        limit_m = float(f["map/references/stability_limit"][0]) \
            if "map/references/stability_limit" in f else None
    alive, cells = int((survived != 0).sum()), survived.size
    rc.check(f"{alive} of {cells} cells survived" in banner,
             f"map: banner gives the surviving cells {alive} of {cells}: {banner!r}")
    if edge is not None:
        # The banner shows the stored edge to 4 significant digits.
        rc.check(close(number_after(banner, "Edge at"), edge, 1e-3),
                 f"map: banner edge matches /map/edge = {edge}: {banner!r}")
        if limit_m:
            rc.check("Domingos, Winter & Yokoyama (2006):" in banner,
                     f"map: banner names the published limit: {banner!r}")
    else:
        print(f"note: this scan has no edge (survived {list(survived)})")
    rc.check(imgs == ["line_plot", "line_plot"],
             f"map: survival and MEGNO figures as line plots: {imgs}")


def check_tides(binary, exe, source, work):
    h5, banner, imgs = page(binary, exe, work, "tides", [
        "tides", source / "scenarios/teodora.toml", "--samples", "41"])
    if h5 is None:
        return
    with h5py.File(h5, "r") as f:
        lines = [r["detail"].decode() for r in f["tides/fates"][:]]
    rc.check(bool(lines), f"tides: the file holds fates: {lines}")
    for line in lines:
        rc.check(re.sub(r"\s+", " ", line.replace("\u00a0", " ")).strip() in banner, f"tides: banner holds the fate {line!r}")
    rc.check(imgs == ["time_series"], f"tides: the a(t) figure: {imgs}")


def check_capture(binary, exe, source, work):
    h5, banner, imgs = page(binary, exe, work, "capture", [
        "capture", source / "tests/capture/data/garrow.toml", "--planet", "Garrow",
        "--trials", "20", "--jobs", "2", "--seed", "3", "--quiet", "--mechanism", "drag",
        "--envelope", "rho0=1e-2 kg/m3, k=2, cutoff=10 Rp",
        "--intruder", "mass=1e15 kg, vinf=1 km/s, q=1.2:6 Rp, start=0.5 RH", "--span", "0.3 yr"])
    if h5 is None:
        return
    with h5py.File(h5, "r") as f:
        a = f["capture"].attrs
        trials, captured = int(a["trials"]), int(a["captured"])
        p_capture, p_lo, p_hi = (float(a["capture_probability"]),
                                 float(a["capture_probability_lower"]),
                                 float(a["capture_probability_upper"]))
        p_keep, k_lo, k_hi = (float(a["keep_probability"]), float(a["keep_probability_lower"]),
                              float(a["keep_probability_upper"]))
        durations = f["figures/capture_durations"].shape[0]
        kept_rows = f["figures/final_a_e"].shape[0]
    rc.check(f"Captured in {captured} of {trials} trials" in banner,
             f"capture: banner gives {captured} of {trials}: {banner!r}")
    # Capture p (lo to hi); kept p (lo to hi): six percentages to 3 significant digits.
    shown = [float(x) for x in re.findall(r"([0-9.]+(?:e[-+]?[0-9]+)?) %", banner)][:6]
    want = [100 * x for x in (p_capture, p_lo, p_hi, p_keep, k_lo, k_hi)]
    rc.check(len(shown) == 6 and all(abs(a - b) <= 6e-3 * abs(b) + 1e-12 for a, b in zip(shown, want)),
             f"capture: banner probabilities and Wilson bounds {shown} match the file {want}")
    rc.check("Wilson score, 95%" in banner, f"capture: banner names the interval: {banner!r}")
    # This seed and envelope give capture episodes and a kept member (2 and 1 when written).
    rc.check(durations > 0 and kept_rows > 0,
             f"capture: the run has episodes ({durations}) and kept members ({kept_rows})")
    expected = (["histogram"] if durations else []) + (["scatter"] if kept_rows else [])
    rc.check(imgs == expected, f"capture: figures {imgs} == {expected} "
             f"({durations} episodes, {kept_rows} kept)")


def check_survey(binary, exe, source, work):
    h5 = rc.make_survey(binary, source, work)
    if h5 is None:
        return
    html, figs = work / "survey.html", work / "survey-figures"
    r = rc.mw(binary, "report", h5, "--out", html, "--figures", figs)
    rc.check(r.returncode == 0 and html.exists(), f"survey: report written (exit {r.returncode})")
    if not html.exists():
        return
    rc.screenshot(exe, html, work / "survey-wide.png", 1200, 2400, work)
    rc.screenshot(exe, html, work / "survey-narrow.png", 400, 2400, work)
    dom = rc.chromium(exe, ["--dump-dom", "file://" + str(html)], work).stdout
    rc.check("<html" in dom, f"survey: DOM dumped ({len(dom)} characters)")
    m = re.search(r'<div[^>]*id="verdict"[^>]*>(.*?)</div>', dom, re.S)
    banner = rc.unescape(rc.text_of(m.group(1)).replace("&nbsp;", " ")).replace("\u00a0", " ") if m else ""
    stats = rc.survey_statistics(h5)
    counts = {v: sum(1 for s, _, _ in stats if s == v) for v, _, _ in stats}
    for verdict, n in counts.items():
        rc.check(f"{n} {verdict.replace('_', ' ')}:" in banner,
                 f"survey: banner gives {n} {verdict} designs as in /statistics: {banner!r}")
    imgs = re.findall(r'<img data-figure="([a-z_]+)"[^>]*src="data:image/png;base64,', dom)
    rc.check(imgs == ["survival", "bars", "bars"],
             f"survey: Kaplan-Meier plot and two bar charts rendered as img: {imgs}")
    pngs = sorted(figs.glob("*.png"))
    rc.check(len(pngs) == len(imgs), f"survey: {len(pngs)} PNG files for {len(imgs)} figures")


def main():
    binary, source, work, exe = sys.argv[1], pathlib.Path(sys.argv[2]), pathlib.Path(sys.argv[3]), sys.argv[4]
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    check_map(binary, exe, source, work)
    check_tides(binary, exe, source, work)
    check_capture(binary, exe, source, work)
    check_survey(binary, exe, source, work)
    print(f"{rc.passed} passed, {len(rc.failures)} failed")
    return 1 if rc.failures else 0


if __name__ == "__main__":
    sys.exit(main())
