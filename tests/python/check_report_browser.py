#!/usr/bin/python3
"""The study report in a real browser: Debian's Chromium, headless, driven
through the Chrome DevTools Protocol (the protocol's own documentation:
Page, Runtime, Log, Network and Emulation domains) with Debian's
python3-websocket. The demo study's report is opened from a file and the
check asserts, as a reader would see it:

  - no console errors and no uncaught exceptions;
  - no network request at all besides the page's own file (the page carries
    every script, style and datum; its Content-Security-Policy refuses
    anything else, and a refused request would still be seen here);
  - every section present, each with at least one chart whose SVG holds
    data marks, and every chart with a title and an alternative text;
  - the trial viewer switching trials and participants, by its controls,
    and drawing the new trial's fixations and text, and opening a trial
    from the table of trials drift correction flagged (two trials are
    flagged in the store with h5py first: the align stage flags none yet);
  - and the page of a store that only went through ingest and detect
    opening as cleanly, naming the sections it cannot show.

It keeps a screenshot of the whole page and one of each section
(OUTDIR/report-demo.png, OUTDIR/report-demo-<section>.png, the trial viewer
in report-demo-viewer.png), a copy of the page, and prints the
time to interactive. When Chromium is missing and cannot be installed, or
cannot start here, the check is skipped (exit 77, ctest SKIP_RETURN_CODE)
saying why; it never passes without a browser.

usage: check_report_browser.py GAZEMILL_BINARY FIXTURES_DIR OUTDIR
"""
import base64
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from cdp_browser import Browser, browser_messages, find_chromium  # noqa: E402
from report_demo import make_demo_report  # noqa: E402

SECTIONS = ["run", "quality", "cleaning", "detection", "drift", "measures", "viewer"]


failures = []
passes = 0


def check(cond, what):
    global passes
    if cond:
        passes += 1
    else:
        failures.append(what)
        print("FAIL:", what)


# What the page shows, read in the page: per section its charts, per chart its title,
# alternative text and how many data marks (not axes or legends) its SVG holds.
PAGE_STATE = """
(() => {
  const out = {sections: {}, charts: []};
  for (const s of document.querySelectorAll('main > section')) out.sections[s.id] = s.querySelectorAll('figure.chart').length;
  for (const f of document.querySelectorAll('figure.chart')) {
    const body = f.querySelector('.vega');
    const svg = body && body.querySelector('svg');
    let marks = 0;
    if (svg) {
      for (const g of svg.querySelectorAll('g.role-mark')) {
        if (g.closest('.role-axis, .role-legend, .role-title')) continue;
        marks += g.querySelectorAll(':scope > path, :scope > line, :scope > text').length;
      }
    }
    out.charts.push({id: f.id, section: f.closest('section').id, title: (f.querySelector('.chart-title') || {}).textContent || '',
                     alt: body ? (body.getAttribute('aria-label') || '') : '', svg: !!svg, marks});
  }
  return out;
})()
"""

VIEWER_STATE = """
(() => {
  const s = gazemillReport.viewer.shown;
  const svg = document.querySelector('#fig-viewer-scanpath svg');
  const count = (cls) => {
    let n = 0;
    for (const g of svg.querySelectorAll('g.' + cls)) if (!g.closest('.role-axis, .role-legend')) n += g.querySelectorAll(':scope > path, :scope > text').length;
    return n;
  };
  return Object.assign({}, s, {symbols: count('mark-symbol'), texts: count('mark-text'),
    status: document.getElementById('viewer-status').textContent,
    trialValue: document.getElementById('viewer-trial').value, recordingValue: document.getElementById('viewer-recording').value,
    timeLines: document.querySelectorAll('#fig-viewer-time svg g.mark-line path').length});
})()
"""


