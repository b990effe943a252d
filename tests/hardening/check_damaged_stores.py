#!/usr/bin/python3
"""A damaged or hostile study store gives a clear error, never a crash
(issue 20: fuzzing covered the text readers, not the store reader, which
parses files users hand it). Common practice, no source.

A store made by `gazemill run` on the fixture study is damaged in fixed,
repeatable ways: cut short, bytes flipped in the superblock and in the data,
and, written with h5py, datasets of the wrong type or shape and a missing
group. `inspect`, `measure`, `report` and `report --max-points 123` on each
must end with exit 1 and an `error:` line naming the store, or (where the
damage misses what the command reads: inspect, measure and report read no
samples, the report taking detect's sample digest; another number of points
makes it read the samples) exit 0; never a signal, never another code.

usage: check_damaged_stores.py GAZEMILL_BINARY FIXTURES_DIR
"""
import os
import shutil
import subprocess
import sys
import tempfile

import h5py
import numpy as np

gazemill, fixtures = sys.argv[1], sys.argv[2]
failures, passes = [], 0


def run(*args):
    return subprocess.run([gazemill, "-q", *args], capture_output=True, text=True, timeout=300)


def check(cond, what, proc=None):
    global passes
    passes += bool(cond)
    if not cond:
        failures.append(what)
        print("FAIL:", what)
        if proc is not None:
            print("  exit", proc.returncode, "stderr:", proc.stderr.strip()[-600:])


with tempfile.TemporaryDirectory() as tmp:
    study = os.path.join(tmp, "study")
    shutil.copytree(os.path.join(fixtures, "demo-study"), study)
    proto = os.path.join(study, "gazemill.toml")
    out = os.path.join(tmp, "out")
    r = run("run", proto, "-o", out, "--no-report")
    good = os.path.join(out, "harbour-news.gzm.h5")
    check(r.returncode == 0 and os.path.exists(good), "the fixture study runs", r)
    size = os.path.getsize(good)
    raw = open(good, "rb").read()

    def damaged(name, data=None, edit=None):
        path = os.path.join(tmp, name + ".gzm.h5")
        if data is not None:
            with open(path, "wb") as f:
                f.write(data)
        else:
            shutil.copyfile(good, path)
            with h5py.File(path, "r+") as f:
                edit(f)
        return path

    def flip(data, start, length):
        b = bytearray(data)
        for i in range(start, min(start + length, len(b))):
            b[i] ^= 0xA5
        return bytes(b)

    def long_heap_object(data):
        # The first object of the first global heap collection claims far more
        # bytes than its collection holds (HDF5 File Format Specification,
        # "Global Heap": "GCOL", version 1, 3 reserved bytes, 8-byte size,
        # then objects of index, references, reserved, 8-byte size).
        b = bytearray(data)
        at = b.find(b"GCOL\x01\x00\x00\x00")
        assert at > 0, "the store has a global heap collection"
        b[at + 16 + 8: at + 16 + 16] = (1 << 40).to_bytes(8, "little")
        return bytes(b)

    rec = "recordings/p01_1"
    cases = {
        # found by scripts/fuzz: HDF5 1.10.8 crashed reading it (tests/hardening/stores/README.md)
        "fuzz-heap-length": (damaged("fuzz-heap-length", open(os.path.join(os.path.dirname(os.path.abspath(__file__)), "stores",
                                                                           "hdf5-global-heap-length.gzm.h5"), "rb").read()), True),
        "heap-object-too-long": (damaged("heap-object-too-long", long_heap_object(raw)), True),
        # name: (file, which commands must fail: True = all; a set = those that read what is damaged)
        "empty": (damaged("empty", b""), True),
        "cut-at-1k": (damaged("cut-at-1k", raw[:1024]), True),
        "cut-in-half": (damaged("cut-in-half", raw[: size // 2]), True),
        "cut-near-end": (damaged("cut-near-end", raw[: size - 4096]), True),
        "superblock-flipped": (damaged("superblock-flipped", flip(raw, 8, 40)), True),
        "data-flipped": (damaged("data-flipped", flip(raw, size // 3, 8192)), False),
        "metadata-flipped": (damaged("metadata-flipped", flip(raw, 1024, 4096)), False),
        "time-as-text": (damaged("time-as-text", edit=lambda f: (f[rec + "/samples"].__delitem__("time_us"),
                                                                  f[rec + "/samples"].create_dataset("time_us", data=np.array([b"x"] * 10)))), {"report-from-samples"}),
        "time-2d": (damaged("time-2d", edit=lambda f: (f[rec + "/samples"].__delitem__("time_us"),
                                                        f[rec + "/samples"].create_dataset("time_us", data=np.zeros((3, 4), "i8")))), {"report-from-samples"}),
        "trials-gone": (damaged("trials-gone", edit=lambda f: f[rec].__delitem__("trials")), True),
        "provenance-gone": (damaged("provenance-gone", edit=lambda f: f.__delitem__("provenance")), True),
        "digest-short": (damaged("digest-short", edit=lambda f: (f[rec + "/events/sample_digest/time_courses"].__delitem__("bin_ms"),
                                                                  f[rec + "/events/sample_digest/time_courses"].create_dataset("bin_ms", data=np.ones(1)),
                                                                  f[rec + "/events/sample_digest/time_courses"].__delitem__("points"),
                                                                  f[rec + "/events/sample_digest/time_courses"].create_dataset("points", data=np.ones(1, "u4")))), False),
        "short-column": (damaged("short-column", edit=lambda f: (f[rec + "/samples"].__delitem__("left_x_px"),
                                                                  f[rec + "/samples"].create_dataset("left_x_px", data=np.zeros(5, "f4")))), {"report-from-samples"}),
    }
    for name, (path, must_fail) in cases.items():
        for label, cmd in (("inspect", ["inspect", path]), ("measure", ["measure", proto, "-s", path, "-o", os.path.join(tmp, name + "-tables")]),
                           ("report", ["report", path, "-o", os.path.join(tmp, name + ".html")]),
                           ("report-from-samples", ["report", path, "--max-points", "123", "-o", os.path.join(tmp, name + "-s.html")])):
            r = run(*cmd)
            what = f"{label} on a store {name}"
            check(r.returncode >= 0, what + ": no signal (got %d)" % r.returncode, r)
            if must_fail is True or (must_fail and label in must_fail):
                check(r.returncode == 1, what + ": exit 1", r)
            else:
                check(r.returncode in (0, 1), what + ": exit 0 or 1", r)
            if r.returncode == 1:
                check(r.stderr.startswith("error:") and path in r.stderr and r.stderr.count("\n") <= 3,
                      what + ": one error line naming the store", r)

print(f"{passes} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
