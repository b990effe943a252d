#!/usr/bin/python3
"""The command-line contract: --help on every command, --version, exit codes
0 ok / 1 bad input / 2 usage, errors naming file and line, and no store left
behind after a failed run.

usage: check_cli.py GAZEMILL_BINARY FIXTURES_DIR
"""
import os
import subprocess
import sys
import tempfile

gazemill = sys.argv[1]
failures = []
passes = 0
COMMANDS = ["run", "simulate", "ingest", "inspect", "detect", "score", "clean", "align", "audit", "verify", "measure"]


def run(*args, cwd=None):
    return subprocess.run([gazemill, *args], capture_output=True, text=True, cwd=cwd)


def check(cond, what, proc=None):
    global passes
    passes += bool(cond)
    if not cond:
        failures.append(what)
        print("FAIL:", what)
        if proc is not None:
            print("  exit", proc.returncode, "stderr:", proc.stderr.strip()[:400])


r = run("--version")
check(r.returncode == 0 and r.stdout.startswith("gazemill "), "--version", r)
r = run("--help")
check(r.returncode == 0 and all(c in r.stdout for c in COMMANDS), "--help lists every command", r)
for c in COMMANDS:
    r = run(c, "--help")
    check(r.returncode == 0 and "Usage" in r.stdout, f"{c} --help", r)
check(run().returncode == 2, "no command is a usage error")
check(run("frobnicate").returncode == 2, "unknown command is a usage error")
check(run("ingest", "--no-such-option", "x").returncode == 2, "unknown option is a usage error")

with tempfile.TemporaryDirectory() as tmp:
    proto = os.path.join(tmp, "gazemill.toml")
    with open(proto, "w") as f:
        f.write('[input]\nfiles = ["*.tsv"]\nformat = "delimted"\n')
    r = run("ingest", proto)
    check(r.returncode == 1, "bad protocol exits 1", r)
    check(f"{proto}:3: field 'input.format'" in r.stderr and "expected \"delimited\" (samples), \"bids\"" in r.stderr,
          "bad protocol names file, line and key", r)

    with open(proto, "w") as f:
        f.write("""[input]
files = ["*.tsv"]
[input.table]
time_column = "t"
[input.table.left]
x_column = "x"
y_column = "y"
[screen]
width_px = 800
height_px = 600
width_mm = 300
height_mm = 220
viewing_distance_mm = 600
[trials]
start = '^S$'
end = '^E$'
""")
    data = os.path.join(tmp, "a.tsv")
    with open(data, "w") as f:
        f.write("t\tx\ty\n1\t2\t3\n2\t2\t\t\n")
    before = set(os.listdir(tmp))
    r = run("ingest", proto, "-o", os.path.join(tmp, "s.gzm.h5"))
    check(r.returncode == 1, "bad data exits 1", r)
    check(f"{data}:3:" in r.stderr and "expected 3" in r.stderr, "bad data names file and line", r)
    # Nothing but the writer's hidden lock file, which holds no data.
    after = {f for f in os.listdir(tmp) if not f.endswith(".lock")}
    check(after == before, "a failed ingest leaves nothing behind", r)

    # score's screen options: two positive numbers, whole for pixels; a huge
    # or negative value once reached an int unchecked.
    labelled = os.path.join(tmp, "labelled.tsv")
    with open(labelled, "w") as f:
        f.write("time\tx\ty\tlabel\n1\t2\t3\t1\n2\t2\t3\t1\n")
    for px in ["1e300x5", "-5x5", "1920x1080abc", "1920.5x1080"]:
        r = run("score", "--labelled", labelled, "--codes", "1=fixation", "--screen-px", px,
                "--screen-mm", "500x300", "--distance-mm", "600")
        check(r.returncode == 1 and "'--screen-px'" in r.stderr, f"score --screen-px {px} exits 1 naming the option", r)
    r = run("score", "--labelled", labelled, "--codes", "1=fixation", "--screen-px", "1920x1080",
            "--screen-mm", "500x300", "--distance-mm", "inf")
    check(r.returncode == 1 and "'--distance-mm'" in r.stderr, "score --distance-mm inf exits 1 naming the option", r)

    r = run("inspect", os.path.join(tmp, "nothing.h5"))
    check(r.returncode == 1 and "no such file" in r.stderr, "inspect of a missing store exits 1", r)
    r = run("inspect", data)
    check(r.returncode == 1 and "not a study store" in r.stderr, "inspect of a text file exits 1, naming what it is", r)
    r = run("detc", data)
    check(r.returncode == 2 and "did you mean 'detect'" in r.stderr and r.stderr.startswith("error:"), "a misspelt command gets the nearest", r)
    r = run("run", "--no-such-option")
    check(r.returncode == 2 and r.stderr.startswith("error:"), "usage errors start with error:", r)

