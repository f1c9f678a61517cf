#!/usr/bin/env bash
# Regenerates the Harrowmere Wood demo data in this folder (needs python3 and gdal-bin).
set -euo pipefail
cd "$(dirname "$0")"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
python3 make_demo.py "$work"

rm -rf reserve.gpkg shapefiles gps-sightings.csv transects.gpkg season
ogr2ogr -f GPKG reserve.gpkg "$work/plots.csv" -nln plots -a_srs EPSG:32630 \
  -oo GEOM_POSSIBLE_NAMES=wkt -oo KEEP_GEOM_COLUMNS=NO -nlt MULTIPOLYGON
ogr2ogr -f GPKG -update reserve.gpkg "$work/sightings.csv" -nln sightings -a_srs EPSG:32630 \
  -oo X_POSSIBLE_NAMES=x -oo Y_POSSIBLE_NAMES=y -oo KEEP_GEOM_COLUMNS=NO -nlt POINT

mkdir -p shapefiles season
for plot in north glade ridge burn; do
  # A season's field files: one GeoPackage per plot, holding its polygon and its sightings.
  ogr2ogr -f GPKG "season/${plot}.gpkg" reserve.gpkg plots -where "plot = '${plot}'"
  ogr2ogr -f GPKG -update "season/${plot}.gpkg" reserve.gpkg sightings -where "plot = '${plot}'"
  ogr2ogr -f "ESRI Shapefile" "shapefiles/${plot}-plot.shp" reserve.gpkg plots -where "plot = '${plot}'"
  ogr2ogr -f "ESRI Shapefile" "shapefiles/${plot}-sightings.shp" reserve.gpkg sightings \
    -where "plot = '${plot}'"
done

# GPS sightings as a handheld exports them: longitude/latitude (WGS 84), no plot column.
ogr2ogr -f CSV "$work/gps-lonlat.csv" "$work/gps.csv" -s_srs EPSG:32630 -t_srs EPSG:4326 \
  -oo X_POSSIBLE_NAMES=x -oo Y_POSSIBLE_NAMES=y -oo KEEP_GEOM_COLUMNS=NO -lco GEOMETRY=AS_XY
sed -E '1s/^X,Y,(.*[^,]),?$/lon,lat,\1/' "$work/gps-lonlat.csv" > gps-sightings.csv

# Line transects over the estate: lines, sightings (location, recorded distance, cluster size)
# and the study area, for `stipple transect`.
ogr2ogr -f GPKG transects.gpkg "$work/transect-lines.csv" -nln lines -a_srs EPSG:32630 \
  -oo GEOM_POSSIBLE_NAMES=wkt -oo KEEP_GEOM_COLUMNS=NO -nlt LINESTRING
ogr2ogr -f GPKG -update transects.gpkg "$work/transect-sightings.csv" -nln sightings -a_srs EPSG:32630 \
  -oo X_POSSIBLE_NAMES=x -oo Y_POSSIBLE_NAMES=y -oo KEEP_GEOM_COLUMNS=NO -oo AUTODETECT_TYPE=YES -nlt POINT
ogr2ogr -f GPKG -update transects.gpkg "$work/study-area.csv" -nln study_area -a_srs EPSG:32630 \
  -oo GEOM_POSSIBLE_NAMES=wkt -oo KEEP_GEOM_COLUMNS=NO -nlt POLYGON

cp "$work/detection.csv" detection.csv
cp "$work/generating-values.json" generating-values.json
echo "demo data written to $(pwd)"

# The habitat survey of the southern compartment: covariate rasters, plots, sightings,
# opportunistic reports and footpaths, for `stipple habitat`.
python3 make_habitat_demo.py "$work/habitat"
rm -rf habitat
mkdir -p habitat
for name in elevation moisture; do
  gdal_translate -q -of GTiff -a_srs EPSG:32630 -ot Float32 -co COMPRESS=DEFLATE \
    "$work/habitat/${name}.asc" "habitat/${name}.tif"
done
gdal_translate -q -of GTiff -a_srs EPSG:32630 -ot Byte -co COMPRESS=DEFLATE \
  "$work/habitat/landcover.asc" habitat/landcover.tif
h=habitat/habitat.gpkg
ogr2ogr -f GPKG "$h" "$work/habitat/plots.csv" -nln plots -a_srs EPSG:32630 \
  -oo GEOM_POSSIBLE_NAMES=wkt -oo KEEP_GEOM_COLUMNS=NO -nlt MULTIPOLYGON
ogr2ogr -f GPKG -update "$h" "$work/habitat/compartment.csv" -nln compartment -a_srs EPSG:32630 \
  -oo GEOM_POSSIBLE_NAMES=wkt -oo KEEP_GEOM_COLUMNS=NO -nlt MULTIPOLYGON
ogr2ogr -f GPKG -update "$h" "$work/habitat/sightings.csv" -nln sightings -a_srs EPSG:32630 \
  -oo X_POSSIBLE_NAMES=x -oo Y_POSSIBLE_NAMES=y -oo KEEP_GEOM_COLUMNS=NO -nlt POINT
ogr2ogr -f GPKG -update "$h" "$work/habitat/opportunistic.csv" -nln opportunistic -a_srs EPSG:32630 \
  -oo X_POSSIBLE_NAMES=x -oo Y_POSSIBLE_NAMES=y -oo KEEP_GEOM_COLUMNS=NO -nlt POINT
ogr2ogr -f GPKG -update "$h" "$work/habitat/paths.csv" -nln paths -a_srs EPSG:32630 \
  -oo GEOM_POSSIBLE_NAMES=wkt -oo KEEP_GEOM_COLUMNS=NO -nlt LINESTRING
cp "$work/habitat/habitat-generating-values.json" habitat/generating-values.json
echo "habitat demo data written to $(pwd)/habitat"
