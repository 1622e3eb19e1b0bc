"""The field report (lobfix report, docs/report.md) in headless Chromium.

Makes the demo's report, opens it from a file with the network off, and checks: the DOM has
the map's layers (stations, rays, fix, ellipses, regions, segments, grid, scale bar, north
arrow, legend) and the tables; a screenshot is not blank; under print media on A4 and US
Letter the map fits the page width and height; printing to PDF on A4 gives pages of A4 size
(595 x 842 pt); the map, at most 150 mm high, fits one page (the CSS keeps it whole).
Chromium is driven over its DevTools
pipe (--remote-debugging-pipe), as tests/live/page_test.py does. With LOBFIX_SCREENSHOT set,
the screenshot is also written there (docs/report-screenshot.png). Exit 77 (CTest: skipped)
only when no chromium is installed.
"""

import base64
import json
import os
import re
import select
import shutil
import struct
import subprocess
import sys
import tempfile
import time
import zlib

SKIP = 77


def fail(message):
    print("FAIL: " + message, file=sys.stderr)
    sys.exit(1)


def check(condition, message):
    if not condition:
        fail(message)


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
        self.events = []

    def call(self, method, params=None, session=None, timeout_s=60):
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
                        fail("%s: %s" % (method, reply["error"]))
                    return reply["result"]
                if "method" in reply:
                    self.events.append(reply)
            left = deadline - time.monotonic()
            check(left > 0, "chromium did not answer %s" % method)
            ready, _, _ = select.select([self.from_chrome], [], [], left)
            if ready:
                chunk = os.read(self.from_chrome, 1 << 16)
                check(chunk != b"", "chromium closed its DevTools pipe")
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


