#!/usr/bin/python3
"""The core of a study's analysis as a lab would write it in plain Python,
for bench/study to time beside `gazemill run` on the same files: pandas
read_csv of each gzip export, visual angle, scipy's Savitzky-Golay velocity,
I-VT fixations, fixations mapped onto the regions of each item (from the
simulator's boxes file), and first fixation, gaze duration and total time per
region. One process, one file after another, as such scripts usually run.

Usage: study_reference.py STUDY_FOLDER OUT_TSV
(STUDY_FOLDER as written by `gazemill simulate`: raw/*.tsv.gz, regions.tsv)
"""
import glob
import math
import os
import re
import sys

import numpy as np
import pandas as pd
from scipy.signal import savgol_filter

# The simulated study's screen (gazemill simulate writes it into its protocol).
WIDTH_PX, HEIGHT_PX, WIDTH_MM, HEIGHT_MM, DISTANCE_MM = 1920, 1080, 531, 299, 700
THRESHOLD_DEG_S = 30.0   # I-VT
WINDOW_MS = 20.0         # Savitzky-Golay window
MIN_FIXATION_MS = 40.0


def to_degrees(px, size_px, size_mm):
    mm = (px - size_px / 2.0) * size_mm / size_px
    return np.degrees(np.arctan2(mm, DISTANCE_MM))


def fixations_of(t_ms, x_px, y_px):
    """I-VT on one trial: runs of samples below the threshold."""
    dt = np.median(np.diff(t_ms))
    window = int(round(WINDOW_MS / dt)) | 1
    window = max(window, 5)
    xd, yd = to_degrees(x_px, WIDTH_PX, WIDTH_MM), to_degrees(y_px, HEIGHT_PX, HEIGHT_MM)
    valid = ~(np.isnan(xd) | np.isnan(yd))
    xf, yf = np.where(valid, xd, 0.0), np.where(valid, yd, 0.0)
    if len(t_ms) <= window:
        return []
    vx = savgol_filter(xf, window, 2, deriv=1, delta=dt / 1000.0)
    vy = savgol_filter(yf, window, 2, deriv=1, delta=dt / 1000.0)
    slow = (np.hypot(vx, vy) < THRESHOLD_DEG_S) & valid
    edges = np.diff(np.concatenate(([0], slow.astype(np.int8), [0])))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    out = []
    for a, b in zip(starts, ends):
        duration = t_ms[b - 1] - t_ms[a] + dt
        if duration >= MIN_FIXATION_MS:
            out.append((t_ms[a], duration, float(np.mean(x_px[a:b])), float(np.mean(y_px[a:b]))))
    return out


def region_of(boxes, x, y):
    """The box under the fixation on the nearest line (boxes as numpy arrays)."""
    region, line, left, right, centre = boxes
    nearest = line[np.argmin(np.abs(centre - y))]
    hit = np.flatnonzero((line == nearest) & (left <= x) & (x < right))
    return int(region[hit[0]]) if len(hit) else None


def main(folder, out_path):
    # Regions differ by item and frequency (the simulator's text factor); passages have no frequency.
    regions = pd.read_csv(os.path.join(folder, "regions.tsv"), sep="\t", dtype={"item": str, "frequency": str},
                          keep_default_na=False)
    boxes_by_item = {key: (g["region"].to_numpy(), g["line"].to_numpy(), g["left_px"].to_numpy(), g["right_px"].to_numpy(),
                           ((g["top_px"] + g["bottom_px"]) / 2.0).to_numpy())
                     for key, g in regions.groupby(["item", "frequency"])}
    rows = []
    for path in sorted(glob.glob(os.path.join(folder, "raw", "*.tsv.gz"))):
        participant = re.search(r"(p\d+)_s\d+", os.path.basename(path)).group(1)
        df = pd.read_csv(path, sep="\t", na_values=["", "."], keep_default_na=False)
        messages = df[df["message"].notna()]
        samples = df[df["message"].isna()]
        t = samples["time_us"].to_numpy() / 1000.0
        x, y = samples["gaze_x"].to_numpy(float), samples["gaze_y"].to_numpy(float)
        trial = None
        for time_us, text in zip(messages["time_us"], messages["message"]):
            if m := re.match(r"^begin trial (\d+)$", text):
                trial = {"id": m.group(1), "start": time_us / 1000.0}
            elif m := re.match(r"^show sentence (\S+) frequency (\S+) preview (\S+) list \d+$", text):
                trial["item"], trial["frequency"], trial["preview"] = m.group(1), m.group(2), m.group(3)
            elif m := re.match(r"^show passage (\S+) list \d+$", text):
                trial["item"], trial["frequency"], trial["preview"] = m.group(1), "", ""
            elif re.match(r"^end trial (\d+)$", text):
                a, b = np.searchsorted(t, trial["start"]), np.searchsorted(t, time_us / 1000.0, side="right")
                boxes = boxes_by_item[(trial["item"], trial["frequency"])]
                sequence = [(region_of(boxes, fx, fy), d) for _, d, fx, fy in fixations_of(t[a:b], x[a:b], y[a:b])]
                n = int(boxes[0].max())
                furthest = -1
                first = {}
                gaze = {}
                total = {}
                for k, (r, d) in enumerate(sequence):
                    if r is None:
                        continue
                    total[r] = total.get(r, 0.0) + d
                    if r not in first and r > furthest:  # first pass
                        first[r] = d
                        gaze[r] = 0.0
                        j = k
                        while j < len(sequence) and sequence[j][0] == r:
                            gaze[r] += sequence[j][1]
                            j += 1
                    furthest = max(furthest, r)
                for r in range(1, n + 1):
                    rows.append((participant, trial["id"], trial["item"], trial["frequency"], trial["preview"], r,
                                 first.get(r, math.nan), gaze.get(r, math.nan), total.get(r, math.nan)))
    pd.DataFrame(rows, columns=["participant", "trial", "item", "frequency", "preview", "region", "first_fixation_ms",
                                "gaze_duration_ms", "total_time_ms"]).to_csv(out_path, sep="\t", index=False, na_rep="NA")


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
