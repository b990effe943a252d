#!/usr/bin/python3
"""The study report's structure, read by outside readers: Python's own HTML
tokenizer (html.parser), json, base64 (RFC 4648) and zlib (RFC 1950). On
the demo study's report it checks that every element closes in order (void
elements as the HTML Living Standard lists them), that the page names its
language and title, that it asks for nothing (no src attribute, no link
element, links only to its own sections, a Content-Security-Policy of
default-src 'none'), that every section is there with at least one chart,
that every chart has a text title and an alternative text, that every
table has a caption and a header, and that the embedded data (the JSON and
each packed block of the trial viewer) read back.

usage: check_report_structure.py GAZEMILL_BINARY FIXTURES_DIR
"""
import base64
import json
import os
import struct
import sys
import tempfile
import zlib
from html.parser import HTMLParser

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from report_demo import make_demo_report  # noqa: E402

# HTML Living Standard, "Void elements".
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}
SECTIONS = ["run", "quality", "cleaning", "detection", "drift", "measures", "viewer"]

failures = []
passes = 0


def check(cond, what):
    global passes
    if cond:
        passes += 1
    else:
        failures.append(what)
        print("FAIL:", what)


class Page(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.errors = [], []
        self.counts = {}
        self.ids = set()
        self.sections = []
        self.figures = []        # dicts: id, section, title, alt, role, chart
        self.tables = []         # dicts: caption, thead
        self.scripts = []        # dicts: attrs, text
        self.attrs_seen = []     # (tag, name, value)
        self.html_attrs = {}
        self.title = ""
        self._text_target = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.counts[tag] = self.counts.get(tag, 0) + 1
        for k, v in attrs:
            self.attrs_seen.append((tag, k, v))
        if "id" in a:
            if a["id"] in self.ids:
                self.errors.append("the id {} is used twice".format(a["id"]))
            self.ids.add(a["id"])
        if tag == "html":
            self.html_attrs = a
        if tag == "section":
            self.sections.append(a.get("id"))
        if tag == "figure" and "chart" in a.get("class", "").split():
            self.figures.append({"id": a.get("id"), "section": self.sections[-1] if self.sections else None, "title": "", "alt": None, "role": None})
        if tag == "span" and a.get("class") == "chart-title" and self.figures:
            self._text_target = ("figure-title", self.figures[-1])
        if tag == "div" and "vega" in a.get("class", "").split() and self.figures:
            self.figures[-1]["alt"] = a.get("aria-label")
            self.figures[-1]["role"] = a.get("role")
            self.figures[-1]["chart"] = a.get("data-chart")
        if tag == "table":
            self.tables.append({"caption": "", "thead": False})
        if tag == "caption" and self.tables:
            self._text_target = ("caption", self.tables[-1])
        if tag == "thead" and self.tables:
            self.tables[-1]["thead"] = True
        if tag == "script":
            self.scripts.append({"attrs": a, "text": ""})
            self._text_target = ("script", self.scripts[-1])
        if tag == "title":
            self._text_target = ("title", None)
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.handle_starttag(tag, attrs)
        if tag not in VOID:
            self.errors.append("<{}/> is not a void element".format(tag))
            self.stack.pop()

    def handle_endtag(self, tag):
        if tag in VOID:
            self.errors.append("</{}> closes a void element".format(tag))
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append("</{}> where <{}> is open".format(tag, self.stack[-1] if self.stack else "nothing"))
            return
        self.stack.pop()
        self._text_target = None

    def handle_data(self, data):
        if not self._text_target:
            return
        kind, target = self._text_target
        if kind == "figure-title":
            target["title"] += data
        elif kind == "caption":
            target["caption"] += data
        elif kind == "script":
            target["text"] += data
        elif kind == "title":
            self.title += data

    def handle_decl(self, decl):
        self.doctype = decl


def unpack(text):
    """A packed block of the viewer: base64 of zlib data holding a uint32 length, JSON, then bytes."""
    plain = zlib.decompress(base64.b64decode(text.strip(), validate=True))
    (n,) = struct.unpack("<I", plain[:4])
    return json.loads(plain[4:4 + n].decode("utf-8")), plain[4 + n:]


def main():
    gazemill, fixtures = sys.argv[1], sys.argv[2]
    with tempfile.TemporaryDirectory() as tmp:
        path = make_demo_report(gazemill, fixtures, tmp)
        with open(path, encoding="utf-8") as f:
            html = f.read()
    p = Page()
    p.feed(html)
    p.close()
    for e in p.errors[:10]:
        print("  ", e)
    check(not p.errors, "every element closes in order ({} problems)".format(len(p.errors)))
    check(not p.stack, "nothing is left open (open: {})".format(p.stack))
    check(getattr(p, "doctype", "").lower() == "doctype html", "the page starts with <!DOCTYPE html>")
    check(p.html_attrs.get("lang") == "en", "the page names its language")
    check(p.title.strip() != "", "the page has a title")
    for tag in ("html", "head", "body", "main"):
        check(p.counts.get(tag) == 1, "exactly one <{}>".format(tag))

    # Nothing asked for from anywhere.
    srcs = [(t, v) for t, k, v in p.attrs_seen if k == "src"]
    check(not srcs, "no element loads anything by src ({})".format(srcs[:3]))
    check(p.counts.get("link", 0) == 0, "no <link> element")
    hrefs = [v for t, k, v in p.attrs_seen if k == "href"]
    check(all(h.startswith("#") and h[1:] in p.ids for h in hrefs), "every link goes to a section of the page itself")
    csp = [v for t, k, v in p.attrs_seen if t == "meta" and k == "content" and "default-src" in (v or "")]
    check(len(csp) == 1 and "default-src 'none'" in csp[0] and "connect-src 'none'" in csp[0],
          "a Content-Security-Policy refuses every request")

    # Sections, charts, tables.
    for s in SECTIONS:
        check(s in p.sections, "section {} is present".format(s))
        check(sum(1 for f in p.figures if f["section"] == s) >= 1, "section {} has a chart".format(s))
    for f in p.figures:
        check(len(f["title"].strip()) > 0, "chart {} has a text title".format(f["id"]))
        check(f["alt"] is not None and len(f["alt"].strip()) > 20, "chart {} has an alternative text".format(f["id"]))
        check(f["role"] == "img", "chart {} is announced as an image".format(f["id"]))
    print("{} charts, {} tables".format(len(p.figures), len(p.tables)))
    for t in p.tables:
        check(t["caption"].strip() != "" and t["thead"], "table '{}' has a caption and a header".format(t["caption"][:40]))

    # The embedded data.
    data = [s for s in p.scripts if s["attrs"].get("id") == "gazemill-data"]
    check(len(data) == 1 and data[0]["attrs"].get("type") == "application/json", "one JSON data block")
    d = json.loads(data[0]["text"])
    for key in ("run", "quality", "cleaning", "detection", "drift", "measures", "viewer"):
        check(key in d, "the data have their {} part".format(key))
    viewer = d["viewer"]
    layouts, _ = unpack(next(s["text"] for s in p.scripts if s["attrs"].get("id") == viewer["layouts_packed"]))
    check(len(layouts["layouts"]) > 0, "the viewer's layouts read back")
    total_trials = 0
    for rec in viewer["recordings"]:
        block = next(s for s in p.scripts if s["attrs"].get("id") == rec["packed"])
        trials, samples = unpack(block["text"])
        total_trials += len(trials["trials"])
        check(len(trials["trials"]) == rec["trial_count"], "recording {}: every trial is packed".format(rec["id"]))
        check(all(t["s"][0] + t["s"][1] <= len(samples) for t in trials["trials"] if "s" in t),
              "recording {}: every time course lies inside its bytes".format(rec["id"]))
        check(all(0 <= t["layout"] < len(layouts["layouts"]) for t in trials["trials"]), "recording {}: every trial has its layout".format(rec["id"]))
    listed = sum(p["kept"] + p["excluded"] for p in d["run"]["trials"])
    check(total_trials == listed and listed > 0, "every trial the run summary counts is in the viewer ({} of {})".format(total_trials, listed))
    # Scripts: the data, the packed blocks, the libraries and the page's own; nothing external.
    code = [s for s in p.scripts if "type" not in s["attrs"]]
    check(len(code) == 2 and all("src" not in s["attrs"] for s in p.scripts), "two inline scripts (libraries, page), none from a file")

    print("{} passed, {} failed".format(passes, len(failures)))
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
