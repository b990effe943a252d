#!/usr/bin/python3
"""One missing-value convention over every output table, checked on a run of
the checked-in fixture study with pandas and h5py (Debian's python3-pandas and
python3-h5py) as the outside readers.

The convention (README, "Missing values"; our design, following Rayner 1998
and Liversedge, Paterson & Pickering 1998 for which measures exist when):
  - a count is 0 when nothing happened, never NA;
  - a duration or an indicator is NA exactly when the event it describes did
    not happen (first-pass measures of a region skipped in first pass,
    any-pass measures of a region never fixated);
  - a probability is NA exactly when its stated denominator is 0;
  - a mean is NA when n = 0 and an SD when n < 2;
  - in the store, float columns use NaN and text columns "", and each says so
    in its "missing" attribute.

usage: check_na_convention.py GAZEMILL_BINARY FIXTURES_DIR
"""
import glob
import os
import shutil
import subprocess
import sys
import tempfile

import h5py
import numpy as np
import pandas as pd

gazemill, fixtures = sys.argv[1], sys.argv[2]
failures = []
passes = 0


def check(cond, what):
    global passes
    passes += bool(cond)
    if not cond:
        failures.append(what)
        print("FAIL:", what)


def read(path):
    return pd.read_csv(path, sep="\t", na_values="NA", keep_default_na=False)


FIRST_PASS = ["first_fixation_ms", "gaze_duration_ms", "go_past_ms", "selective_go_past_ms", "landing_chars", "regression_out"]
ANY_PASS = ["total_time_ms", "rereading_ms", "second_pass_ms", "regression_in"]
COUNTS = ["first_pass_fixations", "total_fixations", "skipped_first_pass", "fixated", "region", "region_line", "region_last_line"]

with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    with open(proto, "a") as f:
        f.write('\n[[cleaning]]\nname = "short"\nkind = "delete_short_fixations"\nmin_duration_ms = 80\n')
    out = os.path.join(tmp, "out")
    subprocess.run([gazemill, "-q", "run", proto, "-o", out], check=True)
    tables = os.path.join(out, "tables")

    wide = read(os.path.join(tables, "measures_wide.tsv"))
    for c in COUNTS:
        check(wide[c].notna().all(), f"wide: {c} is a count or a flag, never NA")
    skipped, entered = wide[wide.skipped_first_pass == 1], wide[wide.skipped_first_pass == 0]
    never, fixated = wide[wide.fixated == 0], wide[wide.fixated == 1]
    check(len(skipped) > 0 and len(never) > 0 and len(skipped) > len(never), "the fixture has skipped, and skipped-then-read, regions")
    for c in FIRST_PASS:
        check(skipped[c].isna().all(), f"wide: {c} NA when skipped in first pass")
    for c in ["first_fixation_ms", "gaze_duration_ms", "go_past_ms", "selective_go_past_ms", "regression_out"]:
        check(entered[c].notna().all(), f"wide: {c} defined when entered in first pass")
    check((skipped.first_pass_fixations == 0).all(), "wide: first_pass_fixations 0 (not NA) when skipped")
    for c in ANY_PASS:
        check(never[c].isna().all(), f"wide: {c} NA when never fixated")
        check(fixated[c].notna().all(), f"wide: {c} defined when fixated")
    check((never.total_fixations == 0).all(), "wide: total_fixations 0 when never fixated")
    later = skipped[skipped.fixated == 1]
    check(np.allclose(later.rereading_ms, later.total_time_ms), "wide: a region read only after its first pass keeps that time as rereading")
    check((wide.single_fixation_ms.notna() == (wide.first_pass_fixations == 1)).all(), "wide: single fixation exactly when one first-pass fixation")

    for name in ["measures_by_item_region.tsv", "measures_by_role.tsv", "measures_by_participant.tsv"]:
        t = read(os.path.join(tables, name))
        for c in ["region_readings", "first_pass_readings", "fixated_readings"]:
            check(t[c].notna().all() and (t[c] >= 0).all(), f"{name}: {c} is a count")
        for p, d in [("skipping_probability", "region_readings"), ("ever_fixated_probability", "region_readings"),
                     ("regression_out_probability", "first_pass_readings"), ("regression_in_probability", "fixated_readings")]:
            check((t[p].isna() == (t[d] == 0)).all(), f"{name}: {p} NA exactly when {d} is 0")
            check(t[p].dropna().between(0, 1).all(), f"{name}: {p} within 0..1")
        for m in ["first_fixation_ms", "gaze_duration_ms", "total_time_ms", "second_pass_ms"]:
            check((t["mean_" + m].isna() == (t["n_" + m] == 0)).all(), f"{name}: mean_{m} NA exactly when n is 0")
            check((t["sd_" + m].isna() == (t["n_" + m] < 2)).all(), f"{name}: sd_{m} NA exactly when n < 2")

    audit = read(os.path.join(tables, "audit.tsv"))
    for c in ["removed_sequential", "removed_alone", "merged_sequential", "merged_alone"]:
        check(audit[c].notna().all(), f"audit.tsv: {c} is a count, never NA")
    # The fixture's design cells are frequency x preview; its passages have no
    # level of either, so their cell is NA too: one such row per rule, level
    # and participant besides the whole-participant rows.
    cell_na = audit.frequency.isna()
    check((cell_na == audit.preview.isna()).all(), "audit.tsv: a cell has both levels or neither")
    check(cell_na[audit.level == "participant"].all(), "audit.tsv: the design cell NA on whole-participant rows")
    trials_rows = audit[audit.level != "participant"]
    na_rows = trials_rows[trials_rows.frequency.isna()]
    check(len(na_rows) == trials_rows.groupby(["order", "level", "participant"]).ngroups
          and (na_rows.groupby(["order", "level", "participant"]).size() == 1).all(),
          "audit.tsv: below the participant level, the design cell NA only for the passages' cell")
    totals = read(os.path.join(tables, "audit_totals.tsv"))
    check(totals[["input", "kept", "removed"]].notna().all().all(), "audit_totals.tsv: counts never NA")
    placement = read(os.path.join(tables, "fixation_placement.tsv"))
    check(placement[["on_region", "beside_text", "off_lines"]].notna().all().all(), "fixation_placement.tsv: counts never NA")

    with h5py.File(os.path.join(out, "harbour-news.gzm.h5"), "r") as h:
        for name, ds in h["measures/wide"].items():
            missing = ds.attrs.get("missing")
            if ds.dtype.kind == "f":
                check(missing == "NaN", f"store: measures/wide/{name} says NaN is its missing value")
            else:
                check(missing == "", f"store: measures/wide/{name} says \"\" is its missing value")
        g = h["measures/wide/gaze_duration_ms"][:]
        check(np.array_equal(np.isnan(g), wide.gaze_duration_ms.isna().to_numpy()), "store: NaN where the TSV has NA")

print(f"{passes} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
