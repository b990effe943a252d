#!/usr/bin/python3
"""The demo study's stored measures and aggregates against independent code.

Runs `gazemill run` on a copy of fixtures/demo-study, then:
  (a) recomputes every measure of every region of every measured trial with
      the independent Python oracle (tests/python/reading_measures_oracle.py,
      written from Rayner 1998 and Liversedge, Paterson & Pickering 1998 and
      the prose of measures/reading_measures.h, not from the C++), from the
      trial's kept fixations as the run left them: duration and position from
      the store's clean/fixations (h5py), line, region and landing position
      from the exported fixations.tsv (pandas). Each measure is compared with
      the store's measures/wide table row by row;
  (b) recomputes the three aggregate tables (by item x region, by region
      role, by participant; each within a design cell) with pandas from the
      stored wide table, following the header of measures/measure_aggregates.h
      and the NA convention of measures/reading_measures.h: denominators
      region_readings (every row), first_pass_readings (not skipped in first
      pass) and fixated_readings (fixated); skipping and ever-fixated
      probabilities over every row, regression-out over the first-pass rows,
      regression-in over the fixated rows; per duration measure N, mean and
      sample SD (n - 1; NA below two values) with NA values left out, not
      counted as 0. Mean and SD are the textbook formulas (common practice,
      no source); pandas' mean and std(ddof=1) compute them here.
Expected values never come from the code under test: the oracle and pandas
compute them from the fixations and from the measure rows.

usage: check_demo_measures_oracle.py GAZEMILL_BINARY FIXTURES_DIR
"""
import math
import os
import shutil
import subprocess
import sys
import tempfile

import h5py
import numpy as np
import pandas as pd

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import reading_measures_oracle as oracle  # noqa: E402
from reading_measures_oracle import DURATION_MEASURES, MEASURES, Fixation  # noqa: E402

gazemill, fixtures = sys.argv[1], sys.argv[2]
failures, passes = [], 0
CHAR_WIDTH_PX = 12.0  # the demo protocol's [regions] char_width_px
# The measure columns of the wide table: the oracle's names, except skipped.
WIDE = {m: ("skipped_first_pass" if m == "skipped" else m) for m in MEASURES}
BOOLEANS = {"fixated", "skipped", "regression_out", "regression_in"}


def check(cond, what):
    global passes
    if cond:
        passes += 1
    else:
        failures.append(what)
        if len(failures) <= 40:
            print("FAIL:", what)


def text(v):
    return v.decode() if isinstance(v, bytes) else str(v)


def na(v):
    return v is None or (isinstance(v, float) and math.isnan(v))


def close(a, b, tol):
    if na(a) or na(b):
        return na(a) and na(b)
    return abs(float(a) - float(b)) <= tol * max(1.0, abs(float(a)), abs(float(b)))


with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    # A merge rule (Eskenazi 2023's stage 1, with wider limits so that the
    # demo has merges): cleaned durations then differ from detected ones, and
    # the measures must use the cleaned fixations.
    with open(os.path.join(study, "gazemill.toml"), "a") as f:
        f.write('\n[[cleaning]]\nname = "merge short"\nkind = "merge_short_fixations"\n'
                'max_duration_ms = 120\nmax_distance_deg = 1.5\nmax_gap_ms = 80\n')
    out = os.path.join(tmp, "out")
    subprocess.run([gazemill, "-q", "run", os.path.join(study, "gazemill.toml"), "-o", out], check=True)
    tables = os.path.join(out, "tables")
    stores = [f for f in os.listdir(out) if f.endswith(".gzm.h5")]
    assert len(stores) == 1, stores
    read = lambda name: pd.read_csv(os.path.join(tables, name), sep="\t", na_values="NA", keep_default_na=False,
                                    dtype={"participant": str, "session": str, "trial": str, "item": str, "region": str})
    fixations_tsv = read("fixations.tsv")
    with h5py.File(os.path.join(out, stores[0]), "r") as h:
        # The kept fixations of every recording, full precision, from the store.
        stored = {}
        first_id = 0  # input ids number the detected fixations across the recordings, in their order
        for rec in h["recordings"]:
            g = h["recordings"][rec]["clean/fixations"]
            cols = {k: g[k][:] for k in ("trial", "start_us", "duration_ms", "x_px", "y_px", "x_deg", "y_deg", "input_id")}
            # Keyed by the detected fixation's start (what fixations.tsv shows): a
            # merged fixation's own span may start earlier.
            detected = h["recordings"][rec]["events/fixations"]
            detected_start = detected["start_us"][:]
            detected_ms = detected["duration_ms"][:]
            for i in range(len(cols["trial"])):
                j = int(cols["input_id"][i]) - first_id
                entry = {k: cols[k][i] for k in cols}
                entry["detected_ms"] = detected_ms[j]
                stored[(rec, text(cols["trial"][i]), int(detected_start[j]))] = entry
            first_id += len(detected_start)
        wide = pd.DataFrame({k: ([text(x) for x in v[:]] if v.dtype.kind in "OS" else v[:]) for k, v in h["measures/wide"].items()})
        aggregates = {}
        for name in ("by_item_region", "by_role", "by_participant"):
            aggregates[name] = pd.DataFrame({k: ([text(x) for x in v[:]] if v.dtype.kind in "OS" else v[:])
                                             for k, v in h["measures"][name].items() if isinstance(v, h5py.Dataset)})

