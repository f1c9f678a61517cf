#!/usr/bin/env python3
"""Writes the bad-input corpus: small broken or hostile inputs and cases.tsv, one row per
case: name, expected exit code, a fragment of the expected message, and the arguments of
`stipple` ({bad} = this folder, {tmp} = a fresh temporary folder for outputs).

Run by hand from this folder (needs ogr2ogr from gdal-bin for the Shapefile cases); the
outputs are committed. tests/bad_input_test.cpp runs every case and checks that no file of
this folder changed. The scenario is invented: two 100 m plots of a heathland survey."""

import os
import shutil
import subprocess

HERE = os.path.dirname(os.path.abspath(__file__))
os.chdir(HERE)
for name in os.listdir("."):
    if name not in ("make_corpus.py",):
        path = os.path.join(".", name)
        shutil.rmtree(path) if os.path.isdir(path) else os.remove(path)

CRS = '"crs":{"type":"name","properties":{"name":"urn:ogc:def:crs:EPSG::32630"}},'


def write(name, text, mode="w"):
    with open(name, mode) as f:
        f.write(text)


def square(x, y, size=100.0):
    return [[x, y], [x + size, y], [x + size, y + size], [x, y + size], [x, y]]


def polygons(name, features, crs=True):
    items = []
    for props, ring in features:
        p = ",".join('"%s":%s' % (k, '"%s"' % v if isinstance(v, str) else v) for k, v in props.items())
        items.append('{"type":"Feature","properties":{%s},"geometry":{"type":"Polygon","coordinates":[%s]}}'
                     % (p, str(ring).replace(" ", "")))
    write(name, '{"type":"FeatureCollection",%s"features":[%s]}' % (CRS if crs else "", ",".join(items)))


X0, Y0 = 440000.0, 4470000.0
A = square(X0, Y0)
B = square(X0 + 200, Y0)
polygons("plots.geojson", [({"plot": "A"}, A), ({"plot": "B"}, B)])
write("plots.prj", "")
os.remove("plots.prj")

GOOD_ROWS = [(X0 + 10 + 7 * i, Y0 + 15 + 5 * i, "heather" if i % 2 else "gorse", "A") for i in range(10)] + \
            [(X0 + 210 + 8 * i, Y0 + 12 + 6 * i, "gorse", "B") for i in range(10)]


def csv(name, rows, header="x,y,species,plot"):
    write(name, header + "\n" + "".join(",".join(str(v) for v in r) + "\n" for r in rows))


csv("good.csv", GOOD_ROWS)
PRJ = ('PROJCS["WGS 84 / UTM zone 30N",GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,'
       '298.257223563]],PRIMEM["Greenwich",0],UNIT["degree",0.0174532925199433]],PROJECTION['
       '"Transverse_Mercator"],PARAMETER["latitude_of_origin",0],PARAMETER["central_meridian",-3],'
       'PARAMETER["scale_factor",0.9996],PARAMETER["false_easting",500000],PARAMETER["false_northing",0],'
       'UNIT["metre",1]]')

cases = []


def case(name, exit_code, fragment, args):
    cases.append((name, exit_code, fragment, args))


P = "--plots {bad}/plots.geojson --assume-crs EPSG:32630"
D = "density {bad}/%s " + P

# --- files that are not what they claim -------------------------------------------------
case("missing-file", 2, "no such file", D % "nowhere.csv")
write("junk.gpkg", b"\x00\x01not a geopackage\xff" * 20, "wb")
case("junk-geopackage", 2, "cannot be read as a vector data source", D % "junk.gpkg")
write("truncated.geojson", '{"type":"FeatureCollection","features":[{"type":"Feature","prop')
case("truncated-geojson", 2, "cannot be read", D % "truncated.geojson")
write("empty-file.csv", "")
case("zero-byte-csv", 2, "empty-file.csv", D % "empty-file.csv")
case("unknown-layer", 2, "layer 'nope' not found", D % "good.csv" + " --layer nope")
case("plots-unknown-layer", 2, "layer 'nope' not found", D % "good.csv" + " --plots-layer nope")

