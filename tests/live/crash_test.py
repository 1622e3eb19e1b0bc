"""Crash safety of `lobfix live` (docs/live.md, "Journal").

5,000 invented bearings are posted over HTTP in batches of 1 to 20 while the process is
killed with SIGKILL at random moments, five times, and started again on the same journal.
After each restart the client sends again every batch it had no answer for. Then:
- every acknowledged bearing is in the journal exactly once, under the sequence number its
  acknowledgement gave, and every journal record is one of the bearings;
- each restart recovered at least every bearing acknowledged before it;
- the final live fix equals `lobfix solve` of the journal's bearings in journal order with
  the same options, to 1 mm.
"""

import json
import os
import random
import sys
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402

COUNT = 5000
KILLS = 5
SEED = 20260601


def main():
    directory = L.work_dir("live-crash")
    bearings = L.invented_bearings(COUNT, SEED)
    key_of = {json.dumps(b, sort_keys=True): i for i, b in enumerate(bearings)}
    rng = random.Random(SEED)
    batches = []
    i = 0
    while i < COUNT:
        n = rng.randint(1, 20)
        batches.append(list(range(i, min(COUNT, i + n))))
        i += n

    acked = {}  # bearing index -> sequence number
    live = L.Live(directory, ["--debounce-ms", "50"])
    kills = 0
    next_batch = 0
    killer = None
    # Kill points: five batches spread over the run; at each, SIGKILL lands a random 0 to
    # 10 ms later, in the middle of whatever the server is doing (reading, journaling,
    # answering, solving).
    kill_points = sorted(rng.sample(range(5, len(batches) - 5), KILLS))
    t_start = time.monotonic()
    while next_batch < len(batches):
        if kills < KILLS and killer is None and next_batch >= kill_points[kills]:
            killer = threading.Timer(rng.uniform(0.0, 0.01), live.kill)
            killer.start()
        batch = batches[next_batch]
        body = "".join(L.line(bearings[j]) + "\n" for j in batch)
        try:
            code, reply = live.post(body)
        except Exception:  # noqa: BLE001 - the process was killed under the request
            code, reply = None, None
        if code == 200:
            L.check(reply["accepted"] + reply["duplicates"] == len(batch),
                    "batch %d: reply %s" % (next_batch, reply))
            for r in reply["results"]:
                j = batch[r["line"] - 1]
                if j in acked:
                    L.check(acked[j] == r["seq"], "bearing %d acknowledged as seq %d and %d" %
                            (j, acked[j], r["seq"]))
                acked[j] = r["seq"]
            next_batch += 1
            continue
        L.check(code is None, "batch %d: HTTP %s %s" % (next_batch, code, reply))
        # No answer: the process is gone. Start it again; the batch is sent again.
        killer.join()
        killer = None
        kills += 1
        before = len(acked)
        live = L.Live(directory, ["--debounce-ms", "50"])
        log = live.log_text()
        L.check("recovered" in log, "restart %d: no recovery line in the log:\n%s" % (kills, log))
        recovered = int(log.split("recovered ")[1].split(" ")[0])
        L.check(recovered >= before, "restart %d recovered %d records, %d were acknowledged" %
                (kills, recovered, before))
        print("kill %d: %d bearings acknowledged, %d records recovered" % (kills, before, recovered))
    if killer is not None:
        killer.cancel()
        killer.join()
        if live.proc.poll() is not None:  # it fired after the last batch: start again
            kills += 1
            live = L.Live(directory, ["--debounce-ms", "50"])
    post_s = time.monotonic() - t_start
    L.check(kills >= KILLS, "only %d kills happened" % kills)
    L.check(len(acked) == COUNT, "%d of %d bearings acknowledged" % (len(acked), COUNT))

    status = live.wait_solved(120, COUNT)
    code, fix = live.request("GET", "/fix.json")
    L.check(code == 200, "GET /fix.json gave %s" % code)
    live_fixes = L.fixes_of(fix)
    L.check(live.stop() == 0, "lobfix live did not stop cleanly")

    records = L.read_journal(live.journal)
    L.check(len(records) == COUNT, "the journal holds %d records, %d bearings were sent" %
            (len(records), COUNT))
    seen = {}
    for seq, payload in records:
        j = key_of.get(json.dumps(json.loads(payload), sort_keys=True))
        L.check(j is not None, "journal record %d is not one of the bearings: %s" % (seq, payload))
        L.check(j not in seen, "bearing %d is in the journal twice (records %d and %d)" %
                (j, seen.get(j, 0), seq))
        seen[j] = seq
    for j, seq in acked.items():
        L.check(seen.get(j) == seq, "bearing %d acknowledged as seq %d, journal has %s" %
                (j, seq, seen.get(j)))

    batch_file = os.path.join(directory, "journal-bearings.jsonl")
    with open(batch_file, "w") as f:
        for _, payload in records:
            f.write(payload + "\n")
    batch = L.batch_fix(batch_file)
    L.check(set(batch) == set(live_fixes) and batch, "signals differ: live %s, batch %s" %
            (live_fixes, batch))
    for signal, pos in batch.items():
        d = L.distance_m(pos, live_fixes[signal])
        print("signal %s: live %.7f %.7f, batch %.7f %.7f, apart %.2e m" %
              (signal, live_fixes[signal][0], live_fixes[signal][1], pos[0], pos[1], d))
        L.check(d <= 1e-3, "live and batch fixes are %.4f m apart" % d)
    print("crash test: %d bearings, %d SIGKILLs, posting took %.1f s, %d solves in the last run, "
          "bearing-to-output latency last %.0f ms, max %.0f ms" %
          (COUNT, kills, post_s, status["solves"], status["bearing_to_output_ms"]["last"],
           status["bearing_to_output_ms"]["max"]))
    print("PASS")


if __name__ == "__main__":
    main()
