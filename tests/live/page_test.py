"""The live map page in headless Chromium (docs/live.md, "The live page").

The page is opened once; it must show the fix and the session's counts, and then, with no
reload, show a new revision and the new bearing count after more bearings are posted. The
page's HTML must hold no outside address (no src, href, url() or @import). Chromium is
driven over its DevTools pipe (--remote-debugging-pipe: JSON messages ending in NUL on file
descriptors 3 and 4), so no extra library is needed. Exit 77 (CTest: skipped) only when no
chromium is installed.
"""

import json
import os
import re
import select
import shutil
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402

SKIP = 77


class DevTools:
    def __init__(self, binary, user_dir):
        to_chrome_r, self.to_chrome = os.pipe()
        self.from_chrome, from_chrome_w = os.pipe()
        a, b = os.dup(to_chrome_r), os.dup(from_chrome_w)

        def child_fds():
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.proc = subprocess.Popen(
            [binary, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             "--user-data-dir=" + user_dir, "--remote-debugging-pipe", "about:blank"],
            preexec_fn=child_fds, close_fds=False, stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL, stdin=subprocess.DEVNULL)
        for fd in (to_chrome_r, from_chrome_w, a, b):
            os.close(fd)
        self.buffer = b""
        self.next_id = 0

    def call(self, method, params=None, session=None, timeout_s=30):
        self.next_id += 1
        msg = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            msg["sessionId"] = session
        os.write(self.to_chrome, json.dumps(msg).encode() + b"\0")
        deadline = time.monotonic() + timeout_s
        while True:
            while b"\0" in self.buffer:
                raw, self.buffer = self.buffer.split(b"\0", 1)
                reply = json.loads(raw)
                if reply.get("id") == self.next_id:
                    if "error" in reply:
                        L.fail("%s: %s" % (method, reply["error"]))
                    return reply["result"]
            left = deadline - time.monotonic()
            L.check(left > 0, "chromium did not answer %s" % method)
            ready, _, _ = select.select([self.from_chrome], [], [], left)
            if ready:
                chunk = os.read(self.from_chrome, 1 << 16)
                L.check(chunk != b"", "chromium closed its DevTools pipe")
                self.buffer += chunk

    def close(self):
        try:
            self.call("Browser.close", timeout_s=5)
        except SystemExit:
            pass
        try:
            self.proc.wait(10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait(10)


def main():
    binary = shutil.which("chromium") or shutil.which("chromium-browser")
    if binary is None:
        print("SKIP: chromium is not installed (Debian package 'chromium'); the live page "
              "was not tested in a browser")
        sys.exit(SKIP)
    directory = L.work_dir("live-page")
    live = L.Live(directory, ["--debounce-ms", "20"])
    bearings = L.invented_bearings(12, 3)
    code, _ = live.post("".join(L.line(b) + "\n" for b in bearings[:8]))
    L.check(code == 200, "post: %s" % code)
    first = live.wait_solved(30, 8)

    code, html = live.request("GET", "/")
    L.check(code == 200, "GET /: %s" % code)
    outside = re.findall(r"""(?:\bsrc\s*=|\bhref\s*=|url\(|@import)""", html, re.I)
    L.check(not outside, "the page refers to outside resources: %s" % outside)
    L.check(not re.search(r"https?://(?!www\.w3\.org/2000/svg)", html),
            "the page holds an address other than the SVG namespace name")

    user_dir = tempfile.mkdtemp(prefix="chromium-", dir=directory)
    dt = DevTools(binary, user_dir)
    try:
        target = dt.call("Target.createTarget",
                         {"url": "http://127.0.0.1:%d/" % live.http_port})["targetId"]
        session = dt.call("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]

        def page_text(element):
            r = dt.call("Runtime.evaluate", {
                "expression": "(document.getElementById(%s) || {}).textContent || ''" % json.dumps(element),
                "returnByValue": True}, session)
            return r["result"].get("value", "")

        def shows(revision, count):
            def ok():
                fixes = page_text("fixes")
                return (page_text("revision") == str(revision) and
                        page_text("bearings").startswith("%d solved" % count) and
                        re.search(r"-31\.\d{6}, 146\.\d{6}\s+CEP \d+ m", fixes) and fixes)
            return L.wait_for(ok, 30, "the page to show revision %d with %d bearings" % (revision, count))

        fix_before = shows(first["revision"], 8)
        svg_items = dt.call("Runtime.evaluate", {
            "expression": "document.querySelectorAll('#map circle.fix, #map rect.station, "
                          "#map polyline.ray, #map polygon.ellipse').length",
            "returnByValue": True}, session)["result"]["value"]
        L.check(svg_items >= 8 + 1, "the map draws %d items" % svg_items)

        code, _ = live.post("".join(L.line(b) + "\n" for b in bearings[8:]))
        L.check(code == 200, "second post: %s" % code)
        second = live.wait_solved(30, 12)
        fix_after = shows(second["revision"], 12)
        state = page_text("state")
        L.check(state.startswith("live"), "page state: %s" % state)
        print("page test: before '%s' (revision %d), after '%s' (revision %d), %d map items" %
              (fix_before, first["revision"], fix_after, second["revision"], svg_items))
    finally:
        dt.close()
        live.stop()
    print("PASS")


if __name__ == "__main__":
    main()
