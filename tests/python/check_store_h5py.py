#!/usr/bin/python3
"""The study store read by an outside library (h5py), checked against the
input as parsed by another outside library (pandas.read_csv), plus the CLI
ingest being deterministic dataset by dataset.

usage: check_store_h5py.py GAZEMILL_BINARY FIXTURES_DIR
"""
import hashlib
import os
import subprocess
import sys
import tempfile

import h5py
import numpy as np
import pandas as pd

gazemill = sys.argv[1]
failures = []
passes = 0


def check(cond, what):
    global passes
    passes += bool(cond)
    if not cond:
        failures.append(what)
        print("FAIL:", what)


PROTOCOL = """[study]
name = "h5check"
[input]
files = ["raw/*.csv"]
filename_pattern = '(?<participant>subj\\d+)'
[input.table]
delimiter = ","
time_column = "ts"
time_unit = "us"
message_column = "msg"
missing_values = ["", "NaN", "-1"]
[input.table.left]
x_column = "lx"
y_column = "ly"
pupil_column = "lp"
[input.table.right]
x_column = "rx"
y_column = "ry"
pupil_column = "rp"
[screen]
width_px = 1920
height_px = 1080
width_mm = 531
height_mm = 299
viewing_distance_mm = 700
[trials]
start = '^BEGIN (?<trial>\\d+)$'
end = '^END (?<trial>\\d+)$'
variables = ['^ITEM (?<item>\\d+) (?<condition>[a-z]+)$']
[design]
factors = ["condition"]
"""


def make_file(path, seed, n):
    rng = np.random.default_rng(seed)
    t = 5_000_000 + np.arange(n, dtype=np.int64) * 500  # 2000 Hz in microseconds
    cols = {"ts": t}
    for eye in "lr":
        x = np.round(rng.uniform(0, 1920, n), 3)
        y = np.round(rng.uniform(0, 1080, n), 3)
        p = np.round(rng.uniform(800, 1600, n), 1)
        lost = rng.random(n) < 0.05
        cols[eye + "x"] = np.where(lost, np.nan, x)
        cols[eye + "y"] = np.where(lost, np.nan, y)
        # Lost pupil is written as the token -1 (a missing-value token in the protocol).
        cols[eye + "p"] = np.where(lost, "-1", np.char.mod("%.1f", p))
    df = pd.DataFrame(cols)
    df["msg"] = ""
    with open(path, "w") as f:
        f.write("ts,lx,ly,lp,rx,ry,rp,msg\n")
        half = n // 2
        for k, (a, b) in enumerate([(0, half), (half, n)], start=1):
            f.write(f"{t[a]},,,,,,,BEGIN {k}\n")
            f.write(f"{t[a]},,,,,,,ITEM {20 + k} {'rare' if k == 1 else 'frequent'}\n")
            df.iloc[a:b].to_csv(f, header=False, index=False, na_rep="NaN")
            f.write(f"{t[b - 1]},,,,,,,END {k}\n")


