#!/usr/bin/python3
"""Reference geodesics for datasets/replay_test.go.

Distance and initial azimuth on the WGS-84 ellipsoid from a radar site
(40.6016 N, 74.0597 W) to each AIS fix of vessel 367782880 in the shared
MarineCadastre sample (fixes in time order; only derived values are
written, the sample itself stays in shared/), computed with GeographicLib (Karney 2013,
"Algorithms for geodesics", J. Geodesy 87(1)); Debian package
python3-geographiclib 2.0-2.

Run from datasets/ with Debian's Python: /usr/bin/python3 testdata/gen_replay_geodesic.py > testdata/replay_geodesic.csv
"""
import csv
import sys

from geographiclib.geodesic import Geodesic

SITE = (40.6016, -74.0597)
SAMPLE = "../../shared/datasets/ais-marinecadastre-nyharbor/ais_2022-01-03_nyharbor_0000-0025Z.csv"

rows = []
with open(SAMPLE, newline="") as f:
    for r in csv.DictReader(f):
        if r["MMSI"] == "367782880":
            rows.append((r["BaseDateTime"], r["LAT"], r["LON"]))
rows.sort()
out = csv.writer(sys.stdout, lineterminator="\n")
out.writerow(["fix", "distance_m", "azimuth_deg"])
for i, (t, lat, lon) in enumerate(rows):
    g = Geodesic.WGS84.Inverse(SITE[0], SITE[1], float(lat), float(lon))
    out.writerow([i, repr(g["s12"]), repr(g["azi1"])])
