#!/usr/bin/python3
"""Writes N synthetic bearings in lobfix's CSV format, for the process-level timings.

Invented scenario, benchmark data only (not a test reference): one transmitter in open
country, stations scattered 2-20 km around it at uniformly drawn azimuths. Each bearing is
the GeographicLib geodesic azimuth from the station to the transmitter (Karney 2013,
J. Geodesy 87:43-55) plus seeded Gaussian noise of sigma 2 deg, so the same N gives the
same file every time.

Usage: /usr/bin/python3 bench/make_bearings.py N OUT.csv [--seed S]
(Debian's python3-geographiclib.)
"""
import argparse
import datetime
import random
import sys

from geographiclib.geodesic import Geodesic

TRUTH = (46.03170, -103.61120)  # invented transmitter, WGS 84 (same as bench_solve.cpp)
SIGMA_DEG = 2.0
MIN_RANGE_M = 2000.0
MAX_RANGE_M = 20000.0
START = datetime.datetime(2026, 6, 14, 9, 0, 0, tzinfo=datetime.timezone.utc)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("n", type=int, help="number of bearings")
    parser.add_argument("out", help="output CSV path")
    parser.add_argument("--seed", type=int, default=20260614)
    args = parser.parse_args()
    if args.n < 2:
        parser.error("N must be at least 2")

    geod = Geodesic.WGS84
    rng = random.Random(args.seed)
    with open(args.out, "w", encoding="utf-8", newline="\n") as out:
        out.write("time,station,lat,lon,bearing_deg,sigma_deg\n")
        for i in range(args.n):
            station = geod.Direct(TRUTH[0], TRUTH[1], rng.uniform(0.0, 360.0),
                                  rng.uniform(MIN_RANGE_M, MAX_RANGE_M))
            lat, lon = station["lat2"], station["lon2"]
            azi = geod.Inverse(lat, lon, TRUTH[0], TRUTH[1])["azi1"]
            # Round to the written 0.01 deg first, so that no row says 360.00.
            bearing = round((azi + rng.gauss(0.0, SIGMA_DEG)) % 360.0, 2) % 360.0
            when = (START + datetime.timedelta(seconds=i)).strftime("%Y-%m-%dT%H:%M:%SZ")
            out.write(f"{when},stn-{i % 97},{lat:.6f},{lon:.6f},{bearing:.2f},{SIGMA_DEG:.1f}\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
