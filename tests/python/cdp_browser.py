"""Headless Chromium driven through the Chrome DevTools Protocol, for the
report's browser check and bench/report: Debian's chromium started with a
fresh profile and no background networking, one page, and a websocket
(Debian's python3-websocket) to it. When Chromium is missing and cannot be
installed, or cannot start here, skip() ends the caller with exit 77 (ctest
SKIP_RETURN_CODE) saying why."""
import json
import os
import shutil
import subprocess
import sys
import time
import urllib.request

SKIP = 77


def skip(why):
    print("SKIP: browser check not run: " + why)
    sys.exit(SKIP)


def find_chromium():
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    if os.geteuid() == 0 and shutil.which("apt-get"):
        print("Chromium is not installed; installing Debian's chromium package")
        env = dict(os.environ, DEBIAN_FRONTEND="noninteractive")
        r = subprocess.run(["apt-get", "-o", "DPkg::Lock::Timeout=600", "install", "-y", "-qq", "--no-install-recommends", "chromium"],
                           env=env, capture_output=True, text=True)
        if r.returncode != 0:
            skip("Chromium is not installed and apt-get could not install it: " + (r.stderr or r.stdout).strip()[-400:])
        path = shutil.which("chromium")
        if path:
            return path
    skip("Chromium is not installed (Debian package chromium; scripts/install-deps installs it)")


try:
    import websocket  # Debian's python3-websocket
except ImportError:
    skip("the Python websocket client is missing (Debian package python3-websocket; scripts/install-deps installs it)")


class Browser:
    """Headless Chromium with a fresh profile, one page, and a DevTools connection to it."""

    def __init__(self, chromium, profile):
        self.profile = profile
        self.proc = subprocess.Popen(
            [chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", "--no-first-run", "--no-default-browser-check", "--disable-extensions", "--mute-audio",
             "--user-data-dir=" + profile, "--remote-debugging-port=0", "--window-size=1280,900", "about:blank"],
            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        port_file = os.path.join(profile, "DevToolsActivePort")
        deadline = time.monotonic() + 60
        while not os.path.exists(port_file):
            if self.proc.poll() is not None:
                err = self.proc.stderr.read().decode(errors="replace").strip()
                skip("Chromium could not start here (exit {}): {}".format(self.proc.returncode, err[-600:]))
            if time.monotonic() > deadline:
                self.close()
                skip("Chromium did not open its DevTools port within 60 s")
            time.sleep(0.1)
        time.sleep(0.2)
        with open(port_file) as f:
            port = int(f.readline().strip())
        with urllib.request.urlopen("http://127.0.0.1:{}/json/list".format(port), timeout=30) as r:
            targets = json.load(r)
        page = next(t for t in targets if t.get("type") == "page")
        self.ws = websocket.create_connection(page["webSocketDebuggerUrl"], timeout=120, suppress_origin=True)
        self.next_id = 0
        self.events = []

    def send(self, method, params=None, timeout=120):
        self.next_id += 1
        mid = self.next_id
        self.ws.send(json.dumps({"id": mid, "method": method, "params": params or {}}))
        deadline = time.monotonic() + timeout
        while True:
            if time.monotonic() > deadline:
                raise TimeoutError(method)
            msg = json.loads(self.ws.recv())
            if msg.get("id") == mid:
                if "error" in msg:
                    raise RuntimeError("{}: {}".format(method, msg["error"]))
                return msg.get("result", {})
            if "method" in msg:
                self.events.append(msg)

    def wait_event(self, method, timeout=120):
        for e in self.events:
            if e["method"] == method:
                return e
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            msg = json.loads(self.ws.recv())
            if "method" in msg:
                self.events.append(msg)
                if msg["method"] == method:
                    return msg
        raise TimeoutError(method)

    def evaluate(self, expression, timeout=120):
        r = self.send("Runtime.evaluate", {"expression": expression, "awaitPromise": True, "returnByValue": True}, timeout)
        if "exceptionDetails" in r:
            raise RuntimeError("page script failed: " + json.dumps(r["exceptionDetails"])[:800])
        return r["result"].get("value")

    def close(self):
        try:
            self.ws.close()
        except Exception:
            pass
        if self.proc.poll() is None:
            self.proc.terminate()
            try:
                self.proc.wait(10)
            except subprocess.TimeoutExpired:
                self.proc.kill()


def browser_messages(b, url):
    """Console errors, exceptions and error log entries; and every request's URL."""
    errors, requests = [], []
    for e in b.events:
        m, p = e["method"], e.get("params", {})
        if m == "Runtime.consoleAPICalled" and p.get("type") in ("error", "assert"):
            errors.append("console.{}: {}".format(p["type"], " ".join(str(a.get("value", a.get("description", ""))) for a in p.get("args", []))))
        elif m == "Runtime.exceptionThrown":
            d = p.get("exceptionDetails", {})
            errors.append("exception: {} {}".format(d.get("text", ""), d.get("exception", {}).get("description", ""))[:600])
        elif m == "Log.entryAdded" and p.get("entry", {}).get("level") == "error":
            errors.append("log: " + p["entry"].get("text", ""))
        elif m == "Network.requestWillBeSent":
            requests.append(p.get("request", {}).get("url", ""))
    return errors, requests