# --- sightings fields and values ----------------------------------------------------------
csv("no-species.csv", [(r[0], r[1], r[3]) for r in GOOD_ROWS], "x,y,plot")
case("no-species-field", 2, "no species field 'species'", D % "no-species.csv")
csv("empty-species.csv", GOOD_ROWS[:3] + [(X0 + 50, Y0 + 50, "", "A")])
case("empty-species-value", 2, "species field 'species' is empty", D % "empty-species.csv")
csv("nan-coordinate.csv", GOOD_ROWS[:3] + [("nan", Y0 + 50, "gorse", "A")])
case("nan-coordinate", 2, "feature 4", D % "nan-coordinate.csv")
csv("inf-coordinate.csv", GOOD_ROWS[:3] + [("inf", Y0 + 50, "gorse", "A")])
case("infinite-coordinate", 2, "feature 4", D % "inf-coordinate.csv")
csv("huge-coordinate.csv", GOOD_ROWS[:3] + [("1e300", Y0 + 50, "gorse", "A")])
case("huge-coordinate", 2, "is outside any survey", D % "huge-coordinate.csv")
csv("latitude-200.csv", [(-3.7, 200.0, "gorse", "A")], "lon,lat,species,plot")
case("latitude-beyond-pole", 2, "is outside any survey in EPSG:4326",
     "density {bad}/latitude-200.csv --plots {bad}/plots.geojson --assume-crs EPSG:4326")
csv("empty-coordinate.csv", GOOD_ROWS[:3] + [("", Y0 + 50, "gorse", "A")])
case("empty-coordinate", 2, "has no point geometry", D % "empty-coordinate.csv")
csv("no-coordinates.csv", [(r[2], r[3]) for r in GOOD_ROWS], "species,plot")
case("no-coordinate-columns", 2, "no coordinate columns found", D % "no-coordinates.csv")
case("missing-crs", 2, "has no CRS", "density {bad}/good.csv --plots {bad}/plots.geojson")
case("unknown-assumed-crs", 2, "not a coordinate reference system", "density {bad}/good.csv --plots {bad}/plots.geojson --assume-crs EPSG:999999")
case("geographic-analysis-crs", 2, "not a projected CRS in metres", D % "good.csv" + " --crs EPSG:4326")
write("line-sightings.geojson", '{"type":"FeatureCollection",%s"features":[{"type":"Feature","properties":'
      '{"species":"gorse","plot":"A"},"geometry":{"type":"LineString","coordinates":[[%f,%f],[%f,%f]]}}]}'
      % (CRS, X0 + 10, Y0 + 10, X0 + 20, Y0 + 20))
case("line-sightings", 2, "sightings must be single points", D % "line-sightings.geojson")

# --- plot polygons ----------------------------------------------------------------------------
polygons("zero-area-plot.geojson", [({"plot": "A"}, [[X0, Y0], [X0 + 100, Y0], [X0 + 200, Y0], [X0, Y0]])])
case("zero-area-plot", 2, "plot polygon has zero area", "density {bad}/good.csv --plots {bad}/zero-area-plot.geojson --assume-crs EPSG:32630")
polygons("bowtie-plot.geojson", [({"plot": "A"}, [[X0, Y0], [X0 + 100, Y0 + 100], [X0 + 100, Y0], [X0, Y0 + 100], [X0, Y0]])])
case("self-intersecting-plot", 2, "not valid (self-intersecting", "density {bad}/good.csv --plots {bad}/bowtie-plot.geojson --assume-crs EPSG:32630")
polygons("overlapping-plots.geojson", [({"plot": "A"}, A), ({"plot": "B"}, square(X0 + 50, Y0))])
case("overlapping-plots", 2, "overlap by", "density {bad}/good.csv --plots {bad}/overlapping-plots.geojson --assume-crs EPSG:32630")
polygons("no-plot-field.geojson", [({"name": "A"}, A), ({"name": "B"}, B)])
case("plots-without-plot-field", 2, "no plot field 'plot'", "density {bad}/good.csv --plots {bad}/no-plot-field.geojson --assume-crs EPSG:32630")
polygons("empty-plot-id.geojson", [({"plot": ""}, A), ({"plot": "B"}, B)])
case("empty-plot-id", 2, "plot field 'plot' is empty", "density {bad}/good.csv --plots {bad}/empty-plot-id.geojson --assume-crs EPSG:32630")
write("empty-polygon.geojson", '{"type":"FeatureCollection",%s"features":[{"type":"Feature","properties":{"plot":"A"},'
      '"geometry":{"type":"Polygon","coordinates":[]}}]}' % CRS)
