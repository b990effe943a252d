#!/usr/bin/python3
"""gazemill's reading-time measures against an independent implementation.

tests/python/reading_measures_oracle.py implements every measure from the
papers and from the prose in measures/reading_measures.h, without reading the
C++. This script checks:
  (a) the worked case of ../shared/reference/methods.md section 8, against the
      table there (computed by independent code, methods.md Appendix B);
  (b) hand-worked cases, each derived by hand in a comment;
  (c) random scanpaths from a seeded generator;
each through both the oracle and the C++ library (run through the
gazemill_measure_scanpaths harness, which only calls gazemill::reading_measures),
measure by measure and row by row; and
  (d) the oracle's per-cell aggregates on hand-worked rows.
Expected values never come from the code under test.

usage: check_measures_oracle.py HARNESS [--trials N] [--seed S]
Exit 0 when everything agrees, 1 on any difference (each printed with its
scanpath, the measure and both values), 2 on a usage or harness error.
"""
import argparse
import math
import os
import random
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import reading_measures_oracle as oracle  # noqa: E402
from reading_measures_oracle import Fixation, MEASURES  # noqa: E402

BOOLEANS = {"fixated", "skipped", "regression_out", "regression_in"}
COUNTS = {"first_pass_fixations", "total_fixations"}
TOLERANCE = 1e-9  # durations (ms), characters and degrees

failures = []


def fail(what):
    failures.append(what)
    print("FAIL:", what)


# ---------------------------------------------------------------------------
# Running the C++ library through the harness.

def fmt(v):
    return "NA" if v is None else repr(float(v)) if isinstance(v, float) else str(v)


def scanpath_line(trial, region_count, char_width_px, fixations):
    fields = [str(trial), str(region_count), repr(float(char_width_px))]
    for f in fixations:
        fields += [fmt(float(f.duration_ms)), fmt(float(f.x_px)), fmt(float(f.y_px)), fmt(float(f.x_deg)),
                   fmt(float(f.y_deg)), str(f.line), str(f.region), fmt(f.landing_chars)]
    return "\t".join(fields)


def parse_value(name, text):
    if text == "NA":
        return None
    if name in BOOLEANS:
        assert text in ("0", "1"), (name, text)
        return text == "1"
    if name in COUNTS:
        return int(text)
    return float(text)


def run_library(harness, trials):
    """trials: {trial id: (region_count, char_width_px, fixations)} ->
    {(trial id, region): {measure: value}} as computed by the C++ library."""
    with tempfile.NamedTemporaryFile("w", suffix=".tsv", delete=False) as tsv:
        tsv.write("trial\tregion_count\tchar_width_px\tfixations\n")
        for tid, (region_count, cw, fixations) in trials.items():
            tsv.write(scanpath_line(tid, region_count, cw, fixations) + "\n")
    try:
        done = subprocess.run([harness, tsv.name], capture_output=True, text=True)
    finally:
        os.unlink(tsv.name)
    if done.returncode != 0:
        print("harness failed:", done.stderr)
        sys.exit(2)
    lines = done.stdout.splitlines()
    header = lines[0].split("\t")
    assert header[:2] == ["trial", "region"] and tuple(header[2:]) == MEASURES, header
    out = {}
    for line in lines[1:]:
        f = line.split("\t")
        out[(f[0], int(f[1]))] = {name: parse_value(name, text) for name, text in zip(header[2:], f[2:])}
    return out


def same(name, a, b):
    if a is None or b is None:
        return a is None and b is None
    if name in BOOLEANS or name in COUNTS:
        return bool(a) == bool(b) if name in BOOLEANS else a == b
    return abs(a - b) <= TOLERANCE


def describe(region_count, cw, fixations):
    parts = []
    for f in fixations:
        s = f"({f.region},{f.duration_ms:g}"
        s += f" line {f.line} x {f.x_px:g}px {f.x_deg:g},{f.y_deg:g}deg land {fmt(f.landing_chars)})"
        parts.append(s)
    return f"{region_count} regions, char width {cw:g}px, fixations (region,ms ...): " + " ".join(parts)


# ---------------------------------------------------------------------------
# (a) and (b): fixed cases with expected values written out.

# The columns of the hand-worked tables below, in order.
TABLE_COLUMNS = ("fixated", "skipped", "first_fixation_ms", "single_fixation_ms", "gaze_duration_ms", "go_past_ms",
                 "selective_go_past_ms", "total_time_ms", "rereading_ms", "second_pass_ms", "first_pass_fixations",
                 "total_fixations", "regression_out", "regression_in")