def png_distinct_rows(png):
    """Decode an 8-bit RGB(A) PNG (no interlace) and count distinct colours in a sample."""
    check(png[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG")
    pos, idat, width, height, channels = 8, b"", 0, 0, 0
    while pos < len(png):
        length, kind = struct.unpack(">I4s", png[pos:pos + 8])
        data = png[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            width, height, depth, colour = struct.unpack(">IIBB", data[:10])
            check(depth == 8 and colour in (2, 6), "unexpected PNG format")
            channels = 3 if colour == 2 else 4
        elif kind == b"IDAT":
            idat += data
        pos += 12 + length
    raw = zlib.decompress(idat)
    stride = width * channels
    colours, prev = set(), bytearray(stride)
    dark = 0
    for y in range(height):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - channels] if i >= channels else 0
            b = prev[i]
            c = prev[i - channels] if i >= channels else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        for x in range(0, width, 7):
            px = bytes(line[x * channels:x * channels + 3])
            colours.add(px)
            if sum(px) < 150:
                dark += 1
        prev = line
    return width, height, len(colours), dark


def main():
    binary = shutil.which("chromium") or shutil.which("chromium-browser")
    if binary is None:
        print("SKIP: chromium is not installed (Debian package 'chromium'); the report was "
              "not tested in a browser")
        sys.exit(SKIP)
    base = os.environ.get("LOBFIX_REPORT_TMP", tempfile.gettempdir())
    os.makedirs(base, exist_ok=True)
    directory = tempfile.mkdtemp(prefix="report-", dir=base)
    html_path = os.path.join(directory, "hunt-report.html")
    samples = os.environ.get("LOBFIX_SAMPLES", "samples")
    run = subprocess.run([os.environ.get("LOBFIX_EXE", "lobfix"), "report",
                          os.path.join(samples, "hunt.csv"), "-o", html_path, "--quiet"],
                         capture_output=True, text=True, timeout=120)
    check(run.returncode == 0, "lobfix report: exit %d: %s" % (run.returncode, run.stderr))
    html = open(html_path, encoding="utf-8").read()
    outside = re.findall(r"""(?:\bsrc\s*=|\bhref\s*=|url\(|@import|<script|<link)""", html, re.I)
    check(not outside, "the report refers to outside resources: %s" % outside)
    check(not re.search(r"https?://(?!www\.w3\.org/2000/svg\")", html),
          "the report holds an address other than the SVG namespace name")

    dt = DevTools(binary, tempfile.mkdtemp(prefix="chromium-", dir=directory))
    try:
        target = dt.call("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = dt.call("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        dt.call("Page.enable", {}, session)
        dt.call("Network.enable", {}, session)
        dt.call("Network.emulateNetworkConditions", {"offline": True, "latency": 0,
                "downloadThroughput": -1, "uploadThroughput": -1}, session)
        dt.call("Emulation.setDeviceMetricsOverride", {"width": 1100, "height": 1400,
                "deviceScaleFactor": 1, "mobile": False}, session)
        dt.call("Page.navigate", {"url": "file://" + html_path}, session)

        def js(expression):
            r = dt.call("Runtime.evaluate", {"expression": expression, "returnByValue": True},
                        session)
            return r["result"].get("value")

        deadline = time.monotonic() + 30
        while js("document.readyState") != "complete":
            check(time.monotonic() < deadline, "the report did not load")
            time.sleep(0.05)

        counts = js("""JSON.stringify({
          stations: document.querySelectorAll('#map #stations rect.station').length,
          rays: document.querySelectorAll('#map #rays polyline.ray').length,
          fix: document.querySelectorAll('#map #fix g.fix').length,
          ellipses: document.querySelectorAll('#map #ellipses polygon.ellipse').length,
          regions: document.querySelectorAll('#map #regions path.region').length,
          segments: document.querySelectorAll('#map #segments g.segment').length,
          ranks: document.querySelectorAll('#map #segments text.segment-rank').length,
          grid: document.querySelectorAll('#map #grid text.grid-label').length,
          scale: document.querySelectorAll('#map #scale-bar rect').length,
          north: document.querySelectorAll('#map #north-arrow polygon').length,
          legend: document.querySelectorAll('#map #legend text').length,
          bearingRows: document.querySelectorAll('table.bearings tbody tr').length,
          segmentRows: document.querySelectorAll('table.segments tbody tr').length,
          mgrs: (document.querySelector('table.position .mgrs') || {}).textContent || '',
          cautions: document.querySelectorAll('section.cautions li').length,
          mapWidth: document.querySelector('#map').getBoundingClientRect().width,
          failed: performance.getEntriesByType('resource').length})""")
        c = json.loads(counts)
        print("screen DOM: %s" % c)
        check(c["stations"] == 12, "stations drawn: %d" % c["stations"])
        check(c["rays"] == 12, "rays drawn: %d" % c["rays"])
        check(c["fix"] == 1 and c["ellipses"] >= 2 and c["regions"] >= 2, "fix/ellipses/regions")
        check(c["segments"] >= 1 and c["ranks"] >= 1, "segments drawn: %d" % c["segments"])
        check(c["grid"] >= 4 and c["scale"] >= 4 and c["north"] == 2 and c["legend"] >= 5,
              "grid, scale bar, north arrow, legend")
        check(c["bearingRows"] == 12, "bearing table rows: %d" % c["bearingRows"])
        check(c["segmentRows"] == c["segments"] + 1, "segment table rows (with the rest)")
        check(re.match(r"13T [A-Z]{2} \d{5} \d{5}$", c["mgrs"]), "MGRS: %r" % c["mgrs"])
        check(c["cautions"] >= 3, "cautions")
        check(c["failed"] == 0, "the page loaded %d resources" % c["failed"])

        shot = base64.b64decode(dt.call("Page.captureScreenshot", {"format": "png"}, session)["data"])
        width, height, colours, dark = png_distinct_rows(shot)
        print("screenshot: %d x %d px, %d distinct colours sampled, %d dark samples" %
              (width, height, colours, dark))
        check(colours >= 8 and dark >= 100, "the screenshot looks blank")
        if os.environ.get("LOBFIX_SCREENSHOT"):
            with open(os.environ["LOBFIX_SCREENSHOT"], "wb") as f:
                f.write(shot)

        # Print media: the map must fit within the printable width and its 150 mm height.
        dt.call("Emulation.setEmulatedMedia", {"media": "print"}, session)
        for name, width_mm in (("A4", 210.0 - 24.0), ("US Letter", 215.9 - 24.0)):
            px = width_mm / 25.4 * 96.0
            dt.call("Emulation.setDeviceMetricsOverride", {"width": int(px), "height": 1000,
                    "deviceScaleFactor": 1, "mobile": False}, session)
            box = json.loads(js("JSON.stringify(document.querySelector('#map')"
                                ".getBoundingClientRect())"))
            print("print %s: map %.0f x %.0f px in a %.0f px column" %
                  (name, box["width"], box["height"], px))
            check(box["width"] <= px + 0.5, "%s: the map is wider than the page" % name)
            # 150 mm (CSS max-height) plus its 1 px border above and below.
            check(box["height"] <= 150.0 / 25.4 * 96.0 + 2.5, "%s: the map is too high" % name)
            check(box["width"] > 0.5 * px, "%s: the map shrank to nothing" % name)

        # Print to PDF on A4: every page 595 x 842 pt (210 x 297 mm).
        pdf = base64.b64decode(dt.call("Page.printToPDF", {
            "paperWidth": 210 / 25.4, "paperHeight": 297 / 25.4, "preferCSSPageSize": False,
            "printBackground": True}, session)["data"])
        boxes = re.findall(rb"/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)\s*\]", pdf)
        pages = len(re.findall(rb"/Type\s*/Page[^s]", pdf))
        print("A4 PDF: %d bytes, %d pages, media boxes %s" %
              (len(pdf), pages, sorted(set(boxes))))
        check(pdf.startswith(b"%PDF") and pages >= 1, "no PDF")
        check(boxes and all(abs(float(w) - 595.3) < 1.5 and abs(float(h) - 841.9) < 1.5
                            for w, h in boxes), "pages are not A4: %s" % boxes)
        check(pages <= 6, "the demo report takes %d pages" % pages)
    finally:
        dt.close()
    print("PASS")


if __name__ == "__main__":
    main()
