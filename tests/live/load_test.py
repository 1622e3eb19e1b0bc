"""Load (docs/live.md, "Measured"): a second process posts 1,000 bearings a second for 30 s
(batches of 10, 100 a second, on one keep-alive connection) while this one watches /status.
Checked: every acknowledged bearing is in the journal, nothing is rejected or lost, the
last solve includes the last bearing, and the final fix equals `lobfix solve` of the
journal. Measured and printed (not enforced, by the project's rules): the rate reached,
acknowledgement times, and the latency from a bearing's acknowledgement to the first solve
whose outputs include it.

    python3 load_test.py                 the test (CTest label "slow")
    python3 load_test.py --client ...    the sending process (started by the test)
"""

import json
import os
import subprocess
import sys
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402

RATE = 1000  # bearings per second
SECONDS = 30
BATCH = 10


def client(port, out_path):
    live = type("Remote", (), {})()
    live.bind, live.http_port, live.conn, live.proc = "127.0.0.1", int(port), None, None
    request = L.Live.request.__get__(live)
    bearings = L.invented_bearings(RATE * SECONDS, 424242)
    acks = []
    t0 = time.monotonic()
    for k in range(0, len(bearings), BATCH):
        due = t0 + k / RATE
        now = time.monotonic()
        if due > now:
            time.sleep(due - now)
        body = "".join(L.line(b) + "\n" for b in bearings[k:k + BATCH]).encode()
        sent = time.monotonic()
        code, reply = request("POST", "/bearings", body, {})
        done = time.monotonic()
        if code != 200:
            print("client: batch %d: HTTP %s %s" % (k // BATCH, code, reply), file=sys.stderr)
            sys.exit(1)
        acks.append([sent, done, max(r["seq"] for r in reply["results"]), len(reply["results"])])
    with open(out_path, "w") as f:
        json.dump({"t0": t0, "end": time.monotonic(), "acks": acks}, f)


def percentile(values, p):
    values = sorted(values)
    return values[min(len(values) - 1, int(p / 100.0 * len(values)))]


def main():
    directory = L.work_dir("live-load")
    live = L.Live(directory, ["--debounce-ms", "100"])
    solved = []  # (time, last_seq_solved) whenever it changes
    stop = threading.Event()

    def watch():
        watcher = L.Live.__new__(L.Live)
        watcher.bind, watcher.http_port, watcher.conn, watcher.proc = "127.0.0.1", live.http_port, None, live.proc
        last = -1
        while not stop.is_set():
            code, s = watcher.request("GET", "/status")
            if code == 200 and s["last_seq_solved"] != last:
                last = s["last_seq_solved"]
                solved.append((time.monotonic(), last))
            time.sleep(0.02)

    watcher = threading.Thread(target=watch)
    watcher.start()
    out = os.path.join(directory, "client.json")
    r = subprocess.run([sys.executable, os.path.abspath(__file__), "--client", str(live.http_port), out],
                       timeout=SECONDS + 60)
    L.check(r.returncode == 0, "the sending process failed")
    status = live.wait_solved(60, RATE * SECONDS)
    time.sleep(0.1)
    stop.set()
    watcher.join(10)
    with open(out) as f:
        result = json.load(f)
    acks = result["acks"]
    total = sum(a[3] for a in acks)
    L.check(total == RATE * SECONDS, "%d bearings acknowledged" % total)
    L.check(status["accepted"] == total and status["rejected_total"] == 0,
            "status: accepted %d, rejected %d" % (status["accepted"], status["rejected_total"]))
    # Latency: from a batch's acknowledgement to the first solve seen that includes it.
    latencies = []
    j = 0
    for sent, done, seq, _ in acks:
        while j < len(solved) and solved[j][1] < seq:
            j += 1
        if j < len(solved):
            latencies.append(max(0.0, solved[j][0] - done))
    ack_ms = [1000.0 * (a[1] - a[0]) for a in acks]
    span = result["end"] - result["t0"]
    code, fix = live.request("GET", "/fix.json")
    live_fix = L.fixes_of(fix)
    L.check(live.stop() == 0, "lobfix live did not stop cleanly")
    records = L.read_journal(live.journal)
    L.check(len(records) == total, "journal holds %d of %d" % (len(records), total))
    batch_file = os.path.join(directory, "journal.bearings.jsonl")
    with open(batch_file, "w") as f:
        for _, p in records:
            f.write(p + "\n")
    batch = L.batch_fix(batch_file)
    for sig, pos in batch.items():
        d = L.distance_m(pos, live_fix[sig])
        L.check(d <= 1e-3, "live and batch fixes %.4f m apart" % d)
    print("load test: %d bearings in %.1f s (%.0f a second) in %d posts; acknowledgement ms "
          "p50 %.1f p99 %.1f max %.1f; %d solves; acknowledgement-to-solved-output s p50 %.2f "
          "p95 %.2f max %.2f; server-measured bearing-to-output ms mean %.0f max %.0f; last "
          "solve %.0f ms with %d bearings" %
          (total, span, total / span, len(acks), percentile(ack_ms, 50), percentile(ack_ms, 99),
           max(ack_ms), status["solves"], percentile(latencies, 50), percentile(latencies, 95),
           max(latencies), status["bearing_to_output_ms"]["mean"],
           status["bearing_to_output_ms"]["max"], status["last_solve_ms"], status["bearings_solved"]))
    print("PASS")


if __name__ == "__main__":
    if len(sys.argv) == 4 and sys.argv[1] == "--client":
        client(sys.argv[2], sys.argv[3])
    else:
        main()