def table(text):
    """Rows of 'fx sk FFD SFD GD GP SGP TT RR SP fpn tn ro ri' -> expected dicts (NA allowed)."""
    rows = []
    for line in text.strip().splitlines():
        cells = line.split("#")[0].split()
        assert len(cells) == len(TABLE_COLUMNS), line
        rows.append({name: parse_value(name, c) for name, c in zip(TABLE_COLUMNS, cells)})
    return rows


CASES = []  # (name, source, region_count, char_width_px, fixations, [expected dict per region])


def case(name, source, region_count, fixations, expected, char_width_px=10.0):
    assert len(expected) == region_count
    CASES.append((name, source, region_count, char_width_px, fixations, expected))


# (a) methods.md section 8 worked case. The table (methods.md, computed by its
# Appendix B code written from the published definitions) gives skip, FFD,
# SFD, GD, go-past, selective go-past, TFT, second pass (as TFT - GD) and
# regression out. Its second-pass column leaves region 2 NA with a footnote
# ("some labs report TFT"): our header's convention gives a region skipped in
# first pass its first run as second pass and all its time as rereading, so
# that cell is 210 here, by the header, not by the table. For these fixations
# every region has at most one run after its first pass, so the table's
# TFT - GD column is both our rereading and our second pass. The table has no
# fixated / counts / regression-in columns; those values are worked by hand
# from the same fixations (region 1 is re-entered from region 4 and region 3
# from region 5: regression in; region 2's only run follows region 3).
case("methods.md section 8 worked case",
     "methods.md section 8 table (Rayner 1998; Liversedge et al. 1998), region 2 second pass per reading_measures.h",
     6, oracle.fixations_from_pairs([(0, 200), (1, 220), (3, 250), (3, 180), (2, 210), (4, 230), (1, 190), (5, 240),
                                     (3, 150)]),
     table("""
     1 0 200 200 200 200 200 200 0   0   1 1 0  0   # region 0
     1 0 220 220 220 220 220 410 190 190 1 2 0  1   # region 1
     1 1 NA  NA  NA  NA  NA  210 210 210 0 1 NA 1   # region 2: skipped (3 came first); table's NA* -> 210 by our header
     1 0 250 NA  430 640 430 580 150 150 2 3 1  1   # region 3
     1 0 230 230 230 420 230 230 0   0   1 1 1  0   # region 4
     1 0 240 240 240 390 240 240 0   0   1 1 1  0   # region 5: go-past to the end of the trial
     """))

# (b) Hand-worked cases. Sources of the definitions: Rayner (1998) on the
# measures of processing time and Liversedge, Paterson & Pickering (1998), both
# from memory as summarised in methods.md section 8; our conventions from the
# header comment of measures/reading_measures.h. Every value below was worked
# by hand from those definitions, as the comments show.
#   columns: fixated skipped FFD SFD GD go-past sel.go-past total rereading second-pass fp-fix total-fix reg-out reg-in

# b1: a regression out of region 2 and back into it: gaze duration and
# selective go-past part. Fixations (region,ms), indices 0..5:
#   (0,200) (1,210) (2,250) (0,180) (2,230) (3,240)
# region 2: first fixation idx 2, nothing further on before -> entered. First-pass run [250] (idx 3 is on 0).
#   GD = FFD = SFD = 250. Go-past: idx 2 until the first fixation on a region > 2 (idx 5): 250+180+230 = 660;
#   selective: only region 2 in that span: 250+230 = 480. Total 480, rereading 480-250 = 230, second pass =
#   run 2 = 230. Regression out: the first fixation after the run (idx 3) is on region 0 < 2 -> 1. Regression in:
#   runs start at idx 2 (after region 1) and idx 4 (after region 0), neither further on -> 0.
# region 0: run [200]; next is region 1 -> reg-out 0; go-past ends at idx 1 -> 200. Total 200+180 = 380,
#   rereading 180, second pass 180; its second run (idx 3) follows region 2 > 0 -> reg-in 1.
# region 1: run [210], next region 2 -> 0; go-past 210; total 210; rereading 0, second pass 0; reg-in 0.
# region 3: run [240], nothing follows -> reg-out 0; go-past to the end of the trial: 240.
case("b1 gaze duration vs selective go-past", "hand-worked (Rayner 1998, Liversedge et al. 1998: from memory; reading_measures.h)",
     4, oracle.fixations_from_pairs([(0, 200), (1, 210), (2, 250), (0, 180), (2, 230), (3, 240)]),
     table("""
     1 0 200 200 200 200 200 380 180 180 1 2 0 1
     1 0 210 210 210 210 210 210 0   0   1 1 0 0
     1 0 250 250 250 660 480 480 230 230 1 2 1 0
     1 0 240 240 240 240 240 240 0   0   1 1 0 0
     """))

