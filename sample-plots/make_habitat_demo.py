#!/usr/bin/env python3
"""Generates the invented Harrowmere Wood habitat survey from stated values, fixed seed.

Standard library only: writes covariate rasters as ASCII grids and plots, sightings and
paths as CSV tables (EPSG:32630) into a work folder; make_demo.sh turns them into
GeoTIFFs and a GeoPackage with GDAL's command-line tools.

The scenario: the reserve's southern compartment, 1000 m x 600 m, mapped on 10 m cells
for elevation, soil moisture and land cover, crossed by two footpaths. Three plots were
searched systematically for two species: sedge, whose intensity follows soil moisture
(log-linear, stated coefficients), and an orchid that is clustered (Thomas process) but
indifferent to habitat. Over the whole compartment, volunteers reported adders where they
happened to walk: the true adder pattern prefers heath, and what was reported is thinned by
distance to the nearest path.
"""
import json
import math
import random
import sys
from pathlib import Path

SEED = 41
EPSG = 32630
E0, N0 = 514000.0, 6286000.0  # south-west corner of the compartment
CELL = 10.0
COLUMNS, ROWS = 100, 60        # 1000 m x 600 m

def rect(x0, y0, w, h):
    return [(x0, y0), (x0, y0 + h), (x0 + w, y0 + h), (x0 + w, y0), (x0, y0)]

PLOTS = [
    ("fen", [[rect(100, 100, 300, 200)]]),                                     # 6.00 ha
    ("slope", [[rect(560, 280, 250, 250)]]),                                    # 6.25 ha
    ("scrub", [[[(430, 20), (420, 230), (640, 240), (700, 120), (620, 30), (430, 20)],
                rect(520, 100, 40, 40)]]),                                      # with a hole
]
COMPARTMENT = [[rect(0, 0, COLUMNS * CELL, ROWS * CELL)]]
PATHS = [
    ("ridgeway", [(0, 420), (300, 380), (600, 450), (1000, 400)]),
    ("boardwalk", [(380, 0), (420, 300), (470, 600)]),
]

LAND_COVER = {1: "woodland", 2: "heath", 3: "bog"}

# Per species: log intensity per ha = intercept + sum of slope x covariate.
SPECIES = {
    "sedge": {"pattern": "inhomogeneous Poisson: follows soil moisture",
              "log_intensity_per_ha": {"(intercept)": 0.4, "moisture": 0.07}},
    "orchid": {"pattern": "Thomas cluster process, indifferent to habitat: 2.5 parents/ha, "
               "mean 12 plants per parent, sigma 7 m",
               "parents_ha": 2.5, "offspring": 12.0, "sigma_m": 7.0,
               "intensity_ha": 30.0},
}
ADDER = {"pattern": "inhomogeneous Poisson preferring heath, reported with probability "
         "exp(-distance to the nearest path / 40 m)",
         "log_intensity_per_ha": {"(intercept)": math.log(10.0), "landcover=2 (heath)": math.log(2.5)},
         "reporting": {"path_distance_slope_per_m": -1.0 / 40.0, "reported_at_distance_0": 1.0}}


def elevation(x, y):
    return 150.0 + 0.06 * x + 0.04 * y + 6.0 * math.sin(x / 130.0) * math.cos(y / 110.0)


def smooth_moisture(x, y):
    bowl = math.exp(-((x - 250.0) ** 2 / (2 * 180.0 ** 2) + (y - 200.0) ** 2 / (2 * 150.0 ** 2)))
    return 15.0 + 35.0 * bowl + 6.0 * math.sin(x / 70.0) * math.cos(y / 90.0)


def grids(rng):
    """Cell values, row-major from the top (north) row, as GDAL stores them."""
    elev, moist, cover = [], [], []
    for r in range(ROWS):
        for c in range(COLUMNS):
            x, y = (c + 0.5) * CELL, (ROWS - r - 0.5) * CELL
            e = round(elevation(x, y), 1)
            m = round(max(2.0, smooth_moisture(x, y) + rng.gauss(0.0, 2.0)), 1)
            k = 3 if m > 40.0 else 2 if e > 185.0 else 1
            elev.append(e)
            moist.append(m)
            cover.append(k)
    return elev, moist, cover


def cell_index(x, y):
    c = int(math.floor(x / CELL))
    r = int(math.floor((ROWS * CELL - y) / CELL))
    return r * COLUMNS + c


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
    # Sum of Knuth draws in chunks, so large means do not underflow exp(-mean).
    k = 0
    while mean > 0.0:
        m = min(mean, 30.0)
        mean -= m
        limit, prod = math.exp(-m), rng.random()
        while prod > limit:
            k += 1
            prod *= rng.random()
    return k


def inhomogeneous(rng, polygons, intensity_m2, max_m2):
    """Lewis & Shedler (1979) thinning of a homogeneous pattern of intensity max_m2."""
    x0, y0, x1, y1 = bounds(polygons)
    pts = []
    for _ in range(poisson(rng, max_m2 * (x1 - x0) * (y1 - y0))):
        x, y = x0 + (x1 - x0) * rng.random(), y0 + (y1 - y0) * rng.random()
        if in_plot(x, y, polygons) and rng.random() < intensity_m2(x, y) / max_m2:
            pts.append((x, y))
    return pts


