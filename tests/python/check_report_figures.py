#!/usr/bin/python3
"""The study report's figures, worked out again outside gazemill from what
the run left behind, on the demo study: h5py and numpy over the store's
samples and events, pandas over the tables. Sources of the definitions:

  - missing samples: share of samples with no valid gaze (Holmqvist,
    Nyström & Mulvey 2012, data loss; shared/reference/methods.md §11);
  - precision: RMS of the angular distances between successive valid
    samples inside each detected fixation (RMS-S2S), and the population SD
    of the samples around their mean, x and y pooled (STD), Holmqvist et
    al. 2012 as written in methods.md §11, with pixels turned into degrees
    from the screen centre by theta = atan((p - c) * mm_per_px / d) (the
    exact 2 atan form for a point, methods.md §5); median over fixations;
  - quantiles: pandas' Series.quantile (linear interpolation, its default);
  - cleaning: what is left after the last rule equals audit_totals.tsv's
    kept counts; skipping probabilities as measures_by_role.tsv gives them.

usage: check_report_figures.py GAZEMILL_BINARY FIXTURES_DIR
"""
import json
import os
import sys
import tempfile
from html.parser import HTMLParser

import h5py
import numpy as np
import pandas as pd

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from report_demo import make_demo_report  # noqa: E402

failures = []
passes = 0


def check(cond, what):
    global passes
    if cond:
        passes += 1
    else:
        failures.append(what)
        print("FAIL:", what)


class DataBlock(HTMLParser):
    """The text of the page's JSON data block."""

    def __init__(self):
        super().__init__()
        self.inside, self.text = False, ""

    def handle_starttag(self, tag, attrs):
        self.inside = tag == "script" and dict(attrs).get("id") == "gazemill-data"

    def handle_endtag(self, tag):
        self.inside = False

    def handle_data(self, data):
        if self.inside:
            self.text += data


def degrees(p, centre, mm_per_px, distance_mm):
    return np.degrees(np.arctan((p - centre) * mm_per_px / distance_mm))


