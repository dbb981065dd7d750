"""Browser test of the HTML report: headless Chromium renders a sample report.

Usage: browser_check.py REPORT_SAMPLE_EXE CHROMIUM WORK_DIR
Checks: the wide (1200 px) and narrow (400 px) screenshots are not blank; the DOM holds the
verdict text and every figure as an img with data-figure; at 400 px the page does not overflow
sideways (a test copy of the page with a one-line script records scrollWidth into the DOM;
the report itself carries no script).
"""
import os
import re
import shutil
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import png_stats  # noqa: E402

FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--hide-scrollbars"]
FAILURES = []


def check(ok, message):
    print(("ok   " if ok else "FAIL ") + message)
    if not ok:
        FAILURES.append(message)


def chromium(exe, args, work):
    profile = tempfile.mkdtemp(prefix="profile-", dir=work)
    try:
        r = subprocess.run([exe] + FLAGS + ["--user-data-dir=" + profile] + args,
                           capture_output=True, text=True, timeout=60)
        return r
    finally:
        shutil.rmtree(profile, ignore_errors=True)


def screenshot(exe, url, path, width, height, work):
    if os.path.exists(path):
        os.remove(path)
    r = chromium(exe, ["--screenshot=" + path, "--window-size=%d,%d" % (width, height), url], work)
    check(os.path.exists(path), "screenshot %s written (exit %d) %s" % (
        os.path.basename(path), r.returncode, r.stderr[-300:] if not os.path.exists(path) else ""))
    if not os.path.exists(path):
        return None
    s = png_stats.stats(path)
    total = s["width"] * s["height"]
    check(s["width"] == width, "%s width %d == %d" % (os.path.basename(path), s["width"], width))
    # Not blank: text, banner and figures darken a good part of the page (common practice,
    # no source); an error page or an empty render stays almost all white.
    check(s["non_white"] > total // 20,
          "%s not blank: %d of %d pixels non-white" % (os.path.basename(path), s["non_white"], total))
    check(s["dark"] > total // 500,
          "%s has dark text/axes: %d pixels" % (os.path.basename(path), s["dark"]))
    return s


def main():
    sample, exe, work = sys.argv[1], sys.argv[2], os.path.abspath(sys.argv[3])
    os.makedirs(work, exist_ok=True)
    html = os.path.join(work, "report.html")
    r = subprocess.run([sample, html], capture_output=True, text=True, timeout=120)
    check(r.returncode == 0 and os.path.exists(html), "sample report written " + r.stderr)
    if FAILURES:
        return 1
    url = "file://" + html
    screenshot(exe, url, os.path.join(work, "wide.png"), 1200, 1600, work)
    screenshot(exe, url, os.path.join(work, "narrow.png"), 400, 1600, work)

    dom = chromium(exe, ["--dump-dom", url], work).stdout
    check("<html" in dom, "DOM dumped (%d characters)" % len(dom))
    verdict = re.search(r'<div[^>]*id="verdict"[^>]*>(.*?)</div>', dom, re.S)
    check(verdict is not None, "verdict element present")
    if verdict:
        text = re.sub(r"<[^>]+>", " ", verdict.group(1))
        check("unstable" in text and "Orl escapes" in text, "verdict text in the DOM")
    source = open(html, encoding="utf-8").read()
    wanted = sorted(re.findall(r'<figure id="([^"]+)" data-figure="([^"]+)"', source))
    check(len(wanted) == 3, "sample has three figures: %s" % wanted)
    for fid, kind in wanted:
        m = re.search(r'<figure id="%s" data-figure="%s"><img data-figure="%s"[^>]*src="data:image/png;base64,'
                      % (re.escape(fid), re.escape(kind), re.escape(kind)), dom)
        check(m is not None, "figure %s (%s) rendered as img with data-figure" % (fid, kind))

    # Narrow page: a test copy records the layout width; the report itself has no script.
    probe = os.path.join(work, "probe.html")
    script = ("<script>document.body.setAttribute('data-scroll-width',"
              "document.documentElement.scrollWidth);"
              "document.body.setAttribute('data-client-width',"
              "document.documentElement.clientWidth);</script></body>")
    open(probe, "w", encoding="utf-8").write(source.replace("</body>", script))
    dom = chromium(exe, ["--window-size=400,1600", "--dump-dom", "file://" + probe], work).stdout
    sw = re.search(r'data-scroll-width="(\d+)"', dom)
    cw = re.search(r'data-client-width="(\d+)"', dom)
    check(sw is not None and cw is not None, "layout widths recorded at 400 px")
    if sw and cw:
        check(int(sw.group(1)) <= int(cw.group(1)),
              "no sideways overflow at 400 px: scrollWidth %s <= clientWidth %s"
              % (sw.group(1), cw.group(1)))
        # Headless Chromium lays out --dump-dom pages at least 500 px wide (seen with 156);
        # below 600 px the page's phone rules apply, which is what this checks.
        check(int(cw.group(1)) <= 600, "the phone layout applies: viewport %s px" % cw.group(1))
    print("%d failure(s)" % len(FAILURES))
    return 1 if FAILURES else 0


if __name__ == "__main__":
    sys.exit(main())
