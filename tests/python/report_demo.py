"""The demo study's report, as the report checks make it: the checked-in
simulated study (fixtures/demo-study, invented data) with cleaning rules
that remove something at every level, run end to end by `gazemill run`,
then `gazemill report`."""
import os
import shutil
import subprocess

RULES = '''
[[cleaning]]
name = "merge under 80 ms within 0.5 deg"
kind = "merge_short_fixations"
max_duration_ms = 80
max_distance_deg = 0.5
max_gap_ms = 50

[[cleaning]]
name = "shorter than 80 ms"
kind = "delete_short_fixations"
min_duration_ms = 80

[[cleaning]]
name = "longer than 800 ms"
kind = "delete_long_fixations"
max_duration_ms = 800

[[cleaning]]
name = "next to a blink"
kind = "delete_fixations_near_blinks"
within_ms = 50

[[cleaning]]
name = "more than 2 % data loss"
kind = "exclude_trials_with_data_loss"
max_missing_percent = 2

[[cleaning]]
name = "fewer than 12 fixations"
kind = "exclude_trials_with_few_fixations"
min_fixations = 12
'''


def flag_trials(store, flags):
    """Marks trials as drift correction's flagged ones, with a low confidence, in
    place with h5py: the align stage flags none yet, and the report's table of
    flagged trials and its links into the trial viewer need some.
    `flags`: (recording, row of its align/trials, confidence). Returns the
    (recording, trial id) of each, in the order given."""
    import h5py
    flagged = []
    with h5py.File(store, "r+") as h:
        for recording, row, confidence in flags:
            g = h["recordings"][recording]["align"]["trials"]
            trial = g["trial"][row]
            flagged.append((recording, trial.decode() if isinstance(trial, bytes) else str(trial)))
            g["flagged"][row] = 1
            g["confidence"][row] = confidence
    return flagged


def make_demo_report(gazemill, fixtures, folder, flags=(), flagged=None):
    """Runs the demo study into `folder` and returns the report's path;
    `flags` as flag_trials takes them, applied before the report is made
    (the trials they name are appended to the list `flagged`)."""
    study = os.path.join(folder, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    with open(proto, "a") as f:
        f.write(RULES)
    out = os.path.join(folder, "out")
    subprocess.run([gazemill, "-q", "run", proto, "-o", out], check=True)
    if flags:
        named = flag_trials(os.path.join(out, "harbour-news.gzm.h5"), flags)
        if flagged is not None:
            flagged.extend(named)
    report = os.path.join(folder, "demo-report.html")
    subprocess.run([gazemill, "-q", "report", os.path.join(out, "harbour-news.gzm.h5"), "-o", report], check=True)
    return report
