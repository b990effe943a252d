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


def make_demo_report(gazemill, fixtures, folder):
    """Runs the demo study into `folder` and returns the report's path."""
    study = os.path.join(folder, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    with open(proto, "a") as f:
        f.write(RULES)
    out = os.path.join(folder, "out")
    subprocess.run([gazemill, "-q", "run", proto, "-o", out], check=True)
    report = os.path.join(folder, "demo-report.html")
    subprocess.run([gazemill, "-q", "report", os.path.join(out, "harbour-news.gzm.h5"), "-o", report], check=True)
    return report
