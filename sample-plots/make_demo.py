#!/usr/bin/env python3
"""Generates the invented Harrowmere Wood demo survey from stated values, fixed seed.

Standard library only: writes plain CSV tables (plots as WKT, sightings as x/y in
EPSG:32630) into a work folder; make_demo.sh turns them into a GeoPackage, per-plot
Shapefiles and a GPS-style lon/lat CSV with GDAL's ogr2ogr.

Harrowmere Wood is a fictional upland reserve. Four plots were searched for four
species. The true patterns are simulated, then thinned by each species' detection
probability: what was "recorded" is the thinned pattern, as in the field.
"""
import json
import math
import random
import sys
from pathlib import Path

SEED = 23
EPSG = 32630           # WGS 84 / UTM zone 30N
E0, N0 = 512000.0, 6290000.0

# Plots: (id, list of polygons, each [outer ring, *holes]); rings as (x, y) offsets in m.
def rect(x0, y0, w, h):
    return [(x0, y0), (x0, y0 + h), (x0 + w, y0 + h), (x0 + w, y0), (x0, y0)]

PLOTS = [
    ("north", [[rect(0, 400, 100, 100)]]),                                   # 1.00 ha
    ("glade", [[rect(300, 400, 200, 100), rect(385, 435, 30, 30)]]),          # 1.91 ha, pond
    ("ridge", [[[(0, 0), (40, 130), (120, 150), (170, 90), (150, 10), (60, -20), (0, 0)]]]),
    ("burn", [[rect(400, 0, 60, 80)], [rect(480, 0, 60, 80)]]),               # 0.96 ha, 2 parts
]

# Species: true intensity per ha, pattern, detection probability and its standard error.
SPECIES = {
    "birch":    {"intensity_ha": 80.0, "pattern": "random (Poisson)", "p": 1.0, "se": 0.0},
    "hazel":    {"intensity_ha": 60.0, "pattern": "clustered (Thomas: 4 parents/ha, "
                 "15 stems per parent, sigma 6 m)", "p": 0.9, "se": 0.03,
                 "parents_ha": 4.0, "offspring": 15.0, "sigma_m": 6.0},
    "juniper":  {"intensity_ha": 30.0, "pattern": "random (Poisson)", "p": 0.75, "se": 0.05},
    "wood-ant": {"intensity_ha": 12.0, "pattern": "regular (sequential inhibition, "
                 "nests at least 15 m apart)", "p": 0.8, "se": 0.04, "min_distance_m": 15.0},
}

# Line transects across the estate around the plots: 10 parallel lines, 300 m apart.
TRANSECT_LINES = [(f"T{i + 1:02d}", -850.0 + 300.0 * i, -2400.0, -600.0) for i in range(10)]
STUDY_AREA = (-1000.0, -2500.0, 2000.0, -500.0)  # 3 km x 2 km = 6 km2
TRANSECT_SPECIES = {
    "hare": {"density_km2": 45.0, "detection": "half-normal", "sigma_m": 30.0, "b": None,
             "mean_cluster_size": 1.0, "simulated_to_m": 150.0},
    "roe-deer": {"density_km2": 10.0, "detection": "hazard-rate", "sigma_m": 45.0, "b": 2.5,
                 "mean_cluster_size": 2.2, "simulated_to_m": 250.0},
}

# Stray GPS waypoints recorded on the walk in, outside every plot (offsets in m).
STRAYS = [(250.0, 250.0, "birch"), (-60.0, 300.0, "juniper"), (600.0, 200.0, "hazel")]


def ring_area(ring):
    return 0.5 * sum(x1 * y2 - x2 * y1 for (x1, y1), (x2, y2) in zip(ring, ring[1:]))


def polygon_area(polygon):
    outer, *holes = polygon
    return abs(ring_area(outer)) - sum(abs(ring_area(h)) for h in holes)


