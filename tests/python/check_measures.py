#!/usr/bin/python3
"""The measure tables read by the outside libraries a lab would use (pandas
for measures.tsv, h5py for the store), run end to end on the checked-in
simulated study; the README's loading example is run here as written.

usage: check_measures.py GAZEMILL_BINARY FIXTURES_DIR
"""
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


with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    with open(proto, "a") as f:
        f.write('\n[[cleaning]]\nname = "short"\nkind = "delete_short_fixations"\nmin_duration_ms = 80\n')
    store = os.path.join(tmp, "s.gzm.h5")
    tables = os.path.join(tmp, "tables")
    for cmd in (["ingest", proto, "-o", store], ["detect", proto, "-s", store], ["clean", proto, "-s", store],
                ["align", proto, "-s", store], ["measure", proto, "-s", store, "-o", tables]):
        subprocess.run([gazemill, "-q", *cmd], check=True)

    # --- the README example ---
    m = pd.read_csv(os.path.join(tables, "measures.tsv"), sep="\t", na_values="NA", keep_default_na=False)
    gd = m[m.measure == "gaze_duration_ms"].dropna(subset=["value"])
    means = gd.groupby(["region_role", "frequency", "preview"])["value"].mean()
    # --- end of the example ---
    # The fixture's design is frequency x preview (its [design] factors); the
    # example is the one proposed for the README with it.
    check(list(m.columns[:6]) == ["participant", "session", "trial", "item", "frequency", "preview"], "long table key columns")
    check(m.measure.nunique() == 17, "17 measures")
    check(all(("target", f, p) in means.index for f in ("frequent", "rare") for p in ("valid", "invalid")),
          "target gaze duration in every cell of the design")
    wide = pd.read_csv(os.path.join(tables, "measures_wide.tsv"), sep="\t", na_values="NA", keep_default_na=False)
    check(len(m) == 17 * len(wide), "long = 17 x wide rows")
    skipped = wide[wide.skipped_first_pass == 1]
    check(skipped.gaze_duration_ms.isna().all() and skipped.first_fixation_ms.isna().all(), "skipped regions: NA first-pass values")
    fixated = wide[wide.skipped_first_pass == 0]
    check((fixated.total_time_ms >= fixated.gaze_duration_ms).all(), "total time >= gaze duration")
    check((fixated.go_past_ms >= fixated.gaze_duration_ms).all(), "go-past >= gaze duration")
    check(np.allclose(fixated.rereading_ms, fixated.total_time_ms - fixated.gaze_duration_ms), "rereading = total - gaze")
    # Spillover columns: each row's preceding_* equals the preceding region's own values.
    w = wide.sort_values(["participant", "trial", "region"]).reset_index(drop=True)
    same = (w.participant == w.participant.shift()) & (w.trial == w.trial.shift())
    prev = w.gaze_duration_ms.shift()
    check(np.allclose(w.preceding_gaze_duration_ms[same].fillna(-1), prev[same].fillna(-1)), "preceding_* columns match")
    with h5py.File(store, "r") as h:
        g = h["measures/wide/gaze_duration_ms"][:]
        check(len(g) == len(wide), "store holds the wide table")
        check(np.array_equal(np.isnan(g), wide.gaze_duration_ms.isna().to_numpy()), "NA stored as NaN")
        check(h["measures/wide/gaze_duration_ms"].attrs["unit"] == "ms", "units in the store")

print(f"{passes} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
