#!/usr/bin/env python3
"""Convert the WMM2025 coefficients shipped as JSON by the npm package geomagnetism@0.2.0
(data/wmm-2025.json) into the NOAA coefficient-file text layout (WMM2025.COF).

Usage: convert_geomagnetism_json.py path/to/wmm-2025.json > WMM2025.COF

The JSON holds four flat arrays (main_field_coeff_g, main_field_coeff_h,
secular_var_coeff_g, secular_var_coeff_h) indexed by i = n (n + 1) / 2 + m, plus epoch,
name and start_date. Every coefficient is published with one decimal (nT, nT/yr); the script
checks that and writes each value with exactly one decimal, so nothing is rounded.
"""
import json
import sys


def one_decimal(value, what):
    text = "%.1f" % value
    if abs(float(text) - value) > 1e-9:
        sys.exit("%s = %r has more than one decimal" % (what, value))
    return text


def main():
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    with open(sys.argv[1], encoding="utf-8") as f:
        model = json.load(f)
    n_max = model["n_max"]
    if model["n_max_sec_var"] != n_max:
        sys.exit("secular variation degree differs from the main field degree")
    size = n_max * (n_max + 1) // 2 + n_max + 1
    keys = ("main_field_coeff_g", "main_field_coeff_h", "secular_var_coeff_g",
            "secular_var_coeff_h")
    for key in keys:
        if len(model[key]) != size:
            sys.exit("%s has %d entries, expected %d" % (key, len(model[key]), size))
    # The package's COF parser took start_date from the COF header's release date (it is
    # written as local midnight, hence the hours); only the calendar date is kept.
    year, month, day = model["start_date"][:10].split("-")
    name = model["name"]
    out = sys.stdout
    out.write("    %.1f            %s     %s/%s/%s\n" % (model["epoch"], name, month, day, year))
    for n in range(1, n_max + 1):
        for m in range(0, n + 1):
            i = n * (n + 1) // 2 + m
            fields = [one_decimal(model[key][i], "%s[%d]" % (key, i)) for key in keys]
            if m == 0 and (float(fields[1]) != 0.0 or float(fields[3]) != 0.0):
                sys.exit("h coefficient for m = 0 is not zero at n = %d" % n)
            out.write("%3d%3d%10s%10s%11s%11s\n" % (n, m, *fields))
    out.write("9" * 48 + "\n")
    out.write("9" * 48 + "\n")


if __name__ == "__main__":
    main()
