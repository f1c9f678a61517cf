#!/usr/bin/env python3
"""Power of stipple's CSR verdict for small groups: the share of clustered patterns
(Thomas process, Thomas 1949, in a 100 m square) called `clustered` at alpha = 0.05 with
199 simulations, for n sightings: strong clustering (2 parents, offspring displaced
N(0, 4 m) in each axis) and moderate clustering (4 parents, N(0, 8 m)). Supports the
`too few to tell` threshold in README ("Randomness methods").

    python3 bench/small_sample_power.py build/stipple [patterns-per-n]
"""
import json
import os
import random
import subprocess
import sys
import tempfile

stipple = sys.argv[1]
reps = int(sys.argv[2]) if len(sys.argv) > 2 else 100
rng = random.Random(20261202)
work = tempfile.mkdtemp()
plots = os.path.join(work, "plot.geojson")
with open(plots, "w") as f:
    f.write('{"type":"FeatureCollection","crs":{"type":"name","properties":{"name":"urn:ogc:def:crs:EPSG::32630"}},'
            '"features":[{"type":"Feature","properties":{"plot":"P"},"geometry":{"type":"Polygon","coordinates":'
            '[[[0,0],[100,0],[100,100],[0,100],[0,0]]]}}]}')


def thomas(n, parents_n, sigma):
    parents = [(rng.uniform(10, 90), rng.uniform(10, 90)) for _ in range(parents_n)]
    points = []
    while len(points) < n:
        px, py = rng.choice(parents)
        x, y = px + rng.gauss(0, sigma), py + rng.gauss(0, sigma)
        if 0 < x < 100 and 0 < y < 100:
            points.append((x, y))
    return points


print("n   strong  moderate  (share called clustered; %d patterns each)" % reps)
for n in (4, 6, 8, 10, 15, 20, 30):
    row = []
    for parents_n, sigma in ((2, 4.0), (4, 8.0)):
        hits = 0
        for r in range(reps):
            csv = os.path.join(work, "s.csv")
            with open(csv, "w") as f:
                f.write("x,y,species\n" + "".join("%.3f,%.3f,a\n" % p for p in thomas(n, parents_n, sigma)))
            out = subprocess.run([stipple, "randomness", csv, "--plots", plots, "--assume-crs", "EPSG:32630",
                                  "--simulations", "199", "--seed", str(r), "--json", "-"],
                                 capture_output=True, text=True, check=True).stdout
            groups = [g for g in json.loads(out)["results"] if g["species"] is None]
            hits += groups[0]["verdict"] == "clustered"
        row.append(hits / reps)
    print("%-3d %7.2f %9.2f" % (n, row[0], row[1]), flush=True)