# b2: three visits to region 1: second pass (the run after the first pass) vs
# rereading (everything outside the first pass). Fixations, idx 0..6:
#   (0,200) (1,220) (0,150) (1,180) (0,160) (1,170) (2,250)
# region 1: entered at idx 1; run [220]. Runs after it: [180] (idx 3), [170] (idx 5).
#   second pass = 180; rereading = 180+170 = 350 = total 570 - GD 220. Go-past: idx 1..5 (idx 6 is region 2):
#   220+150+180+160+170 = 880; selective 220+180+170 = 570. Reg-out: idx 2 is region 0 -> 1. Reg-in: every run
#   follows region 0 -> 0.
# region 0: run [200], next region 1 -> reg-out 0, go-past 200; total 200+150+160 = 510, rereading 310, second
#   pass 150 (idx 2); run at idx 2 follows region 1 > 0 -> reg-in 1.
# region 2: run [250] at the end: go-past 250, reg-out 0 (nothing follows), reg-in 0.
case("b2 second pass vs rereading", "hand-worked (Rayner 1998, Liversedge et al. 1998: from memory; reading_measures.h)",
     3, oracle.fixations_from_pairs([(0, 200), (1, 220), (0, 150), (1, 180), (0, 160), (1, 170), (2, 250)]),
     table("""
     1 0 200 200 200 200 200 510 310 150 1 3 0 1
     1 0 220 220 220 880 570 570 350 180 1 3 1 0
     1 0 250 250 250 250 250 250 0   0   1 1 0 0
     """))

# b3: regression in true and false. Fixations, idx 0..5:
#   (0,200) (1,210) (3,230) (0,190) (1,220) (2,240)
# region 1: its second run (idx 4) begins right after region 0 (idx 3), an earlier region, although region 3 was
#   fixated before (idx 2): reg-in 0. Run [210], next region 3 -> reg-out 0; go-past ends at idx 2: 210.
#   Total 430, rereading 220, second pass 220.
# region 0: second run (idx 3) right after region 3 > 0 -> reg-in 1. Total 390, rereading 190, second pass 190.
# region 2: first fixation idx 5, after region 3 (idx 2): skipped in first pass, read later. First-pass measures
#   NA, fp-fix 0, reg-out NA. Total 240 = rereading = second pass (its first run). Its run follows region 1 < 2:
#   reg-in 0.
# region 3: entered at idx 2 (regions 0 and 1 before). Run [230]; next region 0 -> reg-out 1. Nothing beyond
#   region 3 ever: go-past to the end, 230+190+220+240 = 880; selective 230. Reg-in 0 (after region 1).
case("b3 regression in", "hand-worked (Rayner 1998, Liversedge et al. 1998: from memory; reading_measures.h)",
     4, oracle.fixations_from_pairs([(0, 200), (1, 210), (3, 230), (0, 190), (1, 220), (2, 240)]),
     table("""
     1 0 200 200 200 200 200 390 190 190 1 2 0  1
     1 0 210 210 210 210 210 430 220 220 1 2 0  0
     1 1 NA  NA  NA  NA  NA  240 240 240 0 1 NA 0
     1 0 230 230 230 880 230 230 0   0   1 1 1  0
     """))

