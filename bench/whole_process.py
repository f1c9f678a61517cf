#!/usr/bin/python3
"""Whole-process benchmark of stipple: the commands a user types, timed with their peak memory.

Generates every data set with a fixed seed (cached in the work folder), runs each command
several times under GNU time and prints the median wall time, the peak resident memory and
bytes per sighting, beside the target the project holds itself to. The Clark-Evans target
is measured against a reference run in the same script: the same GeoPackage read with GDAL's
Python bindings (feature by feature) and the mean nearest-neighbour distance from SciPy's
cKDTree (k = 2). Then growth curves (10^3 ... 10^7 points) for density, Clark-Evans and the
full randomness run, and 1 against 2 threads.

Needs Debian's python3-gdal, python3-scipy, python3-numpy and time (scripts/install-deps.sh)
and gdal-bin (ogr2ogr) to build the large GeoPackages.

Usage:
  /usr/bin/python3 bench/whole_process.py [--stipple build/stipple] [--work DIR] [--runs 3]
                                 [--only targets|growth|threads] [--max-n 10000000] [--smoke]
--smoke runs every step on tiny data sets once (the test suite does this to keep the script
working); its figures mean nothing.
"""
import argparse
import csv
import json
import math
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

try:
    import numpy as np
except ImportError:  # the test suite reports the script skipped (CTest SKIP_RETURN_CODE)
    sys.exit(print("needs Debian's python3-numpy, python3-gdal and python3-scipy (scripts/install-deps.sh)") or 77)

EPSG = 32633  # WGS 84 / UTM zone 33N: the invented Kettlemoor pastures
E0, N0 = 420000.0, 5710000.0
SEED = 20261202


# ----------------------------------------------------------------------------------------
# Data sets


def pasture_ring(vertices=96, radius_x=620.0, radius_y=480.0):
    """An irregular, star-shaped pasture outline (about 0.93 km2), closed ring, metres."""
    rng = np.random.default_rng(SEED)
    angles = np.linspace(0.0, 2.0 * math.pi, vertices, endpoint=False)
    wobble = 1.0 + 0.06 * np.sin(3 * angles + 0.4) + 0.04 * rng.uniform(-1, 1, vertices)
    xs = E0 + radius_x * wobble * np.cos(angles)
    ys = N0 + radius_y * wobble * np.sin(angles)
    ring = list(zip(xs.tolist(), ys.tolist()))
    return ring + [ring[0]]


def inside(ring, x, y):
    """Even-odd point-in-polygon of arrays x, y against one closed ring."""
    result = np.zeros(x.shape, dtype=bool)
    for (x1, y1), (x2, y2) in zip(ring[:-1], ring[1:]):
        crosses = (y1 > y) != (y2 > y)
        with np.errstate(divide="ignore", invalid="ignore"):
            xc = x1 + (y - y1) * (x2 - x1) / (y2 - y1)
        result ^= crosses & (x < xc)
    return result


def uniform_in(ring, n, rng):
    xs = np.array([p[0] for p in ring])
    ys = np.array([p[1] for p in ring])
    out_x, out_y = [], []
    have = 0
    while have < n:
        m = int((n - have) * 1.4) + 1000
        x = rng.uniform(xs.min(), xs.max(), m)
        y = rng.uniform(ys.min(), ys.max(), m)
        keep = inside(ring, x, y)
        out_x.append(x[keep])
        out_y.append(y[keep])
        have += int(keep.sum())
    return np.concatenate(out_x)[:n], np.concatenate(out_y)[:n]


def wkt_polygon(ring):
    return "POLYGON ((" + ", ".join(f"{x:.3f} {y:.3f}" for x, y in ring) + "))"


def ogr2ogr(csv_path, gpkg, layer, geometry, append=False):
    args = ["ogr2ogr", "-f", "GPKG", str(gpkg), str(csv_path), "-nln", layer, "-a_srs", f"EPSG:{EPSG}",
            "-gt", "65536", "-lco", "SPATIAL_INDEX=NO"]
    if geometry == "wkt":
        args += ["-oo", "GEOM_POSSIBLE_NAMES=wkt", "-oo", "KEEP_GEOM_COLUMNS=NO"]
    else:
        args += ["-oo", "X_POSSIBLE_NAMES=x", "-oo", "Y_POSSIBLE_NAMES=y", "-oo", "KEEP_GEOM_COLUMNS=NO"]
    if append:
        args += ["-update"]
    subprocess.run(args, check=True, stdout=subprocess.DEVNULL)