# ---------------------------------------------------------------------------
# (a) every measure, row by row.
kept = fixations_tsv[fixations_tsv.kept == 1]
trials = {}
missing = 0
for key, rows in kept.groupby(["participant", "session", "trial"], sort=False):
    rec = f"{key[0]}_{key[1]}"
    fx = []
    for r in rows.sort_values("start_us").itertuples():
        s = stored.get((rec, r.trial, int(r.start_us)))
        if s is None:
            missing += 1
            continue
        # fixations.tsv: duration_ms is the cleaned duration, detected_duration_ms the detector's.
        check(abs(r.duration_ms - s["duration_ms"]) < 0.01 and abs(r.detected_duration_ms - s["detected_ms"]) < 0.01,
              f"{key} fixation at {r.start_us} us: fixations.tsv durations {r.duration_ms}/{r.detected_duration_ms}, "
              f"store {s['duration_ms']}/{s['detected_ms']}")
        # Region and line in the tables count from 1; the oracle counts regions from 0, -1 off the regions.
        region = -1 if pd.isna(r.region) else int(r.region) - 1
        line = -1 if pd.isna(r.line) else int(r.line) - 1
        landing = None if pd.isna(r.landing_chars) else float(r.landing_chars)
        fx.append(Fixation(float(s["duration_ms"]), float(s["x_px"]), float(s["y_px"]), float(s["x_deg"]), float(s["y_deg"]),
                           line, region, landing))
    trials[key] = fx
check((fixations_tsv.duration_ms != fixations_tsv.detected_duration_ms).sum() >= 10, "the merge rule merged some fixations")
check(missing == 0, f"every kept fixation of fixations.tsv is in the store's clean/fixations ({missing} not)")

# Tolerances: durations and degrees come from the store in full precision;
# landing positions pass through fixations.tsv at two decimals.
TOL = {"landing_chars": 0.006}
rows_checked = 0
measured_trials = set()
for key, rows in wide.groupby(["participant", "session", "trial"], sort=False):
    measured_trials.add(key)
    fx = trials.get(key, [])
    region_count = int(rows.region.max())
    check(sorted(rows.region.astype(int)) == list(range(1, region_count + 1)), f"{key}: one row per region 1..{region_count}")
    expected = oracle.region_measures(fx, region_count, CHAR_WIDTH_PX)
    for r in rows.itertuples():
        e = expected[int(r.region) - 1]
        rows_checked += 1
        for m in MEASURES:
            got = getattr(r, WIDE[m])
            want = e[m]
            if m in BOOLEANS and want is not None:
                want = 1.0 if want else 0.0
            check(close(got, want, TOL.get(m, 1e-9)), f"{key} region {int(r.region)} {m}: store {got}, oracle {want}")
# The spillover columns: each row's preceding_* and following_* are the
# oracle's values of the regions before and after it (NA at the ends).
NEIGHBOUR = {"skipped_first_pass": "skipped", "first_fixation_ms": "first_fixation_ms",
             "gaze_duration_ms": "gaze_duration_ms", "total_time_ms": "total_time_ms"}
for key, rows in wide.groupby(["participant", "session", "trial"], sort=False):
    region_count = int(rows.region.max())
    expected = oracle.region_measures(trials.get(key, []), region_count, CHAR_WIDTH_PX)
    for r in rows.itertuples():
        for side, step in (("preceding", -1), ("following", +1)):
            other = int(r.region) - 1 + step
            check(close(getattr(r, side + "_region"), other + 1 if 0 <= other < region_count else None, 0),
                  f"{key} region {int(r.region)} {side}_region")
            for column, m in NEIGHBOUR.items():
                want = expected[other][m] if 0 <= other < region_count else None
                if m == "skipped" and want is not None:
                    want = 1.0 if want else 0.0
                got = getattr(r, f"{side}_{column}")
                check(close(got, want, 1e-9), f"{key} region {int(r.region)} {side}_{column}: store {got}, oracle {want}")
