"""Malformed and hostile packets (docs/live.md, "Bad input"): a corpus of more than 30 kinds,
sent over HTTP, UDP and standard input to one `lobfix live` process. For each HTTP packet
the answer's status and rejection kinds are checked; at the end the process is still
running, every counter on /status equals the count expected from the corpus, the journal
holds exactly the good bearings, and the fix equals `lobfix solve` of them.
"""

import json
import os
import random
import socket
import subprocess
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402

MAX_BYTES = 4096
MAX_LINES = 20

T = '"time": "2026-06-01T10:00:00Z", '
S = '"station": "walker-9", '
P = '"lat": -31.25, "lon": 146.45, '


def obj(body):
    return "{" + body + "}"


def good(i):
    return L.line(L.invented_bearings(i + 1, 99)[i])


# (name, packet bytes, expected kinds of the rejections in order, good lines in it)
CORPUS = [
    ("plain text", b"hello world", ["bad_json"], 0),
    ("truncated object", b'{"time": "2026-06-01T10:00:00Z", "station"', ["bad_json"], 0),
    ("json array", b"[1, 2, 3]", ["not_object"], 0),
    ("json string", b'"a bearing"', ["not_object"], 0),
    ("json number", b"42", ["not_object"], 0),
    ("json null", b"null", ["not_object"], 0),
    ("json true", b"true", ["not_object"], 0),
    ("empty body", b"", ["empty"], 0),
    ("only comments", b"# nothing here\n\n   # still nothing\n", ["empty"], 0),
    ("lat out of range", obj(T + S + '"lat": 95, "lon": 1, "bearing_deg": 1, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("lon out of range", obj(T + S + '"lat": 5, "lon": 181, "bearing_deg": 1, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("bearing over 360", obj(T + S + P + '"bearing_deg": 361, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("negative sigma", obj(T + S + P + '"bearing_deg": 10, "sigma_deg": -1').encode(), ["bad_field"], 0),
    ("zero sigma", obj(T + S + P + '"bearing_deg": 10, "sigma_deg": 0').encode(), ["bad_field"], 0),
    ("sigma over 90", obj(T + S + P + '"bearing_deg": 10, "sigma_deg": 91').encode(), ["bad_field"], 0),
    ("bearing not a number", obj(T + S + P + '"bearing_deg": "abc", "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("bearing a boolean", obj(T + S + P + '"bearing_deg": true, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("station missing", obj(T + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("station a number", obj(T + '"station": 7, ' + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("time missing", obj(S + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("time without zone", obj('"time": "2026-06-01T10:00:00", ' + S + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("time month 13", obj('"time": "2026-13-01T10:00:00Z", ' + S + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("time an object", obj('"time": {"s": 1}, ' + S + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("time negative", obj('"time": -5, ' + S + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("time in milliseconds", obj('"time": 1780308000250, ' + S + P + '"bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("member twice", obj(T + S + P + '"lat": -31.2, "bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("nan as text", obj(T + S + P + '"bearing_deg": "nan", "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("lat without lon", obj(T + S + '"lat": -31.2, "bearing_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("incomplete phase readings", obj(T + S + P + '"phase_deg": 40, "phase_sigma_deg": 3').encode(), ["bad_field"], 0),
    ("unknown reference", obj(T + S + P + '"bearing_deg": 10, "sigma_deg": 1, "reference": "north"').encode(), ["bad_field"], 0),
    ("heading on a true bearing", obj(T + S + P + '"bearing_deg": 10, "sigma_deg": 1, "heading_deg": 5, "heading_sigma_deg": 1').encode(), ["bad_field"], 0),
    ("mirror without bearing", obj(T + S + P + '"bearing_alt_deg": 10, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("relative without heading", obj(T + S + P + '"bearing_deg": 10, "sigma_deg": 1, "reference": "relative"').encode(), ["not_usable"], 0),
    ("invalid UTF-8", b'{"time": "2026-06-01T10:00:00Z", "station": "\xff\xfe", "lat": 1}', ["bad_json"], 0),
    ("NUL bytes", b'{"time":\x00 1}\x00\x00', ["bad_json"], 0),
    ("deep nesting", b"[" * 2000 + b"]" * 2000, ["not_object"], 0),
    ("huge exponent", obj(T + S + P + '"bearing_deg": 1e999, "sigma_deg": 1').encode(), ["bad_field"], 0),
    ("random bytes", bytes(random.Random(5).randrange(256) for _ in range(700)), None, 0),
    ("over the size limit", (good(0) + " " * MAX_BYTES).encode(), ["too_large"], 0),
    ("too many lines", "".join(good(i) + "\n" for i in range(MAX_LINES + 1)).encode(), ["too_many_lines"], 0),
    ("good and bad mixed", (good(0) + "\n{oops\n" + good(1) + "\n[]\n").encode(), ["bad_json", "not_object"], 2),
    ("good batch with CRLF", (good(2) + "\r\n" + good(3) + "\r\n").encode(), [], 2),
    ("repeat of a good one", good(0).encode(), [], 0),
]


def main():
    directory = L.work_dir("live-malformed")
    live = L.Live(directory, ["--udp-port", "0", "--max-packet-bytes", str(MAX_BYTES),
                              "--max-lines", str(MAX_LINES), "--debounce-ms", "20"])
    expected = {k: 0 for k in ["too_large", "too_many_lines", "empty", "bad_json", "not_object",
                               "bad_field", "not_usable", "bad_token"]}
    accepted = 0
    duplicates = 0
    http_packets = 0
    kinds_seen = set()
    for name, packet, kinds, n_good in CORPUS:
        code, reply = live.post(packet)
        http_packets += 1
        L.check(live.proc.poll() is None, "lobfix live died on packet '%s'" % name)
        if kinds == ["too_large"]:
            L.check(code == 413, "%s: HTTP %s %s" % (name, code, reply))
            expected["too_large"] += 1
            continue
        L.check(isinstance(reply, dict) and "errors" in reply, "%s: HTTP %s %r" % (name, code, reply))
        got = [e["kind"] for e in reply["errors"]]
        if kinds is None:  # random bytes: whatever the kinds, every line answered
            kinds = got
            L.check(len(got) >= 1, "%s: nothing rejected: %s" % (name, reply))
        L.check(got == kinds, "%s: rejection kinds %s, expected %s (%s)" % (name, got, kinds, reply))
        for e in reply["errors"]:
            L.check(e["reason"].startswith("http 127.0.0.1:"),
                    "%s: reason does not name its source: %s" % (name, e["reason"]))
        L.check(code == (400 if kinds else 200), "%s: HTTP %s" % (name, code))
        L.check(reply["accepted"] == n_good, "%s: accepted %s, expected %d" % (name, reply["accepted"], n_good))
        accepted += reply["accepted"]
        duplicates += reply["duplicates"]
        for k in kinds:
            expected[k] += 1
            kinds_seen.add(name)
    L.check(duplicates == 1, "the repeat was not answered as a duplicate")

    # HTTP oddities that never reach the parser.
    code, _ = live.request("GET", "/../../etc/passwd")
    L.check(code in (400, 404), "path outside the endpoints gave %s" % code)
    code, _ = live.request("GET", "/journal.jsonl")
    L.check(code == 404, "the journal is served? %s" % code)
    code, _ = live.request("DELETE", "/bearings")
    L.check(code in (400, 404, 405), "DELETE gave %s" % code)
    # A body announced bigger than the limit, on a connection of its own.
    raw = socket.create_connection(("127.0.0.1", live.http_port), timeout=10)
    raw.sendall(b"POST /bearings HTTP/1.1\r\nHost: x\r\nContent-Length: 100000000\r\n\r\n" + b"x" * 1000)
    answer = raw.recv(4096)
    raw.close()
    L.check(b" 413 " in answer.split(b"\r\n")[0], "oversized Content-Length: %r" % answer[:80])
    expected["too_large"] += 1
    http_packets += 1

    # The same corpus over UDP (no answer: counted only). Datagrams over the limit too.
    udp_packets = 0
    for name, packet, kinds, n_good in CORPUS:
        if name == "repeat of a good one" or name == "good and bad mixed" or name == "good batch with CRLF":
            continue  # their good lines are already in: they would only be repeats
        live.udp(packet)
        udp_packets += 1
        if kinds is None:
            kinds = [None] * len(packet.split(b"\n"))
        for k in kinds:
            if k is not None:
                expected[k] += 1
    live.udp(b"x" * 20000)
    udp_packets += 1
    expected["too_large"] += 1

    def udp_done():
        s = live.status()
        return s if s["received"]["udp"] == udp_packets else None
    status = L.wait_for(udp_done, 20, "the UDP packets to be counted")
    # Random bytes' kinds over UDP are what they were over HTTP.
    rnd = [c for c in CORPUS if c[0] == "random bytes"][0]
    code, reply = live.post(rnd[1])
    http_packets += 1
    for e in reply["errors"]:
        expected[e["kind"]] += 2  # this post and the datagram
    status = live.status()

    L.check(status["received"]["http"] == http_packets,
            "http packets %s, expected %d" % (status["received"]["http"], http_packets))
    L.check(status["accepted"] == accepted, "accepted %s, expected %d" % (status["accepted"], accepted))
    L.check(status["duplicates"] == duplicates, "duplicates %s" % status["duplicates"])
    for k, n in expected.items():
        L.check(status["rejected"][k] == n, "rejected %s: %s, expected %d" %
                (k, status["rejected"][k], n))
    L.check(live.proc.poll() is None, "lobfix live is not running")

    # Standard input: a second process on its own journal, fed the corpus line by line.
    stdin_dir = os.path.join(directory, "stdin")
    os.makedirs(stdin_dir)
    feed = b"".join(p.replace(b"\n", b" ") + b"\n" for name, p, k, g in CORPUS
                    if name not in ("too many lines", "good and bad mixed", "good batch with CRLF"))
    feed += (good(5) + "\n").encode()
    r = subprocess.run([L.LOBFIX, "live", "--journal", os.path.join(stdin_dir, "j.jsonl"),
                        "--no-http", "--stdin", "--max-packet-bytes", str(MAX_BYTES),
                        "--status-interval-s", "0"], input=feed, capture_output=True, timeout=60)
    log = r.stderr.decode("utf-8", "replace")
    L.check(r.returncode == 0, "stdin run ended with %d:\n%s" % (r.returncode, log))
    L.check("standard input ended" in log, "stdin run: no end line:\n" + log)
    L.check("accepted 2," in log, "stdin run: two good lines expected accepted:\n" + log[-2000:])
    L.check(":3: line is a JSON array, not an object" in log and "stdin:" in log,
            "stdin messages do not name line 3:\n" + log[-3000:])

    code, fix = live.request("GET", "/fix.json")
    live_fix = L.fixes_of(fix)
    s = live.wait_solved(30)
    code, fix = live.request("GET", "/fix.json")
    live_fix = L.fixes_of(fix)
    L.check(live.stop() == 0, "lobfix live did not stop cleanly")
    records = L.read_journal(live.journal)
    L.check(len(records) == accepted, "journal holds %d records, %d accepted" % (len(records), accepted))
    batch_file = os.path.join(directory, "good.jsonl")
    with open(batch_file, "w") as f:
        for _, p in records:
            f.write(p + "\n")
    batch = L.batch_fix(batch_file)
    for sig, pos in batch.items():
        L.check(L.distance_m(pos, live_fix[sig]) <= 1e-3, "live and batch fixes differ")
    print("malformed test: %d kinds of packet, %d rejections counted as expected %s, "
          "%d bearings accepted, process alive throughout" %
          (len(CORPUS) + 4, sum(expected.values()), json.dumps(expected), accepted))
    print("PASS")


if __name__ == "__main__":
    main()