with tempfile.TemporaryDirectory() as tmp:
    os.makedirs(os.path.join(tmp, "raw"))
    for i, n in [(1, 30011), (2, 70001)]:
        make_file(os.path.join(tmp, "raw", f"subj{i}.csv"), i, n)
    proto = os.path.join(tmp, "gazemill.toml")
    with open(proto, "w") as f:
        f.write(PROTOCOL)
    for out in ("a.gzm.h5", "b.gzm.h5"):
        subprocess.run([gazemill, "-q", "ingest", proto, "-o", os.path.join(tmp, out)], check=True)

    with h5py.File(os.path.join(tmp, "a.gzm.h5"), "r") as h:
        check(h.attrs["format"] == "gazemill-study-store", "root format attribute")
        check(sorted(h["recordings"].keys()) == ["subj1", "subj2"], "recording groups")
        for i in (1, 2):
            src = os.path.join(tmp, "raw", f"subj{i}.csv")
            ref = pd.read_csv(src, na_values=["", "NaN", "-1"], keep_default_na=False)
            samples_ref = ref[ref["msg"].isna()].reset_index(drop=True)
            g = h[f"recordings/subj{i}"]
            s = g["samples"]
            check(s["time_us"].attrs["unit"] == "us", "time unit attribute")
            check(s["left_x_px"].attrs["unit"] == "px", "x unit attribute")
            check(s["time_us"].dtype == np.int64, "time dtype")
            check(np.array_equal(s["time_us"][:], samples_ref["ts"].to_numpy()), f"subj{i} timestamps")
            for eye, e in (("left", "l"), ("right", "r")):
                for axis in ("x", "y"):
                    got = s[f"{eye}_{axis}_px"][:]
                    want = samples_ref[e + axis].to_numpy().astype(np.float32)
                    check(np.array_equal(got, want, equal_nan=True), f"subj{i} {eye}_{axis}_px")
                got_p = s[f"{eye}_pupil"][:]
                want_p = samples_ref[e + "p"].to_numpy().astype(np.float32)
                check(np.array_equal(got_p, want_p, equal_nan=True), f"subj{i} {eye}_pupil")
                valid = ~np.isnan(samples_ref[e + "x"].to_numpy())
                check(np.array_equal(s[f"{eye}_valid"][:].astype(bool), valid), f"subj{i} {eye}_valid")
                check(int(g.attrs[f"missing_{eye}"]) == int((~valid).sum()), f"subj{i} missing_{eye}")
            check(int(g.attrs["sample_count"]) == len(samples_ref), f"subj{i} sample_count")
            check(abs(g.attrs["sample_rate_hz"] - 2000.0) < 1e-9, f"subj{i} sample rate")
            tr = g["trials"]
            check([x.decode() for x in tr["variables/item"][:]] == ["21", "22"], f"subj{i} trial items")
            check([x.decode() for x in tr["variables/condition"][:]] == ["rare", "frequent"], f"subj{i} conditions")
            check(s["time_us"].compression == "gzip" and s["time_us"].shuffle, "samples are shuffled + deflated")
        prov = h["provenance"]
        with open(proto) as f:
            check(prov.attrs["protocol_text"] == f.read(), "protocol text stored exactly")
        paths = [p.decode() for p in prov["inputs/path"][:]]
        for p, digest, size in zip(paths, prov["inputs/sha256"][:], prov["inputs/size_bytes"][:]):
            with open(p, "rb") as f:
                data = f.read()
            check(hashlib.sha256(data).hexdigest() == digest.decode(), f"sha256 of {p}")
            check(len(data) == size, f"size of {p}")

    # Determinism: every dataset of two runs is identical, value and type.
    with h5py.File(os.path.join(tmp, "a.gzm.h5"), "r") as a, h5py.File(os.path.join(tmp, "b.gzm.h5"), "r") as b:
        names = []
        a.visititems(lambda n, o: names.append(n) if isinstance(o, h5py.Dataset) else None)
        for n in names:
            x, y = a[n][()], b[n][()]
            same = x.dtype == y.dtype and (np.array_equal(x, y, equal_nan=True) if x.dtype.kind == "f" else np.array_equal(x, y))
            check(same, f"dataset {n} identical across runs")
        check(len(names) > 20, "datasets compared")