# b4: a region skipped in first pass and read later, and a never-fixated region. Fixations, idx 0..4:
#   (0,200) (2,230) (1,180) (2,210) (3,250)          five regions; region 4 never fixated
# region 1: first fixation idx 2 comes after region 2 (idx 1): skipped; total = rereading = second pass = 180;
#   its run follows region 2 > 1 -> reg-in 1; reg-out NA.
# region 2: entered at idx 1; run [230]; next region 1 -> reg-out 1. Go-past idx 1..3 (idx 4 is region 3):
#   230+180+210 = 620; selective 230+210 = 440. Total 440, rereading 210, second pass 210. Runs follow regions
#   0 and 1 -> reg-in 0.
# region 4: never fixated: not fixated, skipped, every duration NA, counts 0, reg-out NA, reg-in NA.
case("b4 skipped then read, never fixated", "hand-worked (Rayner 1998, Liversedge et al. 1998: from memory; reading_measures.h)",
     5, oracle.fixations_from_pairs([(0, 200), (2, 230), (1, 180), (2, 210), (3, 250)]),
     table("""
     1 0 200 200 200 200 200 200 0   0   1 1 0  0
     1 1 NA  NA  NA  NA  NA  180 180 180 0 1 NA 1
     1 0 230 230 230 620 440 440 210 210 1 2 1  0
     1 0 250 250 250 250 250 250 0   0   1 1 0  0
     0 1 NA  NA  NA  NA  NA  NA  NA  NA  0 0 NA NA
     """))

# b5: a region skipped in first pass with two later runs: second pass is its first run only, rereading all.
#   (0,200) (2,220) (1,150) (0,170) (1,160) (2,190)
# region 1: skipped (region 2 at idx 1 came first). Runs [150] (after region 2 -> reg-in 1) and [160].
#   Second pass 150, rereading = total = 310.
# region 0: run [200], next region 2 -> reg-out 0, go-past 200 (idx 1 is region 2 > 0). Total 370, rereading 170,
#   second pass 170, second run after region 1 -> reg-in 1.
# region 2: entered at idx 1, run [220], next region 1 -> reg-out 1. Nothing further on -> go-past to the end:
#   220+150+170+160+190 = 890; selective 220+190 = 410. Total 410, rereading 190, second pass 190. Runs follow
#   regions 0 and 1 -> reg-in 0.
case("b5 skipped region read twice", "hand-worked (Rayner 1998, Liversedge et al. 1998: from memory; reading_measures.h)",
     3, oracle.fixations_from_pairs([(0, 200), (2, 220), (1, 150), (0, 170), (1, 160), (2, 190)]),
     table("""
     1 0 200 200 200 200 200 370 170 170 1 2 0  1
     1 1 NA  NA  NA  NA  NA  310 310 150 0 2 NA 1
     1 0 220 220 220 890 410 410 190 190 1 2 1  0
     """))

# b6: off-region fixations (region -1) inside a first pass.
#   (0,200) (1,210) (-1,100) (0,180) (1,190) (2,220) (-1,90) (2,160) (-1,80)
# region 1: entered at idx 1; the off-region fixation at idx 2 ends the first-pass run: GD = 210, one fixation
#   (reading_measures.h: the eyes leave "off the regions"; methods.md section 8 edge convention 3). Regression out:
#   the first fixation on a region after the run, passing over idx 2, is region 0 -> 1. Go-past: idx 1 until
#   region 2 (idx 5): 210+100+180+190 = 680, the off-region 100 included (reading_measures.h: "and off the
#   regions"); selective 210+190 = 400. Total 400, rereading 190, second pass 190 (idx 4). Reg-in: its second run
#   follows region 0 -> 0.
# region 0: run [200]; next region 1 -> reg-out 0; go-past 200. Second run idx 3: the fixation before it is off the
#   regions and is left out; the one before that is region 1 > 0 -> reg-in 1. Total 380, rereading 180, second
#   pass 180.
# region 2: entered at idx 5; run [220] ends at the off-region idx 6; then idx 7 is region 2 again, and
#   nothing follows on a region. Reg-out: no earlier region follows -> 0. Go-past: nothing further on -> to the
#   end: 220+90+160+80 = 550; selective 220+160 = 380. Total 380, rereading 160, second pass 160 (the run at
#   idx 7, after an excursion off the regions). Reg-in: idx 7 follows (past the off-region idx 6) region 2
#   itself -> 0.
case("b6 off-region fixations in a first pass", "hand-worked (reading_measures.h; methods.md section 8 edge conventions 1 and 3)",
     3, oracle.fixations_from_pairs([(0, 200), (1, 210), (-1, 100), (0, 180), (1, 190), (2, 220), (-1, 90), (2, 160),
                                     (-1, 80)]),
     table("""
     1 0 200 200 200 200 200 380 180 180 1 2 0 1
     1 0 210 210 210 680 400 400 190 190 1 2 1 0
     1 0 220 220 220 550 380 380 160 160 1 2 0 0
     """))