case("empty-plot-polygon", 2, "plot polygon is empty", "density {bad}/good.csv --plots {bad}/empty-polygon.geojson --assume-crs EPSG:32630")
case("points-as-plots", 2, "plots must be polygons", "density {bad}/good.csv --plots {bad}/good.csv --assume-crs EPSG:32630")
case("no-plots-given", 2, "give the plot polygons with --plots", "density {bad}/good.csv --assume-crs EPSG:32630")

# --- sightings that miss their plots ----------------------------------------------------
csv("far-away.csv", [(X0 + 5000 + i, Y0 + 5000, "gorse", "") for i in range(5)])
case("no-sighting-in-any-plot", 2, "only 0 of 5 sightings fall in a plot", D % "far-away.csv")
csv("mostly-outside.csv", [(X0 + 50, Y0 + 50, "gorse", "")] + [(X0 + 5000 + i, Y0 + 5000, "gorse", "") for i in range(3)])
case("most-sightings-outside", 2, "only 1 of 4 sightings fall in a plot", D % "mostly-outside.csv")
polygons("named-plots.geojson", [({"Name": "Plot A"}, A), ({"Name": "Plot B"}, B)])
csv("named-sightings.csv", [(r[0], r[1], r[2], "Waypoint %d" % i) for i, r in enumerate(GOOD_ROWS)], "x,y,species,Name")
case("plot-names-match-nothing", 2, "assign by location with --assign location",
     "density {bad}/named-sightings.csv --plots {bad}/named-plots.geojson --assume-crs EPSG:32630 --plot-field Name")
case("assign-attribute-without-field", 2, "no plot field 'plot'",
     "density {bad}/named-sightings.csv --plots {bad}/plots.geojson --assume-crs EPSG:32630 --assign attribute")

