"""`lobfix live --area`: the search area joins the live outputs. After the bearings are
posted, the GeoJSON holds the regions and segments (kinds "region" and "segment",
docs/outputs.md), the GeoPackage has their layers, and the GeoTIFF's cells sum to 1
(read with GDAL's gdalinfo when it is installed, the reference reader of the format)."""

import json
import os
import shutil
import sqlite3
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import livetest as L  # noqa: E402


def main():
    directory = L.work_dir("live-area")
    geojson = os.path.join(directory, "area.geojson")
    gpkg = os.path.join(directory, "area.gpkg")
    tif = os.path.join(directory, "area.tif")
    live = L.Live(directory, ["--debounce-ms", "20", "--area", "--geojson", geojson,
                              "--gpkg", gpkg, "--geotiff", tif])
    bearings = L.invented_bearings(12, 11)
    code, reply = live.post("\n".join(L.line(b) for b in bearings) + "\n")
    L.check(code == 200, "reply %s %s" % (code, reply))
    live.wait_solved(60, 12)
    with open(geojson) as f:
        kinds = [feat["properties"]["kind"] for feat in json.load(f)["features"]]
    L.check(kinds.count("region") == 2, "regions in the GeoJSON: %s" % kinds.count("region"))
    L.check(kinds.count("segment") >= 1, "no segment in the GeoJSON")
    # A GeoPackage is an SQLite database (OGC 12-128r18): its layers are in gpkg_contents.
    with sqlite3.connect(gpkg) as db:
        layers = {row[0] for row in db.execute("SELECT table_name FROM gpkg_contents")}
        segments = db.execute("SELECT COUNT(*) FROM segments").fetchone()[0]
    L.check({"stations", "rays", "fixes", "ellipses", "regions", "segments"} <= layers,
            "GeoPackage layers: %s" % sorted(layers))
    L.check(segments == kinds.count("segment"), "segments %d vs %d" % (segments, kinds.count("segment")))
    if shutil.which("gdalinfo"):
        info = json.loads(subprocess.run(["gdalinfo", "-json", "-stats", tif], check=True,
                                         capture_output=True, text=True).stdout)
        aux = tif + ".aux.xml"  # gdalinfo -stats leaves its statistics beside the file
        if os.path.exists(aux):
            os.remove(aux)
        # The band's "mean" is rounded to 3 decimals in gdalinfo's JSON; its metadata item
        # STATISTICS_MEAN is not.
        mean = float(info["bands"][0]["metadata"][""]["STATISTICS_MEAN"])
        total = mean * info["size"][0] * info["size"][1]
        L.check(abs(total - 1.0) < 1e-3, "GeoTIFF cells sum to %g" % total)
    live.stop()
    print("live area: %d segments, layers %s" % (segments, sorted(layers)))


if __name__ == "__main__":
    main()
