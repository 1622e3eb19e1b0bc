"""The shared token (docs/live.md, "Security"). 127.0.0.2 stands for "an address other than
the default": listening there without a token is refused at start; with one, requests with
a missing or wrong X-Lobfix-Token header get 401 and are counted, the right one is served.
The same over UDP, whose datagrams carry the token on their first line. On the default
127.0.0.1 no token is needed."""

import os
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402

TOKEN = "k3y-for-the-exercise-only-1234567890"


def main():
    directory = L.work_dir("live-token")
    journal = os.path.join(directory, "journal.jsonl")

    # No token on another address: refused before anything listens, exit 2 (usage).
    env = dict(os.environ)
    env.pop("LOBFIX_LIVE_TOKEN", None)
    r = subprocess.run([L.LOBFIX, "live", "--journal", journal, "--bind", "127.0.0.2",
                        "--http-port", "0"], capture_output=True, text=True, timeout=30, env=env)
    L.check(r.returncode == 2, "no token on 127.0.0.2: exit %d" % r.returncode)
    L.check("needs a shared token" in r.stderr, "message: " + r.stderr)
    # A token too short to be worth anything is refused too.
    short = os.path.join(directory, "short.token")
    with open(short, "w") as f:
        f.write("abc\n")
    r = subprocess.run([L.LOBFIX, "live", "--journal", journal, "--bind", "127.0.0.2",
                        "--http-port", "0", "--token-file", short], capture_output=True,
                       text=True, timeout=30, env=env)
    L.check(r.returncode == 2 and "at least 16" in r.stderr, "short token: %d %s" % (r.returncode, r.stderr))

    token_file = os.path.join(directory, "live.token")
    with open(token_file, "w") as f:
        f.write(TOKEN + "\n")
    live = L.Live(directory, ["--token-file", token_file, "--udp-port", "0", "--debounce-ms", "20"],
                  journal=journal, bind="127.0.0.2", env=env)
    b = L.invented_bearings(3, 11)
    right = {"X-Lobfix-Token": TOKEN}
    refused = 0
    for headers in ({}, {"X-Lobfix-Token": ""}, {"X-Lobfix-Token": TOKEN[:-1]},
                    {"X-Lobfix-Token": TOKEN + "x"}, {"X-Lobfix-Token": TOKEN.upper()},
                    {"Authorization": "Bearer " + TOKEN}):
        code, reply = live.post(L.line(b[0]), headers)
        L.check(code == 401, "POST with %s: HTTP %s %s" % (headers, code, reply))
        refused += 1
        code, _ = live.request("GET", "/status", headers=headers)
        L.check(code == 401, "GET /status with %s: HTTP %s" % (headers, code))
        refused += 1
    for path in ("/fix.json", "/fix.geojson"):
        code, _ = live.request("GET", path)
        L.check(code == 401, "GET %s without token: %s" % (path, code))
        refused += 1
    # The page holds no data: it loads without the token (its script sends the token,
    # which it reads from the address's #fragment).
    code, page = live.request("GET", "/")
    L.check(code == 200 and "lobfix live" in page, "page: %s" % code)

    code, reply = live.post(L.line(b[0]), right)
    L.check(code == 200 and reply["accepted"] == 1, "right token: %s %s" % (code, reply))

    # UDP: first line "token VALUE".
    live.udp(L.line(b[1]))                                        # no token line
    live.udp("token " + TOKEN[:-1] + "\n" + L.line(b[1]))          # wrong
    live.udp("token " + TOKEN + "\n" + L.line(b[2]))               # right
    refused += 2

    def counted():
        s = live.status(right)
        return s if s["received"]["udp"] == 3 and s["bearings"] == 2 else None
    s = L.wait_for(counted, 20, "the datagrams to be counted")
    L.check(s["rejected"]["bad_token"] == refused, "bad_token %d, expected %d" %
            (s["rejected"]["bad_token"], refused))
    L.check(s["accepted"] == 2, "accepted %d" % s["accepted"])
    log = live.log_text()
    L.check("refused (bad_token)" in log and TOKEN not in log, "the log must count, never show, tokens")
    L.check(live.stop() == 0, "did not stop cleanly")
    records = L.read_journal(journal)
    L.check([p for _, p in records] == [L.line(b[0]), L.line(b[2])], "journal: %s" % records)

    # The default loopback address needs no token.
    live = L.Live(directory, ["--debounce-ms", "20"], journal=os.path.join(directory, "j2.jsonl"), env=env)
    code, reply = live.post(L.line(b[0]))
    L.check(code == 200, "127.0.0.1 without token: %s %s" % (code, reply))
    L.check(live.stop() == 0, "did not stop cleanly")
    print("token test: %d refusals counted, right token accepted over HTTP and UDP" % refused)
    print("PASS")


if __name__ == "__main__":
    main()