# --- damaged and foreign-encoded Shapefiles (built with ogr2ogr) ----------------------------
many = [(X0 + 5 + (i % 19) * 5, Y0 + 5 + (i // 19) * 9.5, "gorse" if i % 3 else "heather", "A") for i in range(173)]
csv("many.csv", many)
write("many.prj", PRJ)
subprocess.run(["ogr2ogr", "-q", "-f", "ESRI Shapefile", "truncated-dbf.shp", "many.csv", "-oo", "X_POSSIBLE_NAMES=x",
                "-oo", "Y_POSSIBLE_NAMES=y", "-a_srs", "EPSG:32630"], check=True)
for f in ("many.csv", "many.prj"):
    os.remove(f)
size = os.path.getsize("truncated-dbf.dbf")
with open("truncated-dbf.dbf", "r+b") as f:  # keep the header and about half of the records
    f.truncate(size // 2)
case("truncated-dbf", 2, "declares 173 features but", D % "truncated-dbf.shp")
case("inspect-shows-truncation", 0, "the header declares 173 features but", "inspect {bad}/truncated-dbf.shp")

latin = "x,y,species,plot\n" + "".join("%f,%f,%s,A\n" % (X0 + 10 + 9 * i, Y0 + 20 + 7 * i, "bruy\u00e8re" if i % 2 else "aj\u00f4nc")
                                       for i in range(10))
write("latin1-source.csv", latin)
subprocess.run(["ogr2ogr", "-q", "-f", "ESRI Shapefile", "latin1.shp", "latin1-source.csv", "-oo", "X_POSSIBLE_NAMES=x",
                "-oo", "Y_POSSIBLE_NAMES=y", "-a_srs", "EPSG:32630", "-lco", "ENCODING=ISO-8859-1"], check=True)
os.remove("latin1-source.csv")
os.remove("latin1.cpg")  # as older field software writes it: Latin-1 bytes, no .cpg
case("latin1-without-cpg", 0, "are not valid UTF-8", "density {bad}/latin1.shp --plots {bad}/plots.geojson --json -")
case("unknown-encoding", 2, "text encoding 'KLINGON-8' is not one this system knows",
     "density {bad}/latin1.shp --plots {bad}/plots.geojson --encoding KLINGON-8")

# --- detection tables ----------------------------------------------------------------------
write("p-above-one.csv", "species,p\ngorse,1.2\n")
case("detection-p-above-one", 2, "outside (0, 1]", D % "good.csv" + " --detection {bad}/p-above-one.csv --detection-prob 0.9")
write("p-zero.csv", "species,p\ngorse,0\nheather,0.8\n")
case("detection-p-zero", 2, "outside (0, 1]", D % "good.csv" + " --detection {bad}/p-zero.csv")
write("p-text.csv", "species,p\ngorse,high\nheather,0.8\n")
case("detection-p-not-a-number", 2, "p 'high' is not a number", D % "good.csv" + " --detection {bad}/p-text.csv")
write("p-twice.csv", "species,p\ngorse,0.9\ngorse,0.8\nheather,0.7\n")
case("detection-species-twice", 2, "is listed twice", D % "good.csv" + " --detection {bad}/p-twice.csv")
write("p-columns.csv", "name,probability_of_seeing\ngorse,0.9\n")
case("detection-missing-columns", 2, "needs columns 'species' and 'p'", D % "good.csv" + " --detection {bad}/p-columns.csv")
write("p-missing-species.csv", "species,p\ngorse,0.9\n")
case("detection-species-not-listed", 2, "heather", D % "good.csv" + " --detection {bad}/p-missing-species.csv")
case("detection-se-without-p", 2, "--detection-se needs --detection-prob", D % "good.csv" + " --detection-se 0.1")

# --- option values ---------------------------------------------------------------------------
case("negative-simulations", 2, "must be a whole number", D % "good.csv" + " --simulations -1")
case("simulations-exponent", 2, "must be a whole number", D % "good.csv" + " --simulations 1e3")
case("simulations-too-many", 2, "must be a whole number from 0-1000000", D % "good.csv" + " --simulations 99999999999")
case("negative-seed", 2, "must be a whole number", D % "good.csv" + " --seed -5")
case("confidence-above-one", 2, "must lie strictly between 0 and 1", D % "good.csv" + " --confidence 1.5")
case("confidence-nan", 2, "must lie strictly between 0 and 1", D % "good.csv" + " --confidence nan")
case("unknown-unit", 2, "--unit", D % "good.csv" + " --unit acres")
case("unknown-window", 2, "--window", D % "good.csv" + " --window bogus")
R = "randomness {bad}/good.csv " + P
case("negative-quadrat-grid", 2, "--quadrats", R + " --quadrats -1x-2")
case("zero-quadrat-grid", 2, "--quadrats", R + " --quadrats 0x3")
case("huge-quadrat-grid", 2, "--quadrats", R + " --quadrats 99999999999x99999999999")
case("rmax-zero", 2, "must be a number greater than 0", R + " --rmax 0")
case("rmax-nan", 2, "must be a number greater than 0", R + " --rmax nan")
case("negative-threads", 2, "must be a whole number", R + " --threads -2")
S = "surface {bad}/good.csv " + P + " --out {tmp}/surfaces"
case("bandwidth-zero", 2, "must be a number greater than 0", S + " --bandwidth 0")
case("pixel-nan", 2, "must be a number greater than 0", S + " --pixel nan")
case("pixel-larger-than-bandwidth", 2, "pixel", S + " --pixel 50 --bandwidth 5")
case("unknown-subcommand", 2, "unknown command 'densty' (did you mean 'density'?)", "densty {bad}/good.csv")
case("unknown-option", 2, "unknown option '--simulatons' for stipple density (did you mean '--simulations'?)", D % "good.csv" + " --simulatons 99")
case("unknown-option-far-from-any", 2, "unknown option '--colour-scheme' for stipple density", D % "good.csv" + " --colour-scheme dark")

# --- outputs that must not be written ------------------------------------------------------
case("output-to-device", 2, "/dev/null", D % "good.csv" + " --json /dev/null")
case("output-to-folder", 2, "is a folder", D % "good.csv" + " --json {tmp}")
case("output-over-input", 2, "refusing to write over an input file", D % "good.csv" + " --csv {bad}/good.csv")
case("two-outputs-one-file", 2, "both write to", D % "good.csv" + " --json {tmp}/out.txt --csv {tmp}/out.txt")
case("two-outputs-on-stdout", 2, "both write to standard output", D % "good.csv" + " --json - --csv -")

# --- transects ---------------------------------------------------------------------------------
write("lines.geojson", '{"type":"FeatureCollection",%s"features":[%s]}' % (CRS, ",".join(
    '{"type":"Feature","properties":{"transect":"T%d"},"geometry":{"type":"LineString","coordinates":[[%f,%f],[%f,%f]]}}'
    % (k, X0 + 300 * k, Y0, X0 + 300 * k, Y0 + 1000) for k in range(3))))
write("zero-line.geojson", '{"type":"FeatureCollection",%s"features":[{"type":"Feature","properties":{"transect":"T0"},'
      '"geometry":{"type":"LineString","coordinates":[[%f,%f],[%f,%f]]}}]}' % (CRS, X0, Y0, X0, Y0))
T = "transect {bad}/%s --lines {bad}/lines.geojson --distance-field distance"
write("distance-negative.csv", "transect,distance,species\nT0,12,hare\nT1,-4,hare\n")
case("transect-negative-distance", 2, "is negative", T % "distance-negative.csv")
write("distance-huge.csv", "transect,distance,species\nT0,12,hare\nT1,1e12,hare\n")
case("transect-implausible-distance", 2, "more than --max-offset", T % "distance-huge.csv")
write("distance-nan.csv", "transect,distance,species\nT0,12,hare\nT1,nan,hare\n")
case("transect-nan-distance", 2, "is not a finite number", T % "distance-nan.csv")
write("distance-text.csv", "transect,distance,species\nT0,12,hare\nT1,far,hare\n")
case("transect-text-distance", 2, "'far' is not a finite number", T % "distance-text.csv")
write("distance-no-transect.csv", "transect,distance,species\nT0,12,hare\n,8,hare\n")
case("transect-sighting-without-transect", 2, "has neither a transect id ('transect') nor a location", T % "distance-no-transect.csv")
write("distance-unknown-transect.csv", "transect,distance,species\nT0,12,hare\nT9,8,hare\n")
case("transect-unknown-id", 2, "transect 'T9' is not in", T % "distance-unknown-transect.csv")
write("distance-other-ids.csv", "line_name,distance,species\nLine 1,12,hare\nLine 2,8,hare\n")
case("transect-ids-match-nothing", 2, "--assign location",
     T % "distance-other-ids.csv" + " --sightings-transect-field line_name")
write("cluster-negative.csv", "transect,distance,species,size\nT0,12,hare,2\nT1,8,hare,-1\n")
case("transect-negative-cluster", 2, "must be positive", T % "cluster-negative.csv" + " --size-field size")
case("transect-zero-length-line", 2, "has zero length",
     "transect {bad}/distance-negative.csv --lines {bad}/zero-line.geojson --distance-field distance")
case("transect-bins-not-increasing", 2, "--bins", T % "distance-negative.csv" + " --bins 0,20,10")
case("transect-negative-bootstrap", 2, "must be a whole number", T % "distance-negative.csv" + " --bootstrap -3")
csv("far-sightings.csv", [(X0 + 5000, Y0 + 500, "hare", "")], "x,y,species,note")
case("transect-sighting-far-from-lines", 2, "more than --max-offset",
     "transect {bad}/far-sightings.csv --lines {bad}/lines.geojson --assume-crs EPSG:32630")

# --- batch and run files ----------------------------------------------------------------------
write("broken-run.toml", "analyses = [\"density\"\nsimulations = 9\n")
case("run-file-broken-toml", 2, "broken-run.toml: line", "batch {bad}/good.csv --out {tmp}/season --run-file {bad}/broken-run.toml")
write("negative-run.toml", "[randomness]\nsimulations = -1\n")
case("run-file-negative-simulations", 2, "must be a whole number", "batch {bad}/good.csv --out {tmp}/season --run-file {bad}/negative-run.toml")
write("assign-run.toml", "assign = \"nearest\"\n")
case("run-file-unknown-assign", 2, "assign", "batch {bad}/good.csv --out {tmp}/season --run-file {bad}/assign-run.toml")
write("typo-run.toml", "[randomness]\nsimulatons = 99\n")
case("run-file-unknown-key", 2, "unknown key 'randomness.simulatons' (did you mean 'randomness.simulations'?)",
     "batch {bad}/good.csv --out {tmp}/season --run-file {bad}/typo-run.toml")
case("batch-bad-shard", 2, "--shard", "batch {bad}/good.csv --out {tmp}/season --shard 3/2")
case("batch-zero-shard", 2, "--shard", "batch {bad}/good.csv --out {tmp}/season --shard 0/2")
case("batch-out-is-a-file", 2, "exists and is not a folder", "batch {bad}/good.csv --out {bad}/good.csv")

with open("cases.tsv", "w") as f:
    f.write("# name\texit\tmessage fragment\targuments of stipple ({bad} = this folder, {tmp} = a fresh temporary folder)\n")
    for name, code, fragment, args in cases:
        assert "\t" not in fragment + args
        f.write("%s\t%d\t%s\t%s\n" % (name, code, fragment, args))
print(len(cases), "cases")
