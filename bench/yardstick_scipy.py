#!/usr/bin/python3
# =============================================================================================
#  COMPARISON YARDSTICK -- NOT PART OF LOBFIX.
#  A deliberately straightforward Python solution of the same problem, used only to put
#  lobfix's timings in proportion (docs/performance.md). lobfix never calls or ships it.
# =============================================================================================
"""Comparison yardstick (not part of lobfix): maximum-likelihood fix with SciPy.

Reads a bearing CSV in lobfix's format (columns time, station, lat, lon, bearing_deg,
sigma_deg; lines starting with '#' are comments) with the csv module, and minimises

    sum_i ( wrap(bearing_i - azi1_i(p)) / sigma_i )^2      (angles in radians)

over p = (lat, lon), azi1_i(p) being the azimuth at station i of the WGS 84 geodesic to p
(geographiclib Geodesic.WGS84.Inverse). This is the maximum-likelihood estimate under
Gaussian bearing errors (Torrieri 1984, IEEE Trans. AES 20(2):183-198). Solver:
scipy.optimize.least_squares with its defaults (trust-region reflective, 2-point
finite-difference Jacobian). Start: the centroid of the station positions.

Usage: /usr/bin/python3 bench/yardstick_scipy.py FILE.csv [--sigma-deg S]
(Debian's python3-scipy and python3-geographiclib.)
Prints the fix, the cost, the number of residual evaluations and the wall times.
"""
import argparse
import csv
import math
import sys
import time

import numpy as np
from geographiclib.geodesic import Geodesic
from scipy.optimize import least_squares


def read_bearings(path, default_sigma_deg):
    stations, bearings_rad, sigmas_rad = [], [], []
    with open(path, newline="", encoding="utf-8") as f:
        rows = csv.DictReader(line for line in f if line.strip() and not line.startswith("#"))
        for row in rows:
            sigma = row.get("sigma_deg") or default_sigma_deg
            if sigma is None:
                raise SystemExit(f"{path}: no sigma_deg column and no --sigma-deg")
            stations.append((float(row["lat"]), float(row["lon"])))
            bearings_rad.append(math.radians(float(row["bearing_deg"])))
            sigmas_rad.append(math.radians(float(sigma)))
    return stations, np.array(bearings_rad), np.array(sigmas_rad)


def main():
    parser = argparse.ArgumentParser(description="comparison yardstick, not part of lobfix")
    parser.add_argument("csv_file")
    parser.add_argument("--sigma-deg", type=float, default=None)
    args = parser.parse_args()

    t0 = time.perf_counter()
    stations, bearings_rad, sigmas_rad = read_bearings(args.csv_file, args.sigma_deg)
    geod = Geodesic.WGS84

    def residuals(p):
        lat, lon = p
        azi = np.array([geod.Inverse(s_lat, s_lon, lat, lon, Geodesic.AZIMUTH)["azi1"]
                        for s_lat, s_lon in stations])
        d = bearings_rad - np.radians(azi)
        wrapped = np.arctan2(np.sin(d), np.cos(d))  # wrap to (-pi, pi]
        return wrapped / sigmas_rad

    x0 = np.array([np.mean([s[0] for s in stations]), np.mean([s[1] for s in stations])])
    t1 = time.perf_counter()
    result = least_squares(residuals, x0)
    t2 = time.perf_counter()

    lat, lon = result.x
    print(f"yardstick (scipy, not lobfix): {len(stations)} bearings")
    print(f"fix lat {lat:.6f} lon {lon:.6f}  chi2 {2.0 * result.cost:.2f}  "
          f"status {result.status} ({result.message})")
    print(f"residual evaluations {result.nfev} (+ {2 * result.njev} for the Jacobian)")
    print(f"wall time: solve {t2 - t1:.3f} s, read {t1 - t0:.3f} s, total {t2 - t0:.3f} s")
    return 0 if result.success else 3


if __name__ == "__main__":
    sys.exit(main())
