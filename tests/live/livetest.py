"""Helpers for the whole-process tests of `lobfix live` (tests/live): starting the program on
free loopback ports, talking to it over HTTP and UDP, invented bearings, and the journal's
record format (docs/live.md). Python 3 standard library only.

Every wait has a deadline; a test that cannot finish fails instead of hanging.
"""

import http.client
import json
import math
import os
import random
import signal
import socket
import subprocess
import sys
import tempfile
import time

LOBFIX = os.environ.get("LOBFIX_EXE", "lobfix")


def fail(message):
    print("FAIL: " + message, file=sys.stderr)
    sys.exit(1)


def check(condition, message):
    if not condition:
        fail(message)


def work_dir(name):
    base = os.environ.get("LOBFIX_LIVE_TMP", tempfile.gettempdir())
    os.makedirs(base, exist_ok=True)
    return tempfile.mkdtemp(prefix=name + "-", dir=base)


def wait_for(predicate, timeout_s, what):
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        value = predicate()
        if value:
            return value
        time.sleep(0.05)
    fail("timed out after %.0f s waiting for %s" % (timeout_s, what))
    return None


class Live:
    """One `lobfix live` process with its journal, ports and log."""

    def __init__(self, directory, extra=(), journal=None, bind="127.0.0.1", env=None, stdin=None,
                 http=True):
        self.directory = directory
        self.journal = journal or os.path.join(directory, "journal.jsonl")
        self.port_file = os.path.join(directory, "ports-%d.json" % random.randrange(1 << 30))
        self.log_path = os.path.join(directory, "live-%d.log" % random.randrange(1 << 30))
        self.bind = bind
        args = [LOBFIX, "live", "--journal", self.journal, "--bind", bind,
                "--port-file", self.port_file, "--status-interval-s", "0"]
        if http:
            args += ["--http-port", "0"]
        args += list(extra)
        self.log = open(self.log_path, "w")
        self.proc = subprocess.Popen(args, stdout=self.log, stderr=self.log, env=env,
                                     stdin=stdin if stdin is not None else subprocess.DEVNULL)
        ports = wait_for(self._ports, 20, "the port file of lobfix live")
        self.http_port = ports.get("http")
        self.udp_port = ports.get("udp")
        self.conn = None

    def _ports(self):
        if self.proc.poll() is not None:
            fail("lobfix live ended early (exit %s); log:\n%s" % (self.proc.returncode,
                                                                   self.log_text()))
        try:
            with open(self.port_file) as f:
                return json.load(f)
        except (OSError, ValueError):
            return None

    def log_text(self):
        self.log.flush()
        with open(self.log_path) as f:
            return f.read()

    def request(self, method, path, body=None, headers=None, timeout=10):
        """(status, parsed JSON or text). Reuses one keep-alive connection."""
        for attempt in range(2):
            if self.conn is None:
                self.conn = http.client.HTTPConnection(self.bind, self.http_port, timeout=timeout)
                self.conn.connect()
                # Headers and body go out as two writes: without this, Nagle's algorithm
                # holds the body until the server's delayed ACK (some 40 ms a request).
                self.conn.sock.setsockopt(socket.IPPROTO_TCP, socket.TCP_NODELAY, 1)
            try:
                self.conn.request(method, path, body=body, headers=headers or {})
                r = self.conn.getresponse()
                data = r.read()
                if r.getheader("Connection", "").lower() == "close":
                    self.conn.close()
                    self.conn = None
                text = data.decode("utf-8", "replace")
                try:
                    return r.status, json.loads(text)
                except ValueError:
                    return r.status, text
            except (http.client.HTTPException, OSError):
                self.conn = None
                if attempt == 1 or self.proc.poll() is not None:
                    raise
        return None

    def post(self, body, headers=None):
        if isinstance(body, str):
            body = body.encode("utf-8")
        return self.request("POST", "/bearings", body, headers)

    def status(self, headers=None):
        code, s = self.request("GET", "/status", headers=headers)
        check(code == 200, "GET /status gave %s" % code)
        return s

    def wait_solved(self, timeout_s=60, count=None):
        """Waits until the newest accepted bearing is in a solve; returns the status."""
        def done():
            s = self.status()
            if s["last_seq"] > 0 and s["last_seq_solved"] == s["last_seq"] and (
                    count is None or s["bearings_solved"] == count):
                return s
            return None
        return wait_for(done, timeout_s, "the solve to catch up")

    def udp(self, payload):
        s = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        try:
            s.sendto(payload if isinstance(payload, bytes) else payload.encode(), (self.bind, self.udp_port))
        finally:
            s.close()

    def kill(self):
        self.proc.send_signal(signal.SIGKILL)
        self.proc.wait(10)
        self.log.close()

    def stop(self, timeout_s=30):
        if self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
            try:
                self.proc.wait(timeout_s)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                fail("lobfix live did not stop within %d s of SIGTERM" % timeout_s)
        self.log.close()
        return self.proc.returncode