# run writes the study's report beside its store, again only when the store changed
# (common practice for a build step: an output is refreshed with its input, no source).
import shutil
with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(sys.argv[2], "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    out = os.path.join(tmp, "out")
    html = os.path.join(out, "report.html")
    r = run("run", proto, "-o", out)
    check(r.returncode == 0 and os.path.getsize(html) > 10000 and "report.html" in r.stderr, "run writes report.html and names it", r)
    first = os.stat(html).st_mtime_ns
    import json
    summary_path = os.path.join(out, "run-summary.json")
    summary = json.load(open(summary_path))
    check(summary["samples_read"] > 0 and os.path.isabs(summary["store"]), "the run summary counts the samples read and gives absolute paths")
    r = run("run", proto, "-o", out)
    check(r.returncode == 0 and os.stat(html).st_mtime_ns == first, "a run with nothing to redo leaves the report as it is", r)
    # A newcomer's trial: the summary of a run that did nothing read zero samples, overwriting the real counts.
    check(json.load(open(summary_path)) == summary, "a run with nothing to redo leaves the run summary as it is", r)
    with open(proto, "a") as f:
        f.write('\n[[cleaning]]\nname = "brief"\nkind = "delete_short_fixations"\nmin_duration_ms = 80\n')
    r = run("run", proto, "-o", out)
    check(r.returncode == 0 and os.stat(html).st_mtime_ns != first and "brief" in open(html).read(),
          "a run that changed the store writes the report again, with the new rule in it", r)
    os.utime(html, ns=(first - 10**9, first - 10**9))  # as if a run had been killed after its store, before its report
    r = run("run", proto, "-o", out)
    check(r.returncode == 0 and os.stat(html).st_mtime_ns > first, "a report older than its store is written again", r)
    out2 = os.path.join(tmp, "out2")
    r = run("run", proto, "-o", out2, "--no-report")
    check(r.returncode == 0 and not os.path.exists(os.path.join(out2, "report.html")), "run --no-report writes none", r)

# Issue 20: a start pattern without a trial capture is explained, once
# (common practice, no source).
with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(sys.argv[2], "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    text = open(proto).read()
    with open(proto, "w") as f:
        f.write(text.replace("start = '^begin trial (?<trial>\\d+)$'", "start = '^begin trial \\d+$'")
                    .replace("end = '^end trial (?<trial>\\d+)$'", "end = '^end trial \\d+$'"))
    r = run("ingest", proto, "-o", os.path.join(tmp, "s.gzm.h5"))
    check(r.returncode == 0 and r.stderr.count("trials.start has no (?<trial>...) capture") == 1
          and "numbered 1, 2, 3, ... in the order their start messages come" in r.stderr,
          "a start pattern without a trial capture is explained once", r)
    r = run("ingest", os.path.join(sys.argv[2], "demo-study", "gazemill.toml"), "-o", os.path.join(tmp, "t.gzm.h5"))
    check(r.returncode == 0 and "no (?<trial>...) capture" not in r.stderr, "a start pattern with one is not", r)

print(f"{passes} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