def write_points_csv(path, x, y, species):
    """x, y arrays and species: array of names (or one name)."""
    with open(path, "w", newline="") as f:
        f.write("x,y,species\n")
        step = 1_000_000
        for start in range(0, len(x), step):
            sx = x[start:start + step]
            sy = y[start:start + step]
            sp = species[start:start + step] if not isinstance(species, str) else [species] * len(sx)
            f.write("".join(f"{a:.3f},{b:.3f},{s}\n" for a, b, s in zip(sx, sy, sp)))


def write_plots_csv(path, plots):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["wkt", "plot"])
        for plot_id, ring in plots:
            w.writerow([wkt_polygon(ring), plot_id])


def square_ring(side=1000.0):
    return [(E0, N0), (E0, N0 + side), (E0 + side, N0 + side), (E0 + side, N0), (E0, N0)]


def write_survey(gpkg, plots, points_layer, x, y, species):
    """Writes plots (layer 'plots') and sightings (layer `points_layer`) into the GeoPackage
    `gpkg` through CSV and ogr2ogr; the file appears only once complete."""
    tmp = gpkg.with_suffix(".tmp")
    tmp.mkdir(exist_ok=True)
    write_plots_csv(tmp / "plots.csv", plots)
    write_points_csv(tmp / "points.csv", x, y, species)
    partial = gpkg.with_suffix(".partial.gpkg")
    partial.unlink(missing_ok=True)
    ogr2ogr(tmp / "plots.csv", partial, "plots", "wkt")
    ogr2ogr(tmp / "points.csv", partial, points_layer, "xy", append=True)
    for p in tmp.iterdir():
        p.unlink()
    tmp.rmdir()
    partial.rename(gpkg)
    return gpkg


def pasture_survey(work, n, name=None, square=False):
    """One irregular pasture (or a 1 km2 square) with n ant mounds (one species), uniform:
    sightings + plots."""
    name = name or (f"square-{n}" if square else f"pasture-{n}")
    gpkg = work / f"{name}.gpkg"
    if gpkg.exists():
        return gpkg
    rng = np.random.default_rng([SEED, n])
    ring = square_ring() if square else pasture_ring()
    x, y = uniform_in(ring, n, rng)
    return write_survey(gpkg, [("pasture", ring)], "mounds", x, y, "yellow-meadow-ant")


SPECIES5 = ["heath-spotted-orchid", "bog-asphodel", "cross-leaved-heath", "round-leaved-sundew", "cotton-grass"]