# ---- invented bearings -------------------------------------------------------------------

def azimuth_deg(lat1, lon1, lat2, lon2):
    """Initial great-circle azimuth (spherical formula; the noise added is far larger than
    the difference from the ellipsoid)."""
    p1, p2 = math.radians(lat1), math.radians(lat2)
    dl = math.radians(lon2 - lon1)
    y = math.sin(dl) * math.cos(p2)
    x = math.cos(p1) * math.sin(p2) - math.sin(p1) * math.cos(p2) * math.cos(dl)
    return math.degrees(math.atan2(y, x)) % 360.0


def invented_bearings(count, seed, signal="tag-3", lat0=-31.2, lon0=146.5, sigma_deg=2.0):
    """`count` bearings of one invented transmitter from stations 2 to 12 km around it,
    each unique (station and time), with Gaussian noise of sigma_deg."""
    rng = random.Random(seed)
    out = []
    t0 = 1780308000
    for i in range(count):
        r_km = rng.uniform(2.0, 12.0)
        a = rng.uniform(0.0, 2.0 * math.pi)
        lat = lat0 + (r_km / 111.2) * math.cos(a)
        lon = lon0 + (r_km / (111.2 * math.cos(math.radians(lat0)))) * math.sin(a)
        b = (azimuth_deg(lat, lon, lat0, lon0) + rng.gauss(0.0, sigma_deg)) % 360.0
        out.append({"time": t0 + i, "station": "team-%d" % (i % 17), "lat": round(lat, 6),
                    "lon": round(lon, 6), "bearing_deg": round(b, 3), "sigma_deg": sigma_deg,
                    "signal": signal})
    return out


def line(b):
    return json.dumps(b, separators=(",", ":"))


# ---- the journal (docs/live.md) -------------------------------------------------------------

def _crc32c_table():
    table = []
    for n in range(256):
        c = n
        for _ in range(8):
            c = (0x82F63B78 ^ (c >> 1)) if c & 1 else c >> 1
        table.append(c)
    return table


_TABLE = _crc32c_table()


def crc32c(data):
    crc = 0xFFFFFFFF
    for byte in data:
        crc = _TABLE[(crc ^ byte) & 0xFF] ^ (crc >> 8)
    return crc ^ 0xFFFFFFFF


def record_line(seq, payload):
    s = str(seq).encode()
    p = payload.encode() if isinstance(payload, str) else payload
    return s + b"\t" + ("%08x" % crc32c(s + b"\t" + p)).encode() + b"\t" + p


def read_journal(path):
    """[(seq, payload)] of a journal, checking every record's checksum and order."""
    records = []
    with open(path, "rb") as f:
        data = f.read()
    check(data == b"" or data.endswith(b"\n"), "the journal does not end with a record's LF")
    for n, raw in enumerate(data.split(b"\n")[:-1], start=1):
        seq_text, crc_text, payload = raw.split(b"\t", 2)
        expected = "%08x" % crc32c(seq_text + b"\t" + payload)
        check(crc_text.decode() == expected, "journal line %d: checksum %s, expected %s" %
              (n, crc_text.decode(), expected))
        check(int(seq_text) == n, "journal line %d holds sequence number %s" % (n, seq_text))
        records.append((n, payload.decode()))
    return records


def batch_fix(bearings_jsonl, extra=()):
    """The fixes of `lobfix solve FILE --json`: {signal: (lat, lon)}."""
    r = subprocess.run([LOBFIX, "solve", bearings_jsonl, "--json"] + list(extra),
                       capture_output=True, text=True, timeout=300)
    check(r.returncode == 0, "lobfix solve failed (%d): %s" % (r.returncode, r.stderr))
    return fixes_of(json.loads(r.stdout))


def fixes_of(summary):
    out = {}
    for f in summary["fixes"]:
        if f.get("status") == "ok":
            out[f.get("signal", "")] = (f["lat"], f["lon"])
    return out


def distance_m(a, b):
    """Small distances on the sphere of mean radius 6371008.8 m (IUGG)."""
    dlat = math.radians(b[0] - a[0])
    dlon = math.radians(b[1] - a[1]) * math.cos(math.radians((a[0] + b[0]) / 2))
    return 6371008.8 * math.hypot(dlat, dlon)