# Detection results read by h5py: the fixture study, ingested and detected.
import shutil
fixtures = sys.argv[2]
with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    store = os.path.join(tmp, "d.gzm.h5")
    subprocess.run([gazemill, "-q", "ingest", proto, "-o", store], check=True)
    with open(proto, "a") as f:
        f.write("""
[[cleaning]]
name = "merge short"
kind = "merge_short_fixations"
max_duration_ms = 80
max_distance_deg = 0.5
max_gap_ms = 50

[[cleaning]]
name = "short"
kind = "delete_short_fixations"
min_duration_ms = 80

[[cleaning]]
name = "data loss"
kind = "exclude_trials_with_data_loss"
max_missing_percent = 3
""")
    subprocess.run([gazemill, "-q", "detect", proto, "-s", store], check=True)
    subprocess.run([gazemill, "-q", "clean", proto, "-s", store, "-o", os.path.join(tmp, "tables")], check=True)
    with h5py.File(store, "r") as h:
        for rid, rec in h["recordings"].items():
            ev = rec["events"]
            n = rec["samples/time_us"].shape[0]
            check(ev["sample_label"].shape[0] == n, f"{rid}: one label per sample")
            check(set(np.unique(ev["sample_label"][:])) <= set(range(6)), f"{rid}: label codes 0..5")
            fx = ev["fixations"]
            start, end, dur = fx["start_us"][:], fx["end_us"][:], fx["duration_ms"][:]
            check(fx["duration_ms"].attrs["unit"] == "ms" and fx["x_px"].attrs["unit"] == "px", f"{rid}: event units")
            check(np.allclose(dur, (end - start) / 1000.0), f"{rid}: duration = end - start")
            check(np.all(np.diff(start) > 0) or len(start) < 2, f"{rid}: fixations in time order")
            check(len(start) > 100, f"{rid}: fixations found")
            sac = ev["saccades"]
            check(np.all(sac["amplitude_deg"][:] >= 0) and np.all(sac["peak_velocity_deg_s"][:] > 0), f"{rid}: saccade values")
            # Samples labelled fixation (code 0) lie inside a fixation event and vice versa.
            t = rec["samples/time_us"][:]
            lab = ev["sample_label"][:]
            inside = np.zeros(n, bool)
            for a, b in zip(start, end):
                inside |= (t >= a) & (t < b)
            check(np.array_equal(inside, lab == 0), f"{rid}: fixation labels match fixation events")
            # One row per trial, in the trials' order, with the eye used and the
            # thresholds the default method (Nystrom & Holmqvist) set from it.
            tr = ev["trials"]
            check([x.decode() for x in tr["trial"][:]] == [x.decode() for x in rec["trials/id"][:]], f"{rid}: a detection row per trial")
            check({x.decode() for x in tr["eye"][:]} <= {"left", "right"}, f"{rid}: eye per trial")
            check(set(tr.keys()) == {"trial", "eye", "samples", "missing_samples", "peak_threshold_deg_s", "onset_threshold_deg_s"},
                  f"{rid}: the default method's thresholds per trial")
            # Each trial's sample count is the samples between its start and end, both included.
            starts, ends = rec["trials/start_us"][:], rec["trials/end_us"][:]
            counted = [int(((t >= a) & (t <= b)).sum()) for a, b in zip(starts, ends)]
            check(list(tr["samples"][:]) == counted, f"{rid}: samples per trial")
        check("detect" in h["provenance/stages"], "detect stage provenance")
        # The ledger read back: per level, input = kept + removed in protocol order.
        a = h["audit"]
        tot_level = [x.decode() for x in a["totals/level"][:]]
        cnt_level = [x.decode() for x in a["counts/level"][:]]
        for level in ("sample", "fixation", "trial", "participant"):
            inp = sum(int(v) for v, l in zip(a["totals/input"][:], tot_level) if l == level)
            kept = sum(int(v) for v, l in zip(a["totals/kept"][:], tot_level) if l == level)
            removed = sum(int(v) for v, l in zip(a["counts/removed_sequential"][:], cnt_level) if l == level)
            check(inp == kept + removed, f"audit balances at the {level} level ({inp} = {kept} + {removed})")
        kept_fix = sum(int(v) for v, l in zip(a["totals/kept"][:], tot_level) if l == "fixation")
        stored = sum(rec["clean/fixations/start_us"].shape[0] for rec in h["recordings"].values())
        check(kept_fix == stored, "cleaned fixations in the store = kept fixations of the audit")
        removed_rows = sum(rec["clean/removed_fixations/rule"].shape[0] for rec in h["recordings"].values())
        check(removed_rows > 0, "removed fixations stay in the store with their rule")
    # The TSV agrees with the store (pandas reads it as a tidy table).
    tsv = pd.read_csv(os.path.join(tmp, "tables", "audit.tsv"), sep="\t")
    check(set(tsv.columns) >= {"rule", "level", "participant", "frequency", "preview", "removed_sequential", "removed_alone"},
          "audit.tsv columns (the fixture's factors are frequency and preview)")
    check(len(tsv) == len(cnt_level), "audit.tsv has one row per ledger row")
    # I-DT with its defaults sets its threshold per trial from the data; the
    # store keeps it with its unit.
    with open(proto, "a") as f:
        f.write('\n[detection]\nmethod = "idt"\n')
    subprocess.run([gazemill, "-q", "detect", proto, "-s", store], check=True)
    with h5py.File(store, "r") as h:
        for rid, rec in h["recordings"].items():
            d = rec["events/trials/dispersion_threshold_deg"]
            check(d.attrs["unit"] == "deg", f"{rid}: fitted threshold unit")
            check(d.shape[0] == rec["trials/id"].shape[0] and np.all(np.isfinite(d[:])) and np.all(d[:] > 0),
                  f"{rid}: a positive I-DT threshold for every trial")

print(f"{passes} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