def many_plots_survey(work, n_plots, n_points):
    """n_plots square plots of 50 m x 50 m on a grid (10 m apart), n_points sightings of five
    species spread evenly over the plots, assigned by location."""
    name = f"plots-{n_plots}-{n_points}"
    gpkg = work / f"{name}.gpkg"
    if gpkg.exists():
        return gpkg
    rng = np.random.default_rng([SEED, n_plots, n_points])
    side, gap = 50.0, 10.0
    columns = int(math.ceil(math.sqrt(n_plots)))
    plots = []
    for i in range(n_plots):
        x0 = E0 + (i % columns) * (side + gap)
        y0 = N0 + (i // columns) * (side + gap)
        plots.append((f"P{i + 1:04d}", [(x0, y0), (x0, y0 + side), (x0 + side, y0 + side), (x0 + side, y0), (x0, y0)]))
    which = rng.integers(0, n_plots, n_points)
    x0 = np.array([p[1][0][0] for p in plots])[which]
    y0 = np.array([p[1][0][1] for p in plots])[which]
    x = x0 + rng.uniform(0.0, side, n_points)
    y = y0 + rng.uniform(0.0, side, n_points)
    species = np.array(SPECIES5)[rng.integers(0, len(SPECIES5), n_points)]
    return write_survey(gpkg, plots, "sightings", x, y, species)


def season_folder(work, n_files, n_points):
    """n_files plot files, each one 1 ha plot (100 m x 100 m) with n_points sightings of two
    species (one random, one clustered), as a field season's GeoPackages."""
    from osgeo import ogr, osr

    folder = work / f"season-{n_files}-{n_points}"
    if (folder / ".complete").exists():
        return folder
    folder.mkdir(exist_ok=True)
    srs = osr.SpatialReference()
    srs.ImportFromEPSG(EPSG)
    driver = ogr.GetDriverByName("GPKG")
    for f in range(n_files):
        rng = np.random.default_rng([SEED, f])
        path = folder / f"plot-{f + 1:04d}.gpkg"
        if path.exists():
            path.unlink()
        ds = driver.CreateDataSource(str(path))
        x0 = E0 + (f % 40) * 150.0
        y0 = N0 + (f // 40) * 150.0
        plots = ds.CreateLayer("plots", srs, ogr.wkbPolygon)
        plots.CreateField(ogr.FieldDefn("plot", ogr.OFTString))
        feature = ogr.Feature(plots.GetLayerDefn())
        feature.SetField("plot", f"S{f + 1:04d}")
        feature.SetGeometry(ogr.CreateGeometryFromWkt(
            wkt_polygon([(x0, y0), (x0, y0 + 100), (x0 + 100, y0 + 100), (x0 + 100, y0), (x0, y0)])))
        plots.CreateFeature(feature)
        layer = ds.CreateLayer("sightings", srs, ogr.wkbPoint)
        layer.CreateField(ogr.FieldDefn("species", ogr.OFTString))
        half = n_points // 2
        xs = list(x0 + rng.uniform(0, 100, half))
        ys = list(y0 + rng.uniform(0, 100, half))
        names = ["field-vole"] * half
        parents = rng.uniform(10, 90, (max(1, (n_points - half) // 20), 2))
        while len(xs) < n_points:
            px, py = parents[rng.integers(0, len(parents))]
            cx, cy = px + rng.normal(0, 4), py + rng.normal(0, 4)
            if 0 <= cx <= 100 and 0 <= cy <= 100:
                xs.append(x0 + cx)
                ys.append(y0 + cy)
                names.append("common-shrew")
        layer.StartTransaction()
        for x, y, s in zip(xs, ys, names):
            feature = ogr.Feature(layer.GetLayerDefn())
            feature.SetField("species", s)
            point = ogr.Geometry(ogr.wkbPoint)
            point.AddPoint_2D(float(x), float(y))
            feature.SetGeometry(point)
            layer.CreateFeature(feature)
        layer.CommitTransaction()
        ds = None
    (folder / ".complete").write_text("")
    return folder


# ----------------------------------------------------------------------------------------
# Measuring


def measure(command, runs, label):
    """Median wall seconds and the largest peak RSS (MB) over `runs` runs of `command`."""
    times, peaks = [], []
    for _ in range(runs):
        with tempfile.NamedTemporaryFile("r", suffix=".time") as t:
            proc = subprocess.run(["/usr/bin/time", "-f", "%e %M", "-o", t.name] + command,
                                  stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
            if proc.returncode != 0:
                sys.exit(f"{label}: exit {proc.returncode}: {' '.join(command)}\n{proc.stderr[-2000:]}")
            seconds, kb = t.read().split()[-2:]
        times.append(float(seconds))
        peaks.append(int(kb) / 1024.0)
    return statistics.median(times), max(peaks)


REFERENCE = r"""
import sys
from osgeo import ogr
from scipy.spatial import cKDTree
try:
    import numpy as np
except ImportError:  # the test suite reports the script skipped (CTest SKIP_RETURN_CODE)
    sys.exit(print("needs Debian's python3-numpy, python3-gdal and python3-scipy (scripts/install-deps.sh)") or 77)
ds = ogr.Open(sys.argv[1])
layer = ds.GetLayerByName(sys.argv[2])
xy = np.empty((layer.GetFeatureCount(), 2))
for i, feature in enumerate(layer):
    g = feature.GetGeometryRef()
    xy[i] = (g.GetX(), g.GetY())
distances, _ = cKDTree(xy).query(xy, k=2)
print(distances[:, 1].mean())
"""


class Table:
    def __init__(self):
        self.rows = []

    baseline_mb = None  # peak of the same kind of run on 1,000 points: libraries, drivers, PROJ

    def add(self, what, seconds, peak_mb, n=None, target=None, verdict=None):
        per_point = f"{peak_mb * 1024 * 1024 / n:.0f}" if n else ""
        marginal = ""
        if n and self.baseline_mb is not None and n >= 100_000:
            marginal = f"{(peak_mb - self.baseline_mb) * 1024 * 1024 / n:.0f}"
        self.rows.append((what, f"{seconds:.2f}", f"{peak_mb:.0f}", per_point, marginal, target or "", verdict or ""))
        print(f"  {what}: {seconds:.2f} s, {peak_mb:.0f} MB" + (f", {per_point} B/sighting" if n else "") +
              (f" ({marginal} above the fixed {self.baseline_mb:.0f} MB)" if marginal else "") +
              (f"  [{target}: {verdict}]" if target else ""), flush=True)

    def markdown(self):
        out = ["| run | median s | peak MB | bytes/sighting | bytes/sighting above the fixed part | target | met |",
               "|---|---|---|---|---|---|---|"]
        out += ["| " + " | ".join(r) + " |" for r in self.rows]
        return "\n".join(out)


def main():
    here = Path(__file__).resolve().parent.parent
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--stipple", default=str(here / "build" / "stipple"))
    ap.add_argument("--work", default=str(here / "build-bench-data"))
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--only", choices=["targets", "growth", "threads"], action="append")
    ap.add_argument("--max-n", type=int, default=10_000_000)
    ap.add_argument("--smoke", action="store_true")
    ap.add_argument("--json", help="also write the figures as JSON to this file")
    args = ap.parse_args()
    work = Path(args.work)
    work.mkdir(parents=True, exist_ok=True)
    stipple = args.stipple
    runs = 1 if args.smoke else args.runs
    parts = set(args.only or ["targets", "growth", "threads"])
    big = 1000 if args.smoke else 1_000_000
    mid = 300 if args.smoke else 10_000
    huge = 2000 if args.smoke else 10_000_000
    plots = 10 if args.smoke else 1000
    files = 5 if args.smoke else 1000
    sims = "19" if args.smoke else "999"
    batch_sims = "19" if args.smoke else "199"
    out = work / "out"
    table = Table()
    figures = {}

    small = pasture_survey(work, 1000)
    base = [str(small), "--layer", "mounds", "--plots", str(small), "--plots-layer", "plots"]
    table.baseline_mb = measure([stipple, "randomness"] + base + ["--only", "clark-evans"], 1, "baseline")[1]
    print(f"fixed part of a run (1,000 points): {table.baseline_mb:.0f} MB", flush=True)

    if "targets" in parts:
        print("targets (whole process, median of %d runs)" % runs, flush=True)
        mounds = pasture_survey(work, big)
        ref_s, ref_mb = measure([sys.executable, "-c", REFERENCE, str(mounds), "mounds"], runs, "reference")
        table.add(f"GDAL-Python + cKDTree: mean nearest-neighbour distance, {big:,} points", ref_s, ref_mb, big)
        ce_s, ce_mb = measure([stipple, "randomness", str(mounds), "--layer", "mounds", "--plots", str(mounds),
                               "--plots-layer", "plots", "--only", "clark-evans", "--json", str(work / "ce.json")],
                              runs, "clark-evans")
        ratio = ce_s / ref_s
        table.add(f"stipple randomness --only clark-evans, {big:,} points", ce_s, ce_mb, big,
                  f"<= 0.5 x reference (ratio {ratio:.2f})", "yes" if ratio <= 0.5 else "NO")
        marginal = (ce_mb - table.baseline_mb) * 1024 * 1024 / big
        table.add(f"  peak memory at {big:,} points", ce_s, ce_mb, big, "<= 100 B/sighting",
                  "yes" if ce_mb * 1024 * 1024 / big <= 100 else ("above the fixed part only" if marginal <= 100
                                                                  else "NO"))
        figures["clark_evans"] = {"n": big, "seconds": ce_s, "peak_mb": ce_mb, "reference_seconds": ref_s,
                                  "reference_peak_mb": ref_mb, "ratio": ratio}

        figures["full_randomness"] = {}
        for square in (True, False):
            ten_k = pasture_survey(work, mid, square=square)
            full_s, full_mb = measure([stipple, "randomness", str(ten_k), "--layer", "mounds", "--plots", str(ten_k),
                                       "--plots-layer", "plots", "--simulations", sims, "--threads", "2"],
                                      runs, "full randomness")
            where = "1 km2 square" if square else "irregular pasture"
            table.add(f"stipple randomness (all tests, 999 simulations, 2 threads), {mid:,} points, {where}", full_s,
                      full_mb, mid, "<= 5 s", "yes" if full_s <= 5 else "NO")
            figures["full_randomness"][where] = {"n": mid, "seconds": full_s, "peak_mb": full_mb}

        dense = many_plots_survey(work, plots, huge)
        den_s, den_mb = measure([stipple, "density", str(dense), "--layer", "sightings", "--plots", str(dense),
                                 "--plots-layer", "plots", "--json", str(work / "density.json")], runs, "density")
        table.add(f"stipple density, {huge:,} sightings over {plots:,} plots", den_s, den_mb, huge,
                  "<= 30 s, <= 100 B/sighting",
                  "yes" if den_s <= 30 and den_mb * 1024 * 1024 / huge <= 100 else "NO")
        figures["density"] = {"n": huge, "plots": plots, "seconds": den_s, "peak_mb": den_mb}

        season = season_folder(work, files, 200)
        bat_s, bat_mb = measure([stipple, "batch", str(season), "--out", str(out / "batch"), "--simulations", batch_sims,
                                 "--threads", "2", "--quiet"], runs, "batch")
        table.add(f"stipple batch, {files:,} files x 200 sightings, 199 simulations, 2 threads", bat_s, bat_mb,
                  files * 200, "<= 60 s", "yes" if bat_s <= 60 else "NO")
        figures["batch"] = {"files": files, "seconds": bat_s, "peak_mb": bat_mb}

    if "growth" in parts:
        print("growth (whole process, median of %d runs)" % runs, flush=True)
        sizes = [n for n in ([300, 1000, 3000] if args.smoke else [10**3, 10**4, 10**5, 10**6, 10**7])
                 if n <= args.max_n]
        figures["growth"] = []
        for n in sizes:
            g = pasture_survey(work, n)
            base = [str(g), "--layer", "mounds", "--plots", str(g), "--plots-layer", "plots"]
            den = measure([stipple, "density"] + base, runs, "density")
            ce = measure([stipple, "randomness"] + base + ["--only", "clark-evans"], runs, "clark-evans")
            full = measure([stipple, "randomness"] + base + (["--simulations", sims] if args.smoke else []), runs,
                           "randomness")
            table.add(f"growth n = {n:,}: density", *den, n)
            table.add(f"growth n = {n:,}: randomness --only clark-evans", *ce, n)
            table.add(f"growth n = {n:,}: randomness, default options", *full, n)
            figures["growth"].append({"n": n, "density": den, "clark_evans": ce, "randomness": full})

    if "threads" in parts:
        print("threads (whole process, median of %d runs)" % runs, flush=True)
        ten_k = pasture_survey(work, mid)
        figures["threads"] = {}
        for threads in ("1", "2"):
            r = measure([stipple, "randomness", str(ten_k), "--layer", "mounds", "--plots", str(ten_k),
                         "--plots-layer", "plots", "--simulations", sims, "--threads", threads], runs, "randomness")
            table.add(f"randomness {mid:,} points, 999 simulations, {threads} thread(s)", *r, mid)
            season = season_folder(work, files, 200)
            b = measure([stipple, "batch", str(season), "--out", str(out / f"batch-{threads}"), "--simulations",
                         batch_sims, "--threads", threads, "--quiet"], runs, "batch")
            table.add(f"batch {files:,} files, 199 simulations, {threads} thread(s)", *b, files * 200)
            figures["threads"][threads] = {"randomness": r, "batch": b}

    print()
    print(table.markdown())
    if args.json:
        Path(args.json).write_text(json.dumps(figures, indent=2) + "\n")
    return 0 if all(r[6] != "NO" for r in table.rows) or args.smoke else 1


if __name__ == "__main__":
    sys.exit(main())