def main():
    gazemill, fixtures = sys.argv[1], sys.argv[2]
    with tempfile.TemporaryDirectory() as tmp:
        report = make_demo_report(gazemill, fixtures, tmp)
        page = DataBlock()
        with open(report, encoding="utf-8") as f:
            page.feed(f.read())
        data = json.loads(page.text)
        store = os.path.join(tmp, "out", "harbour-news.gzm.h5")
        tables = os.path.join(tmp, "out", "tables")
        quality = {q["participant"]: q for q in data["quality"]}

        with h5py.File(store, "r") as h:
            for rid in h["recordings"]:
                rec = h["recordings"][rid]
                who = rec.attrs["participant"]
                who = who.decode() if isinstance(who, bytes) else str(who)
                s = rec["samples"]
                t = s["time_us"][:]
                valid = s["left_valid"][:].astype(bool)
                q = quality[who]
                check(abs((1 - valid.mean()) - q["missing"]) < 1e-5, "{}: missing share {:.5f} (numpy {:.5f})".format(who, q["missing"], 1 - valid.mean()))
                x, y = s["left_x_px"][:].astype(float), s["left_y_px"][:].astype(float)
                a = rec.attrs
                mmx, mmy = a["screen_width_mm"] / a["screen_width_px"], a["screen_height_mm"] / a["screen_height_px"]
                xd = degrees(x, a["screen_width_px"] / 2, mmx, a["viewing_distance_mm"])
                yd = degrees(y, a["screen_height_px"] / 2, mmy, a["viewing_distance_mm"])
                fx = rec["events"]["fixations"]
                rms, std = [], []
                for start, end in zip(fx["start_us"][:], fx["end_us"][:]):
                    i, j = np.searchsorted(t, start), np.searchsorted(t, end)
                    v = valid[i:j]
                    pair = v[1:] & v[:-1]
                    if pair.sum() == 0:
                        continue
                    dx, dy = np.diff(xd[i:j])[pair], np.diff(yd[i:j])[pair]
                    rms.append(np.sqrt(np.mean(dx * dx + dy * dy)))
                    px, py = xd[i:j][v], yd[i:j][v]
                    std.append(np.sqrt(np.mean((px - px.mean()) ** 2 + (py - py.mean()) ** 2)))
                check(len(rms) == q["fixations"], "{}: precision over {} fixations (numpy {})".format(who, q["fixations"], len(rms)))
                check(abs(np.median(rms) - q["rms"]) < 1e-4, "{}: RMS-S2S {} deg (numpy {:.5f})".format(who, q["rms"], np.median(rms)))
                check(abs(np.median(std) - q["std"]) < 1e-4, "{}: STD {} deg (numpy {:.5f})".format(who, q["std"], np.median(std)))

        # Measure distributions against pandas' quantiles of the wide table.
        factors = data["run"]["factors"]
        wide = pd.read_csv(os.path.join(tables, "measures_wide.tsv"), sep="\t", na_values="NA", keep_default_na=False, dtype={f: str for f in factors})
        wide["region_role"] = wide["region_role"].fillna("")

        def in_cell(frame, cell):
            """Rows of `frame` in a design cell written as the report writes it: "f=level, g=level" (NA: no level)."""
            mask = pd.Series(True, index=frame.index)
            for part in cell.split(", "):
                f, level = part.split("=", 1)
                mask &= frame[f].isna() if level == "NA" else (frame[f] == level)
            return frame[mask]

        def cell_of(levels):
            return ", ".join("{}={}".format(f, "NA" if pd.isna(v) else v) for f, v in zip(factors, levels))

        dist = data["measures"]["distributions"]
        for d in dist:
            vals = in_cell(wide[wide.region_role == d["role"]], d["cell"])[d["measure"]].dropna()
            ok = (len(vals) == d["n"] and abs(vals.quantile(0.5) - d["median"]) < 0.051 and abs(vals.quantile(0.25) - d["q1"]) < 0.051
                  and abs(vals.quantile(0.95) - d["p95"]) < 0.051 and abs(vals.mean() - d["mean"]) < 0.051)
            check(ok, "{} {} {}: n {} median {} (pandas n {} median {})".format(d["measure"], d["role"] or "other", d["cell"], d["n"], d["median"],
                                                                                 len(vals), vals.quantile(0.5)))
        groups = 0
        for m in data["measures"]["measures"]:
            present = wide.dropna(subset=[m])
            groups += len(present.groupby(["region_role"] + factors, dropna=False))
        check(groups == len(dist), "every measure x role x cell with a value is summarised ({} of {})".format(len(dist), groups))

        # Skipping per role and cell as measures_by_role.tsv gives it.
        by_role = pd.read_csv(os.path.join(tables, "measures_by_role.tsv"), sep="\t", na_values="NA", keep_default_na=False, dtype={f: str for f in factors})
        skipping = [p for p in data["measures"]["probabilities"] if p["measure"] == "skipping"]
        check(len(skipping) == len(by_role), "a skipping probability for every row of measures_by_role.tsv")
        for p in skipping:
            row = in_cell(by_role[by_role.region_role == p["role"]], p["cell"])
            check(len(row) == 1 and abs(row.skipping_probability.iloc[0] - p["p"]) < 1e-4 and row.region_readings.iloc[0] == p["n"],
                  "skipping {} {}: {} of {}".format(p["role"], p["cell"], p["p"], p["n"]))

        # What the flow leaves after the last rule is what audit_totals.tsv says was kept.
        totals = pd.read_csv(os.path.join(tables, "audit_totals.tsv"), sep="\t", na_values="NA", keep_default_na=False, dtype={f: str for f in factors})
        flow = pd.DataFrame(data["cleaning"]["flow"])
        last = flow[flow.rule == flow.rule.max()]
        for level in ("sample", "fixation", "trial"):
            rows = totals[totals.level == level]
            mine = last[(last.level == level) & (last.cell == "")].remaining.iloc[0]
            check(rows.kept.sum() == mine, "{}s left after the last rule: {} (audit_totals.tsv {})".format(level, mine, rows.kept.sum()))
            for levels, part in rows.groupby(factors, dropna=False):
                levels = levels if isinstance(levels, tuple) else (levels,)
                cell = last[(last.level == level) & (last.cell == cell_of(levels))].remaining
                check(len(cell) == 1 and part.kept.sum() == cell.iloc[0],
                      "{}s left in {}: {} (audit_totals.tsv {})".format(level, cell_of(levels), list(cell), part.kept.sum()))

    print("{} passed, {} failed".format(passes, len(failures)))
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