def in_ring(x, y, ring):
    inside = False
    for (x1, y1), (x2, y2) in zip(ring, ring[1:]):
        if (y1 > y) != (y2 > y) and x < x1 + (y - y1) * (x2 - x1) / (y2 - y1):
            inside = not inside
    return inside


def in_plot(x, y, polygons):
    return any(in_ring(x, y, p[0]) and not any(in_ring(x, y, h) for h in p[1:]) for p in polygons)


def bounds(polygons):
    xs = [x for p in polygons for x, _ in p[0]]
    ys = [y for p in polygons for _, y in p[0]]
    return min(xs), min(ys), max(xs), max(ys)


def poisson(rng, mean):
    # Knuth's multiplication method; means here stay far below exp underflow.
    limit, k, prod = math.exp(-mean), 0, rng.random()
    while prod > limit:
        k += 1
        prod *= rng.random()
    return k


def uniform_points(rng, polygons, n):
    x0, y0, x1, y1 = bounds(polygons)
    pts = []
    while len(pts) < n:
        x, y = x0 + (x1 - x0) * rng.random(), y0 + (y1 - y0) * rng.random()
        if in_plot(x, y, polygons):
            pts.append((x, y))
    return pts


def simulate(rng, name, spec, polygons, area_m2):
    lam = spec["intensity_ha"] / 1e4
    if name == "hazel":
        s = spec["sigma_m"]
        x0, y0, x1, y1 = bounds(polygons)
        x0, y0, x1, y1 = x0 - 4 * s, y0 - 4 * s, x1 + 4 * s, y1 + 4 * s
        parents = poisson(rng, spec["parents_ha"] / 1e4 * (x1 - x0) * (y1 - y0))
        pts = []
        for _ in range(parents):
            px, py = x0 + (x1 - x0) * rng.random(), y0 + (y1 - y0) * rng.random()
            for _ in range(poisson(rng, spec["offspring"])):
                x, y = px + rng.gauss(0, s), py + rng.gauss(0, s)
                if in_plot(x, y, polygons):
                    pts.append((x, y))
        return pts
    if name == "wood-ant":
        target = round(lam * area_m2)
        pts, tries = [], 0
        d2 = spec["min_distance_m"] ** 2
        while len(pts) < target and tries < 100000:
            tries += 1
            x, y = uniform_points(rng, polygons, 1)[0]
            if all((x - a) ** 2 + (y - b) ** 2 >= d2 for a, b in pts):
                pts.append((x, y))
        return pts
    return uniform_points(rng, polygons, poisson(rng, lam * area_m2))


def detect_probability(spec, x):
    if spec["detection"] == "half-normal":
        return math.exp(-x * x / (2 * spec["sigma_m"] ** 2))
    return 1.0 - math.exp(-((x / spec["sigma_m"]) ** -spec["b"])) if x > 0 else 1.0


def simulate_transects(rng):
    """Animals (clusters) Poisson along each line within the simulated strip, kept with g(x)."""
    rows = []
    for name, spec in TRANSECT_SPECIES.items():
        w = spec["simulated_to_m"]
        for tid, x0, y0, y1 in TRANSECT_LINES:
            length = y1 - y0
            n = poisson(rng, spec["density_km2"] * 2 * w * length / 1e6)
            for _ in range(n):
                along = y0 + length * rng.random()
                offset = w * rng.random()
                side = 1 if rng.random() < 0.5 else -1
                size = 1 + poisson(rng, spec["mean_cluster_size"] - 1.0)
                if rng.random() < detect_probability(spec, offset):
                    rows.append((E0 + x0 + side * offset, N0 + along, name, tid, round(offset, 1), size))
    return rows


def wkt(polygons):
    def ring_text(ring):
        return "(" + ", ".join(f"{E0 + x:.2f} {N0 + y:.2f}" for x, y in ring) + ")"
    parts = ["(" + ", ".join(ring_text(r) for r in p) + ")" for p in polygons]
    return "MULTIPOLYGON (" + ", ".join(parts) + ")"