def thomas(rng, polygons, spec):
    s = spec["sigma_m"]
    x0, y0, x1, y1 = bounds(polygons)
    x0, y0, x1, y1 = x0 - 4 * s, y0 - 4 * s, x1 + 4 * s, y1 + 4 * s
    pts = []
    for _ in range(poisson(rng, spec["parents_ha"] / 1e4 * (x1 - x0) * (y1 - y0))):
        px, py = x0 + (x1 - x0) * rng.random(), y0 + (y1 - y0) * rng.random()
        for _ in range(poisson(rng, spec["offspring"])):
            x, y = px + rng.gauss(0, s), py + rng.gauss(0, s)
            if in_plot(x, y, polygons):
                pts.append((x, y))
    return pts


def segment_distance(x, y, a, b):
    (ax, ay), (bx, by) = a, b
    dx, dy = bx - ax, by - ay
    t = max(0.0, min(1.0, ((x - ax) * dx + (y - ay) * dy) / (dx * dx + dy * dy)))
    return math.hypot(x - ax - t * dx, y - ay - t * dy)


def path_distance(x, y):
    return min(segment_distance(x, y, a, b) for _, line in PATHS for a, b in zip(line, line[1:]))


def write_ascii_grid(path, values, decimals):
    with open(path, "w") as f:
        f.write(f"ncols {COLUMNS}\nnrows {ROWS}\nxllcorner {E0}\nyllcorner {N0}\ncellsize {CELL}\n")
        for r in range(ROWS):
            row = values[r * COLUMNS:(r + 1) * COLUMNS]
            f.write(" ".join(f"{v:.{decimals}f}" for v in row) + "\n")


def wkt(polygons):
    def ring_text(ring):
        return "(" + ", ".join(f"{E0 + x:.2f} {N0 + y:.2f}" for x, y in ring) + ")"
    parts = ["(" + ", ".join(ring_text(r) for r in p) + ")" for p in polygons]
    return "MULTIPOLYGON (" + ", ".join(parts) + ")"


def main(work):
    work = Path(work)
    work.mkdir(parents=True, exist_ok=True)
    rng = random.Random(SEED)
    elev, moist, cover = grids(rng)
    write_ascii_grid(work / "elevation.asc", elev, 1)
    write_ascii_grid(work / "moisture.asc", moist, 1)
    write_ascii_grid(work / "landcover.asc", cover, 0)

    sedge = SPECIES["sedge"]["log_intensity_per_ha"]
    def sedge_m2(x, y):
        return math.exp(sedge["(intercept)"] + sedge["moisture"] * moist[cell_index(x, y)]) / 1e4
    sedge_max = math.exp(sedge["(intercept)"] + sedge["moisture"] * max(moist)) / 1e4

    sightings, counts = [], {}
    for plot, polygons in PLOTS:
        for name in SPECIES:
            pts = inhomogeneous(rng, polygons, sedge_m2, sedge_max) if name == "sedge" else \
                thomas(rng, polygons, SPECIES[name])
            counts[f"{plot}/{name}"] = len(pts)
            sightings += [(E0 + x, N0 + y, name, plot) for x, y in pts]

    adder = ADDER["log_intensity_per_ha"]
    def adder_m2(x, y):
        heath = cover[cell_index(x, y)] == 2
        return math.exp(adder["(intercept)"] + (adder["landcover=2 (heath)"] if heath else 0.0)) / 1e4
    adder_max = math.exp(adder["(intercept)"] + adder["landcover=2 (heath)"]) / 1e4
    true_adders = inhomogeneous(rng, COMPARTMENT, adder_m2, adder_max)
    slope = ADDER["reporting"]["path_distance_slope_per_m"]
    reported = [(x, y) for x, y in true_adders if rng.random() < math.exp(slope * path_distance(x, y))]

    with open(work / "plots.csv", "w") as f:
        f.write("wkt,plot\n")
        for plot, polygons in PLOTS:
            f.write(f'"{wkt(polygons)}",{plot}\n')
    with open(work / "compartment.csv", "w") as f:
        f.write("wkt,plot\n")
        f.write(f'"{wkt(COMPARTMENT)}",south-compartment\n')
    with open(work / "sightings.csv", "w") as f:
        f.write("x,y,species,plot\n")
        for x, y, name, plot in sightings:
            f.write(f"{x:.2f},{y:.2f},{name},{plot}\n")
    with open(work / "opportunistic.csv", "w") as f:
        f.write("x,y,species\n")
        for x, y in reported:
            f.write(f"{E0 + x:.2f},{N0 + y:.2f},adder\n")
    with open(work / "paths.csv", "w") as f:
        f.write("wkt,name\n")
        for name, line in PATHS:
            f.write('"LINESTRING (' + ", ".join(f"{E0 + x:.2f} {N0 + y:.2f}" for x, y in line) + f')",{name}\n')

    truth = {
        "scenario": "Harrowmere Wood, southern compartment: habitat survey (fictional)",
        "seed": SEED,
        "crs": f"EPSG:{EPSG}",
        "rasters": {"cell_m": CELL, "columns": COLUMNS, "rows": ROWS,
                    "elevation": "m above sea level", "moisture": "soil moisture, % volume",
                    "landcover": LAND_COVER},
        "plot_species": SPECIES,
        "plot_sightings": counts,
        "opportunistic": {"species": "adder", **ADDER, "true_adders": len(true_adders),
                          "reported": len(reported),
                          "window": "the whole compartment, 60 ha (layer compartment)"},
    }
    with open(work / "habitat-generating-values.json", "w") as f:
        json.dump(truth, f, indent=2)
        f.write("\n")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "work")