def make_partial_report(gazemill, fixtures, folder):
    """The demo study ingested and detected, nothing more, and its report."""
    study = os.path.join(folder, "partial-study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    store = os.path.join(folder, "partial.gzm.h5")
    subprocess.run([gazemill, "-q", "ingest", proto, "-o", store], check=True)
    subprocess.run([gazemill, "-q", "detect", proto, "-s", store], check=True)
    report = os.path.join(folder, "partial-report.html")
    subprocess.run([gazemill, "-q", "report", store, "-o", report], check=True, stderr=subprocess.DEVNULL)
    return report


def change_select(b, select_id, value):
    b.evaluate("""(() => { const s = document.getElementById('%s'); s.value = '%s';
        s.dispatchEvent(new Event('change', {bubbles: true})); return new Promise(r => setTimeout(r, 300)); })()""" % (select_id, value))


def main():
    gazemill, fixtures, outdir = sys.argv[1], sys.argv[2], sys.argv[3]
    os.makedirs(outdir, exist_ok=True)
    chromium = find_chromium()
    with tempfile.TemporaryDirectory(ignore_cleanup_errors=True) as tmp:
        flagged_trials = []
        report = make_demo_report(gazemill, fixtures, tmp, flags=[("p02_1", 5, 0.41), ("p03_1", 1, 0.55)], flagged=flagged_trials)
        url = "file://" + report
        print("report: {} ({:.2f} MB)".format(report, os.path.getsize(report) / 1e6))
        b = Browser(chromium, os.path.join(tmp, "profile"))
        try:
            for domain in ("Page", "Runtime", "Log", "Network"):
                b.send(domain + ".enable")
            b.send("Emulation.setDeviceMetricsOverride", {"width": 1280, "height": 900, "deviceScaleFactor": 1, "mobile": False})
            t0 = time.monotonic()
            b.send("Page.navigate", {"url": url})
            b.wait_event("Page.loadEventFired")
            try:
                ready = b.evaluate("gazemillReport.ready.then(() => Number(document.documentElement.getAttribute('data-ready-ms')))")
            except RuntimeError as e:
                for line in browser_messages(b, url)[0]:
                    print("  ", line)
                raise
            wall = time.monotonic() - t0
            first_screen = b.evaluate("Number(document.documentElement.getAttribute('data-first-screen-ms'))")
            print("first screen drawn at {} ms, everything at {} ms after navigation started (page clock); {:.2f} s as this script saw it"
                  .format(first_screen, ready, wall))
            check(ready is not None and ready > 0, "the page says when it is ready")
            check(b.evaluate("document.documentElement.getAttribute('data-error')") is None, "no error while drawing the charts")

            state = b.evaluate(PAGE_STATE)
            for s in SECTIONS:
                check(state["sections"].get(s, 0) >= 1, "section '{}' is present with at least one chart".format(s))
            for c in state["charts"]:
                check(c["svg"] and c["marks"] > 0, "chart {} in '{}' drew data marks ({})".format(c["id"], c["section"], c["marks"]))
                check(len(c["title"].strip()) > 0, "chart {} has a title".format(c["id"]))
                check(len(c["alt"].strip()) > 20, "chart {} has an alternative text".format(c["id"]))
            print("{} charts in {} sections".format(len(state["charts"]), len(state["sections"])))

            # The trial viewer: first trial shown, then another trial, another participant, next.
            first = b.evaluate(VIEWER_STATE)
            check(first["kept"] > 0 and first["symbols"] >= first["kept"], "the first trial's fixations are drawn")
            check(first["chars"] > 20 and first["texts"] >= first["chars"], "the first trial's text is drawn, letter by letter")
            check(first["timeLines"] >= 2, "the time course draws x and y")
            change_select(b, "viewer-trial", "5")
            second = b.evaluate(VIEWER_STATE)
            print("viewer, first:", {k: first[k] for k in ("trial", "kept", "fixations", "symbols", "chars", "texts")})
            print("viewer, after choosing trial 5:", {k: second[k] for k in ("trial", "kept", "fixations", "symbols", "chars", "texts")})
            check(second["trial"] != first["trial"] and second["trialValue"] == "5", "choosing a trial shows it")
            check(second["status"] != first["status"] and "trial " + second["trial"] in second["status"], "the status names the trial shown")
            check(second["symbols"] >= second["fixations"] > 0, "the chosen trial's fixations, kept and removed, are drawn")
            change_select(b, "viewer-recording", "2")
            third = b.evaluate(VIEWER_STATE)
            check(third["participant"] != second["participant"], "choosing a participant shows their trials")
            b.evaluate("document.getElementById('viewer-next').click(); new Promise(r => setTimeout(r, 300))")
            fourth = b.evaluate(VIEWER_STATE)
            check(fourth["trial"] != third["trial"] and fourth["trialValue"] == "1", "the next button moves on one trial")
            b.evaluate("(() => { const c = document.getElementById('viewer-aligned'); c.click(); return new Promise(r => setTimeout(r, 300)); })()")
            check(b.evaluate(VIEWER_STATE)["symbols"] == fourth["symbols"], "drawing on the assigned lines keeps every fixation")
            # A flagged trial opens in the viewer from the line-assignment table.
            flagged = b.evaluate("Array.from(document.querySelectorAll('table.flagged tbody tr')).map(tr => tr.children[1].textContent + '/' + tr.children[2].textContent)")
            expected = ["{}/{}".format(r, t) for r, t in flagged_trials]
            check(flagged == expected, "the flagged trials are listed, lowest confidence first ({}, flagged {})".format(flagged, expected))
            b.evaluate("document.querySelector('table.flagged tbody tr button.open-trial').click(); new Promise(r => setTimeout(r, 500))")
            opened = b.evaluate(VIEWER_STATE)
            check(opened["recording"] == flagged_trials[0][0] and opened["trial"] == flagged_trials[0][1] and "flagged" in opened["status"],
                  "a flagged trial's button opens it in the viewer ({} {})".format(opened["recording"], opened["trial"]))
            b.evaluate("gazemillReport.viewer.select(0, 0).then(() => true)")
            b.evaluate("(() => { const c = document.getElementById('viewer-aligned'); c.click(); return new Promise(r => setTimeout(r, 200)); })()")

            # Screenshots: the whole page, then the viewer alone.
            metrics = b.send("Page.getLayoutMetrics")
            height = int(min(metrics.get("cssContentSize", metrics.get("contentSize"))["height"], 16000))
            b.send("Emulation.setDeviceMetricsOverride", {"width": 1280, "height": height, "deviceScaleFactor": 1, "mobile": False})
            b.evaluate("new Promise(r => setTimeout(r, 500))")
            shot = b.send("Page.captureScreenshot", {"format": "png", "captureBeyondViewport": True})
            page_png = os.path.join(outdir, "report-demo.png")
            with open(page_png, "wb") as f:
                f.write(base64.b64decode(shot["data"]))
            # And each section alone, to look at in full size.
            for section in SECTIONS:
                rect = b.evaluate("(() => { const r = document.getElementById('%s').getBoundingClientRect(); "
                                  "return [r.x, r.y + window.scrollY, r.width, r.height]; })()" % section)
                shot = b.send("Page.captureScreenshot", {"format": "png", "captureBeyondViewport": True,
                                                         "clip": {"x": rect[0], "y": rect[1], "width": rect[2], "height": rect[3], "scale": 1}})
                with open(os.path.join(outdir, "report-demo-{}.png".format(section)), "wb") as f:
                    f.write(base64.b64decode(shot["data"]))
            viewer_png = os.path.join(outdir, "report-demo-viewer.png")
            check(os.path.getsize(page_png) > 50000, "a screenshot of the page was kept")
            print("screenshots: {}, {}".format(page_png, viewer_png))
            shutil.copy(report, os.path.join(outdir, "report-demo.html"))

            # What the browser saw while all this happened.
            errors, requests = browser_messages(b, url)
            for e in errors:
                print("  ", e)
            check(not errors, "no console errors ({} seen)".format(len(errors)))
            other = [u for u in requests if u != url]
            for u in other:
                print("   request:", u[:200])
            check(requests.count(url) >= 1, "the page itself was loaded from its file")
            check(not other, "no network request besides the page's own file ({} seen)".format(len(other)))

            # A store that only went through ingest and detect: the page still opens cleanly and
            # says, section by section, what is missing and which command makes it.
            partial = make_partial_report(gazemill, fixtures, tmp)
            purl = "file://" + partial
            b.events = []
            b.send("Emulation.setDeviceMetricsOverride", {"width": 1280, "height": 900, "deviceScaleFactor": 1, "mobile": False})
            b.send("Page.navigate", {"url": purl})
            b.wait_event("Page.loadEventFired")
            b.evaluate("gazemillReport.ready")
            notes = b.evaluate("Array.from(document.querySelectorAll('p.absent')).map(p => p.closest('section').id)")
            check(sorted(notes) == ["cleaning", "drift", "measures"], "a partial store's page names the missing sections ({})".format(notes))
            errors, requests = browser_messages(b, purl)
            check(not errors and all(u == purl for u in requests), "a partial store's page opens without errors or requests ({}, {})"
                  .format(errors[:2], [u for u in requests if u != purl][:2]))
        finally:
            b.close()

    print("{} passed, {} failed".format(passes, len(failures)))
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