check(rows_checked == len(wide) and rows_checked > 1000, f"every row of the wide table checked ({rows_checked} of {len(wide)})")
# Every trial with kept fixations and no measure row must be one the cleaning excluded.
unmeasured = [k for k in trials if k not in measured_trials]
excluded = set(fixations_tsv[fixations_tsv.kept == 0].groupby(["participant", "session", "trial"]).groups)
check(all(k in excluded or not trials[k] for k in unmeasured), f"trials with kept fixations but no measures: {unmeasured[:5]}")
print(f"(a) {rows_checked} measure rows x {len(MEASURES)} measures of {len(measured_trials)} trials against the oracle")

# ---------------------------------------------------------------------------
# (b) the aggregates, recomputed with pandas from the stored wide table.
FACTORS = ["frequency", "preview"]  # the demo protocol's [design] factors
NA_LEVEL = "\x00NA"  # passages have no levels: one cell of their own


def recompute(rows, keys):
    rows = rows.copy()
    for c in keys + FACTORS:
        rows[c] = rows[c].fillna(NA_LEVEL).replace({"": NA_LEVEL, "NA": NA_LEVEL})
    out = {}
    for k, g in rows.groupby(keys + FACTORS, sort=False):
        a = {"region_readings": len(g), "first_pass_readings": int((g.skipped_first_pass == 0).sum()),
             "fixated_readings": int((g.fixated == 1).sum())}
        a["skipping_probability"] = (g.skipped_first_pass == 1).mean()
        a["ever_fixated_probability"] = (g.fixated == 1).mean()
        fp, fixd = g[g.skipped_first_pass == 0], g[g.fixated == 1]
        a["regression_out_probability"] = (fp.regression_out == 1).mean() if len(fp) else math.nan
        a["regression_in_probability"] = (fixd.regression_in == 1).mean() if len(fixd) else math.nan
        for m in DURATION_MEASURES:
            v = g[m].dropna()  # NA left out, never counted as 0
            a["n_" + m] = len(v)
            a["mean_" + m] = v.mean() if len(v) else math.nan
            a["sd_" + m] = v.std(ddof=1) if len(v) >= 2 else math.nan
        out[k] = a
    return out


def compare(name, stored_table, rows, keys):
    want = recompute(rows, keys)
    t = stored_table.copy()
    for c in keys + FACTORS:
        t[c] = t[c].replace({"": NA_LEVEL, "NA": NA_LEVEL})
    got = {tuple(r[c] for c in keys + FACTORS): r for _, r in t.iterrows()}
    check(set(got) == set(want), f"{name}: the same groups ({len(got)} stored, {len(want)} recomputed; "
                                 f"only stored {sorted(set(got) - set(want))[:3]}, only recomputed {sorted(set(want) - set(got))[:3]})")
    for k in set(got) & set(want):
        for col, value in want[k].items():
            check(close(got[k][col], value, 1e-9), f"{name} {k} {col}: store {got[k][col]}, pandas {value}")
    return len(got)


wide_rows = wide.copy()
wide_rows["region"] = wide_rows.region.astype(int).astype(str)
n1 = compare("by_item_region", aggregates["by_item_region"], wide_rows, ["item", "region"])
with_role = wide_rows[~wide_rows.region_role.isin(["", "NA"]) & wide_rows.region_role.notna()]
n2 = compare("by_role", aggregates["by_role"], with_role, ["region_role"])
n3 = compare("by_participant", aggregates["by_participant"], wide_rows, ["participant"])
# The NA convention, on the data: a region skipped in first pass has no gaze
# duration, and so a group's n_gaze_duration_ms is its first-pass readings.
agg = aggregates["by_item_region"]
check((agg.n_gaze_duration_ms == agg.first_pass_readings).all(), "n of gaze duration = first-pass readings in every group")
check((agg.n_total_time_ms == agg.fixated_readings).all(), "n of total time = fixated readings in every group")
check((wide.skipped_first_pass == 1).sum() > 0 and (wide.fixated == 0).sum() > 0,
      "the demo has skipped and never-fixated regions, so NA handling is exercised")
# Row order (measures/measure_aggregates.cpp's promise, for people reading
# the table): by item, then region, both as numbers where they are numbers
# (region 10 after region 9, not after region 1).
order = agg[["item", "region"]].astype(str).values.tolist()
as_number = lambda s: (0, int(s), "") if s.isdigit() else (1, 0, s)
items_seen = [as_number(i) for i, _ in order]
check(all(a <= b for a, b in zip(items_seen, items_seen[1:])), "by_item_region: items in numeric order")
regions_in_order = True
for (i1, r1), (i2, r2) in zip(order, order[1:]):
    if i1 == i2 and int(r2) < int(r1):
        regions_in_order = False
check(regions_in_order and agg.region.astype(int).max() >= 10, "by_item_region: regions in numeric order within an item (some past 9)")
print(f"(b) {n1} item x region, {n2} role and {n3} participant groups recomputed with pandas")

print(f"{passes} checks passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