# b7: a trial that starts off the regions, an off-region fixation between a further region and a
# regression in, and a last region never reached.
#   (-1,120) (0,200) (2,240) (-1,70) (1,150) (0,130)
# region 0: entered at idx 1 (the off-region idx 0 is on no region, so not further on). Run [200]; next region 2
#   -> reg-out 0; go-past 200. Second run idx 5 follows region 1 > 0 -> reg-in 1. Total 330.
# region 1: skipped (region 2 at idx 2 came first). Its run (idx 4) follows the off-region idx 3, left out, and
#   before it region 2 > 1 -> reg-in 1. Total = rereading = second pass = 150.
# region 2: entered at idx 2; run [240] ends at idx 3 (off); first on a region after it is region 1 -> reg-out 1.
#   No region 3 ever: go-past to the end 240+70+150+130 = 590; selective 240.
# region 3: never fixated.
case("b7 trial starting off the regions", "hand-worked (reading_measures.h; methods.md section 8 edge conventions 1 and 3)",
     4, oracle.fixations_from_pairs([(-1, 120), (0, 200), (2, 240), (-1, 70), (1, 150), (0, 130)]),
     table("""
     1 0 200 200 200 200 200 330 130 130 1 2 0  1
     1 1 NA  NA  NA  NA  NA  150 150 150 0 1 NA 1
     1 0 240 240 240 590 240 240 0   0   1 1 1  0
     0 1 NA  NA  NA  NA  NA  NA  NA  NA  0 0 NA NA
     """))

# b8: refixations in first pass and decimal durations: SFD NA with two first-pass fixations.
#   (0,180.5) (0,120.25) (1,210.125) (1,99.5) (1,60) (0,75.75)
# region 0: run [180.5, 120.25]: FFD 180.5, SFD NA, GD 300.75, 2 fixations; next region 1 -> reg-out 0; go-past
#   300.75. Second run [75.75] follows region 1 -> reg-in 1. Total 376.5, rereading 75.75.
# region 1: run [210.125, 99.5, 60] = 369.625, 3 fixations; next region 0 -> reg-out 1. Go-past: no region 2 ->
#   to the end: 369.625 + 75.75 = 445.375; selective 369.625. Region 2 never fixated.
case("b8 refixations", "hand-worked (Rayner 1998 single fixation and gaze duration, from memory; reading_measures.h)",
     3, oracle.fixations_from_pairs([(0, 180.5), (0, 120.25), (1, 210.125), (1, 99.5), (1, 60), (0, 75.75)]),
     table("""
     1 0 180.5   NA      300.75  300.75  300.75  376.5   75.75 75.75 2 3 0  1
     1 0 210.125 NA      369.625 445.375 369.625 369.625 0     0     3 3 1  0
     0 1 NA      NA      NA      NA      NA      NA      NA    NA    0 0 NA NA
     """))

# b9: an empty trial: every region never fixated.
case("b9 empty trial", "hand-worked (reading_measures.h missing-value convention)", 2, [],
     table("""
     0 1 NA NA NA NA NA NA NA NA 0 0 NA NA
     0 1 NA NA NA NA NA NA NA NA 0 0 NA NA
     """))


# b10: positions: landing sites and incoming saccades (reading_measures.h; Rayner 1998, from memory, on landing positions and
# saccade length in character spaces; amplitude as Euclidean distance: common practice, no source). Character
# width 10 px. Line 0 holds regions 0-2, line 1 region 3. Fixations (region, ms, line, x_px, x_deg, y_deg, landing):
P = [Fixation(200, 120.0, 300.0, 3.0, 5.0, 0, 0, 2.0),     # idx 0: trial's first fixation
     Fixation(90, 320.0, 300.0, 8.0, 5.0, 0, -1, None),     # idx 1: off the regions, right of the line's text
     Fixation(210, 180.0, 300.0, 4.5, 5.0, 0, 1, 1.5),      # idx 2: region 1 entered from the right
     Fixation(190, 204.0, 301.0, 5.1, 5.0, 0, 1, 3.9),      # idx 3: refixation of region 1
     Fixation(230, 260.0, 305.0, 7.5, 5.7, 0, 2, None),     # idx 4: region 2, landing unknown
     Fixation(250, 150.0, 340.0, 3.75, 6.5, 1, 3, 0.5),     # idx 5: region 3, next line
     Fixation(180, 40.0, 340.0, 1.0, 6.5, 1, -1, None)]     # idx 6: off the regions