def main(work):
    work = Path(work)
    work.mkdir(parents=True, exist_ok=True)
    rng = random.Random(SEED)
    sightings, true_counts, areas = [], {}, {}
    for plot, polygons in PLOTS:
        area = sum(polygon_area(p) for p in polygons)
        areas[plot] = area / 1e4
        for name, spec in SPECIES.items():
            true = simulate(rng, name, spec, polygons, area)
            true_counts[(plot, name)] = len(true)
            for x, y in true:
                if rng.random() < spec["p"]:
                    sightings.append((E0 + x, N0 + y, name, plot))
    with open(work / "plots.csv", "w") as f:
        f.write("wkt,plot\n")
        for plot, polygons in PLOTS:
            f.write(f'"{wkt(polygons)}",{plot}\n')
    with open(work / "sightings.csv", "w") as f:
        f.write("x,y,species,plot\n")
        for x, y, name, plot in sightings:
            f.write(f"{x:.2f},{y:.2f},{name},{plot}\n")
    with open(work / "gps.csv", "w") as f:  # no plot column: assigned by point-in-polygon
        f.write("x,y,species\n")
        for x, y, name, _ in sightings:
            f.write(f"{x:.2f},{y:.2f},{name}\n")
        for dx, dy, name in STRAYS:
            f.write(f"{E0 + dx:.2f},{N0 + dy:.2f},{name}\n")
    transect_rows = simulate_transects(random.Random(SEED + 1))
    with open(work / "transect-lines.csv", "w") as f:
        f.write("wkt,transect\n")
        for tid, x0, y0, y1 in TRANSECT_LINES:
            f.write(f'"LINESTRING ({E0 + x0:.2f} {N0 + y0:.2f}, {E0 + x0:.2f} {N0 + y1:.2f})",{tid}\n')
    with open(work / "transect-sightings.csv", "w") as f:
        f.write("x,y,species,transect,distance,size\n")
        for x, y, name, tid, d, size in transect_rows:
            f.write(f"{x:.2f},{y:.2f},{name},{tid},{d},{size}\n")
    x0, y0, x1, y1 = STUDY_AREA
    with open(work / "study-area.csv", "w") as f:
        f.write("wkt,name\n")
        f.write(f'"POLYGON (({E0 + x0} {N0 + y0}, {E0 + x0} {N0 + y1}, {E0 + x1} {N0 + y1}, {E0 + x1} {N0 + y0}, {E0 + x0} {N0 + y0}))",estate\n')
    with open(work / "detection.csv", "w") as f:
        f.write("species,p,se\n")
        for name, spec in SPECIES.items():
            f.write(f"{name},{spec['p']},{spec['se']}\n")
    truth = {
        "scenario": "Harrowmere Wood, a fictional upland reserve: four plots, four species",
        "seed": SEED,
        "crs": f"EPSG:{EPSG}",
        "plot_areas_ha": areas,
        "species": SPECIES,
        "true_counts": {f"{p}/{s}": n for (p, s), n in true_counts.items()},
        "recorded_sightings": len(sightings),
        "stray_gps_waypoints_outside_plots": len(STRAYS),
        "transects": {
            "lines": len(TRANSECT_LINES),
            "line_length_km": (TRANSECT_LINES[0][3] - TRANSECT_LINES[0][2]) / 1000.0,
            "study_area_km2": (STUDY_AREA[2] - STUDY_AREA[0]) * (STUDY_AREA[3] - STUDY_AREA[1]) / 1e6,
            "species": TRANSECT_SPECIES,
            "detected_clusters": {name: sum(1 for r in transect_rows if r[2] == name) for name in TRANSECT_SPECIES},
        },
    }
    with open(work / "generating-values.json", "w") as f:
        json.dump(truth, f, indent=2)
        f.write("\n")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "work")
