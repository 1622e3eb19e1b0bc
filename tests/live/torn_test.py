"""A journal whose last record was half written (the machine stopped mid-append):
`lobfix live` recovers every complete record, cuts the torn one, says so in its log and on
/status, and goes on appending after the last good record (docs/live.md, "Recovery")."""

import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402


def main():
    directory = L.work_dir("live-torn")
    journal = os.path.join(directory, "journal.jsonl")
    bearings = L.invented_bearings(41, 7)
    complete = bearings[:40]
    # Forty complete records written by the journal's own format (livetest.record_line
    # follows docs/live.md, independently of the C++ code), then half of the 41st.
    with open(journal, "wb") as f:
        for seq, b in enumerate(complete, start=1):
            f.write(L.record_line(seq, L.line(b)) + b"\n")
        good_size = f.tell()
        torn = L.record_line(41, L.line(bearings[40]))
        f.write(torn[: len(torn) // 2])

    live = L.Live(directory, ["--debounce-ms", "20"], journal=journal)
    log = live.log_text()
    L.check("recovered 40 records" in log, "no 'recovered 40 records' in the log:\n" + log)
    L.check("cut a torn last record at line 41 (%d bytes" % (len(torn) // 2) in log,
            "the log does not name the torn record:\n" + log)
    status = live.wait_solved(30, 40)
    L.check(status["journal"]["records_recovered"] == 40, "status: %s" % status["journal"])
    L.check(status["journal"]["truncated_bytes"] == len(torn) // 2, "status: %s" % status["journal"])
    L.check(os.path.getsize(journal) == good_size, "the torn record was not cut from the file")

    # The torn bearing was never acknowledged; sent again, it becomes record 41.
    code, reply = live.post(L.line(bearings[40]))
    L.check(code == 200 and reply["results"] == [{"line": 1, "seq": 41}], "reply %s %s" % (code, reply))
    # A complete bearing sent again is a repeat with its first sequence number.
    code, reply = live.post(L.line(bearings[3]))
    L.check(code == 200 and reply["results"] == [{"line": 1, "seq": 4, "duplicate": True}],
            "reply %s %s" % (code, reply))
    L.check(live.stop() == 0, "lobfix live did not stop cleanly")
    records = L.read_journal(journal)
    L.check([p for _, p in records] == [L.line(b) for b in bearings], "journal records differ")
    print("torn test: 40 records recovered, %d torn bytes cut, record 41 appended" % (len(torn) // 2))
    print("PASS")


if __name__ == "__main__":
    main()