# region 0: first first-pass fixation idx 0: landing 2.0; no previous fixation -> incoming chars and deg NA.
# region 1: first first-pass fixation idx 2: landing 1.5. Previous fixation idx 1 (off the regions, same line 0):
#   (180 - 320) / 10 = -14 characters (leftwards, negative); degrees hypot(4.5-8.0, 0) = 3.5. The refixation's
#   landing 3.9 is not the first.
# region 2: idx 4: landing NA (the mapper gave none); previous idx 3 on line 0: (260 - 204) / 10 = 5.6 characters;
#   degrees hypot(7.5-5.1, 5.7-5.0) = hypot(2.4, 0.7) = 2.5 (Euclidean, not the horizontal 2.4).
# region 3: idx 5 on line 1, previous idx 4 on line 0: characters NA (not on one line); degrees
#   hypot(3.75-7.5, 6.5-5.7) = hypot(-3.75, 0.8) = sqrt(14.0625 + 0.64) = sqrt(14.7025) = 3.8343...
#   [DECISION in the oracle: amplitude given across lines.]
# region 4: skipped (never fixated): all NA.
POSITIONS = [
    dict(landing_chars=2.0, incoming_saccade_chars=None, incoming_saccade_deg=None),
    dict(landing_chars=1.5, incoming_saccade_chars=-14.0, incoming_saccade_deg=3.5),
    dict(landing_chars=None, incoming_saccade_chars=5.6, incoming_saccade_deg=2.5),
    dict(landing_chars=0.5, incoming_saccade_chars=None, incoming_saccade_deg=math.sqrt(14.7025)),
    dict(landing_chars=None, incoming_saccade_chars=None, incoming_saccade_deg=None),
]
case("b10 landing positions and incoming saccades",
     "hand-worked (reading_measures.h; Rayner 1998 landing positions, saccade length in characters, from memory; "
     "Euclidean amplitude: common practice, no source)", 5, P, POSITIONS)

# b11: a region skipped in first pass keeps no position measures even though its fixation has a landing site,
# and a regressive entry into a skipped region. Character width 12.5 px.
#   idx 0 region 0 x 110 land 1.0; idx 1 region 2 x 300 land 2.0; idx 2 region 1 x 200 land 4.0
# region 1: skipped (region 2 first): landing, incoming chars and deg NA, although idx 2 has a landing and a
#   regressive incoming saccade of (200-300)/12.5 = -8 characters.
# region 2: entered at idx 1: landing 2.0; incoming (300-110)/12.5 = 15.2 characters; degrees hypot(7.5-2.75, 0)
#   = 4.75.
Q = [Fixation(200, 110.0, 300.0, 2.75, 5.0, 0, 0, 1.0),
     Fixation(220, 300.0, 300.0, 7.5, 5.0, 0, 2, 2.0),
     Fixation(180, 200.0, 300.0, 5.0, 5.0, 0, 1, 4.0)]
case("b11 positions of a skipped region",
     "hand-worked (reading_measures.h: first-pass measures missing when skipped)", 3, Q,
     [dict(landing_chars=1.0, incoming_saccade_chars=None, incoming_saccade_deg=None),
      dict(landing_chars=None, incoming_saccade_chars=None, incoming_saccade_deg=None),
      dict(landing_chars=2.0, incoming_saccade_chars=15.2, incoming_saccade_deg=4.75)], char_width_px=12.5)


def check_fixed_cases(harness):
    trials = {f"case{i}": (rc, cw, fx) for i, (_, _, rc, cw, fx, _) in enumerate(CASES)}
    library = run_library(harness, trials)
    compared = rows = 0
    for i, (name, source, rc, cw, fx, expected) in enumerate(CASES):
        ours = oracle.region_measures(fx, rc, cw)
        for r, want in enumerate(expected):
            lib = library.get((f"case{i}", r))
            if lib is None:
                fail(f"{name} [{source}]: region {r}: no row from the library")
                continue
            for measure, value in want.items():
                compared += 1
                for who, got in (("oracle", ours[r][measure]), ("library", lib[measure])):
                    if not same(measure, value, got):
                        fail(f"{name} [{source}]: region {r} {measure}: expected {fmt(value)}, {who} gives {fmt(got)}"
                             f"\n    scanpath: {describe(rc, cw, fx)}")
            # The measures without a hand-worked value here still have to agree between the two.
            rows += 1
            for measure in MEASURES:
                if not same(measure, ours[r][measure], lib[measure]):
                    fail(f"{name}: region {r} {measure}: oracle {fmt(ours[r][measure])}, library {fmt(lib[measure])}"
                         f"\n    scanpath: {describe(rc, cw, fx)}")
    print(f"fixed cases: {len(CASES)} scanpaths, {compared} hand-worked values each checked in the oracle and the "
          f"library; compared {len(MEASURES)} measures x {rows} rows between the two")


# ---------------------------------------------------------------------------
# (c) random scanpaths (invented data from a seeded generator).

def random_trial(rng):
    """One scanpath over 1-12 regions laid out on lines of text: forward steps,
    skips, regressions of one to several regions, refixations, off-region
    fixations (with and without a line), jumps, and empty trials."""
    region_count = rng.randint(1, 12)
    cw = rng.choice([8.0, 9.5, 10.0, 12.25, 14.0])
    ppd = rng.choice([30.0, 35.5, 40.0])
    per_line = rng.randint(1, 6)
    lengths = [rng.randint(1, 12) for _ in range(region_count)]
    start, line_of, col = [], [], 0
    for r in range(region_count):
        if r % per_line == 0:
            col = 0
        start.append(col)
        line_of.append(r // per_line)
        col += lengths[r] + 1

    def place(duration, region, line, landing):
        x = 100.0 + (start[region] if region >= 0 else 0) * cw + landing * cw
        y = 200.0 + 40.0 * line + rng.uniform(-6, 6)
        return Fixation(duration, round(x, 3), round(y, 3), round(x / ppd, 6),
                        round(y / ppd + rng.uniform(-0.1, 0.1), 6), line, region,
                        (round(landing, 2) if rng.random() > 0.1 else None) if region >= 0 else None)

    def duration():
        return round(rng.uniform(40, 700), rng.choice([0, 0, 1, 3]))

    if rng.random() < 0.04:
        return region_count, cw, []
    n = rng.randint(1, 3 * region_count + 6)
    fixations = []
    here = 0 if rng.random() < 0.8 else rng.randrange(region_count)
    for k in range(n):
        u = rng.random()
        if k == 0:
            pass
        elif u < 0.18:  # refixation
            pass
        elif u < 0.55:  # forward one region
            here = min(here + 1, region_count - 1)
        elif u < 0.67:  # skip one or more regions
            here = min(here + rng.randint(2, 4), region_count - 1)
        elif u < 0.82:  # regression of one or several regions
            here = max(here - rng.randint(1, 5), 0)
        elif u < 0.92:  # off the regions: a margin, between lines, a blink's neighbour
            line = rng.choice([-1, line_of[here], line_of[here] + 1])
            fixations.append(place(duration(), -1, line, rng.uniform(-30, 80)))
            continue
        else:  # a jump anywhere
            here = rng.randrange(region_count)
        fixations.append(place(duration(), here, line_of[here], rng.uniform(0, lengths[here])))
    return region_count, cw, fixations


def check_random(harness, count, seed):
    rng = random.Random(seed)
    trials = {f"r{i}": random_trial(rng) for i in range(count)}
    library = run_library(harness, trials)
    rows, differences = 0, {}
    for tid, (rc, cw, fx) in trials.items():
        ours = oracle.region_measures(fx, rc, cw)
        for r in range(rc):
            lib = library.get((tid, r))
            if lib is None:
                fail(f"random {tid}: region {r}: no row from the library")
                continue
            rows += 1
            for measure in MEASURES:
                if not same(measure, ours[r][measure], lib[measure]):
                    differences.setdefault(measure, []).append((len(fx), tid, r, ours[r][measure], lib[measure]))
    if len(library) != rows:
        fail(f"random: the library gave {len(library)} rows, expected {rows}")
    for measure, found in differences.items():
        found.sort()
        print(f"FAIL: {measure} differs in {len(found)} rows; the shortest scanpaths:")
        for _, tid, r, want, got in found[:3]:
            rc, cw, fx = trials[tid]
            print(f"  {tid} region {r}: oracle {fmt(want)}, library {fmt(got)}\n    scanpath: {describe(rc, cw, fx)}")
        failures.append(measure)
    empty = sum(1 for rc, cw, fx in trials.values() if not fx)
    print(f"random scanpaths (seed {seed}): {count} trials ({empty} empty), "
          f"compared {len(MEASURES)} measures x {rows} rows: "
          + ("all equal" if not differences else f"{sum(len(v) for v in differences.values())} differences"))


# ---------------------------------------------------------------------------
# (d) the oracle's per-cell aggregates, on hand-worked rows.

def check_aggregates():
    def row(role, cell, skipped, regression_out=None, **durations):
        r = dict(participant="p1", trial=1, item=1, region=0, role=role, cell=cell,
                 skipped=skipped, regression_out=regression_out)
        r.update(dict.fromkeys(oracle.DURATION_MEASURES))
        r.update(durations)
        return r

    # Hand-worked (mean and sample SD: common practice, no source; proportions and their denominators as
    # methods.md section 8 defines skipping and first-pass regression-out probability):
    #   (target, A): gaze 200, 300, NA (skipped), 250 -> mean 250, SD sqrt((50^2 + 50^2 + 0) / (3 - 1)) = 50, N 3;
    #     skipping 1 of 4 rows; regression out 2 of the 3 entered rows.
    #   (target, B): one gaze of 180 -> mean 180, SD NA (n < 2), N 1; skipping 0 of 1; regression out 0 of 1.
    #   (spill, A): one skipped row -> gaze mean NA, SD NA, N 0; skipping 1 of 1; regression out NA over 0 rows.
    rows = [row("target", "A", False, True, gaze_duration_ms=200.0),
            row("target", "A", False, False, gaze_duration_ms=300.0),
            row("target", "A", True),
            row("target", "A", False, True, gaze_duration_ms=250.0),
            row("target", "B", False, False, gaze_duration_ms=180.0),
            row("spill", "A", True)]
    got = oracle.aggregate(rows)
    want = {("target", "A"): dict(gaze_duration_ms_mean=250.0, gaze_duration_ms_sd=50.0, gaze_duration_ms_n=3,
                                  total_time_ms_n=0, total_time_ms_mean=None, skipping_p=0.25, skipping_n=4,
                                  regression_out_p=2 / 3, regression_out_n=3),
            ("target", "B"): dict(gaze_duration_ms_mean=180.0, gaze_duration_ms_sd=None, gaze_duration_ms_n=1,
                                  skipping_p=0.0, skipping_n=1, regression_out_p=0.0, regression_out_n=1),
            ("spill", "A"): dict(gaze_duration_ms_mean=None, gaze_duration_ms_sd=None, gaze_duration_ms_n=0,
                                 skipping_p=1.0, skipping_n=1, regression_out_p=None, regression_out_n=0)}
    checked = 0
    if set(got) != set(want):
        fail(f"aggregate groups: {sorted(got)}")
    for key, values in want.items():
        for name, value in values.items():
            checked += 1
            g = got.get(key, {}).get(name, "missing")
            if not (g is None and value is None) and (g is None or value is None or g == "missing"
                                                      or abs(g - value) > 1e-12):
                fail(f"aggregate {key} {name}: expected {fmt(value)}, oracle gives {fmt(g)} (hand-worked)")

    # methods.md section 8: over the six regions of its worked case, skipping probability 1/6 and first-pass
    # regression-out rate 3/5 (methods.md computed these with independent code, Appendix B).
    fx = CASES[0][4]
    rows = [dict(participant="p1", trial=1, item=1, region=r, role="all", cell="all", **m)
            for r, m in enumerate(oracle.region_measures(fx, 6, 10.0))]
    got = oracle.aggregate(rows)[("all", "all")]
    for name, value in (("skipping_p", 1 / 6), ("skipping_n", 6), ("regression_out_p", 3 / 5), ("regression_out_n", 5)):
        checked += 1
        if abs(got[name] - value) > 1e-12:
            fail(f"aggregate over methods.md section 8 worked case: {name} expected {value}, oracle {got[name]}")
    print(f"aggregates: {checked} hand-worked values checked in the oracle (not yet compared with the library)")


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("harness", help="path of gazemill_measure_scanpaths")
    parser.add_argument("--trials", type=int, default=20000)
    parser.add_argument("--seed", type=int, default=20240611)
    args = parser.parse_args()
    check_fixed_cases(args.harness)
    check_random(args.harness, args.trials, args.seed)
    check_aggregates()
    if failures:
        print(f"{len(failures)} failures")
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
