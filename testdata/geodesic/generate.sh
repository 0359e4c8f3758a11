#!/usr/bin/env bash
# Regenerates the computed check values in this folder with reference tools
# from Debian 12 (geographiclib-tools 2.1.2; proj-bin and proj-data 9.1.1).
# The inputs are deterministic (a Park–Miller generator in awk, exact in
# double precision), so a rerun with the same tool versions gives the same
# files. Run from this folder: ./generate.sh
set -euo pipefail
export LC_ALL=C

gsv=$(GeodSolve --version 2>&1 | head -1 | sed "s/^GeodSolve: //")
pjv=$(cs2cs 2>&1 | head -1)
epsgv=$(sqlite3 /usr/share/proj/proj.db "select value from metadata where key = 'EPSG.VERSION'" 2>/dev/null || echo "of unknown version")

# rand: Park–Miller minimal standard, seed and count as arguments; prints
# uniform numbers in (0, 1), one a line.
rand() { awk -v s="$1" -v n="$2" 'BEGIN { for (i = 0; i < n; i++) { s = (s * 16807) % 2147483647; printf "%.12f\n", s / 2147483647 } }'; }

# --- Geodesics -------------------------------------------------------------
# Lines of given lengths from pseudo-random starts and azimuths: the end
# points come from GeodSolve's direct problem, then GeodSolve's inverse
# problem between the printed end points gives the check values.
geodesics() { # $1 ellipsoid flag ("" for WGS84), $2 seed
  local eflag=$1 seed=$2
  rand "$seed" 480 | paste - - - | awk '
    BEGIN { split("1 10 100 1000 5000 20000 50000 1000000 10000000 19000000", L, " ") }
    { i = int((NR - 1) / 16) + 1; printf "%.9f %.9f %.9f %s\n", -80 + 160 * $1, -180 + 360 * $2, -180 + 360 * $3, L[i] }' |
    head -n 160 >directs.tmp
  GeodSolve $eflag -p 12 <directs.tmp | paste -d' ' directs.tmp - | awk '{ print $1, $2, $5, $6 }' >pairs.tmp
  # Nearly antipodal pairs.
  rand $((seed + 1)) 40 | paste - - | awk '{ lat = -30 + 60 * $1; printf "%.9f 0 %.9f %.9f\n", lat, -lat + 0.5 * ($2 - 0.5), 179.5 + 0.5 * $2 }' >>pairs.tmp
  GeodSolve $eflag -i -p 10 <pairs.tmp | paste -d' ' pairs.tmp -
  rm -f directs.tmp
}

for ell in wgs84 grs80; do
  case $ell in
    wgs84) eflag=""; ename="WGS 84 (GeodSolve's default, a = 6378137 m, f = 1/298.257223563)"; seed=20261202 ;;
    grs80) eflag="-e 6378137 1/298.257222101"; ename="GRS 1980 (a = 6378137 m, f = 1/298.257222101)"; seed=19800101 ;;
  esac
  {
    echo "# Geodesics on $ename computed with GeodSolve, $gsv."
    echo "# Inputs: deterministic pseudo-random lines, see generate.sh (seed $seed): 16 lines each of"
    echo "# 1 m, 10 m, 100 m, 1 km, 5 km, 20 km, 50 km, 1000 km, 10000 km and 19000 km, then 20 nearly antipodal pairs."
    echo "# Command: GeodSolve $eflag -i -p 10   (inverse problem; distance to 1e-10 m, azimuths to 1e-15 degrees)"
    echo "# Columns: lat1 lon1 lat2 lon2 (degrees)  azi1 azi2 (degrees, forward azimuths)  s12 (metres)"
    echo "# Tolerance: 0.1 mm in s12, 1e-5 arc-seconds in the azimuths (issue 2); Karney (2013) claims 15 nm."
    geodesics "$eflag" "$seed"
  } >geodsolve_${ell}.txt
done
rm -f pairs.tmp

# --- Transverse Mercator scale and convergence -------------------------------
# UTM zone 33N on WGS 84: GeographicLib's exact transverse Mercator (the
# default of TransverseMercatorProj) with k0 = 0.9996 and central meridian
# 15°E; false easting 500000 m is added by the test.
{
  echo "# UTM zone 33N (EPSG:32633) on WGS 84 computed with TransverseMercatorProj, $gsv."
  echo "# Command: TransverseMercatorProj -l 15 -k 0.9996 -p 9   (exact transverse Mercator)"
  echo "# Columns: lat lon (degrees)  x y (metres, no false easting)  gamma (degrees, bearing of grid north clockwise from true north)  k"
  rand 33 60 | paste - - | awk '{ printf "%.9f %.9f\n", -70 + 150 * $1, 15 - 5 + 10 * $2 }' >tm.tmp
  TransverseMercatorProj -l 15 -k 0.9996 -p 9 <tm.tmp | paste -d' ' tm.tmp -
  rm -f tm.tmp
} >tmerc_utm33_geographiclib.txt

# --- EGM96 geoid separations as PROJ interpolates egm96_15.gtx ----------------
{
  echo "# EGM96 geoid separation N (metres) as PROJ interpolates egm96_15.gtx (bilinear), $pjv, proj-data 9.1.1."
  echo "# Command: cs2cs -f %.4f EPSG:4979 EPSG:4326+5773   with input 'lat lon 0'; cs2cs prints H = 0 - N, so N = -z."
  echo "# Columns: lat lon (degrees)  N (metres)"
  rand 96 80 | paste - - | awk '{ printf "%.7f %.7f\n", -89 + 178 * $1, -180 + 360 * $2 }' >geoid.tmp
  echo "38.6281550 -90.2208450" >>geoid.tmp
  awk '{ print $1, $2, 0 }' geoid.tmp | cs2cs -f %.4f EPSG:4979 EPSG:4326+5773 | awk '{ printf "%.4f\n", -$3 }' | paste -d' ' geoid.tmp -
  rm -f geoid.tmp
} >egm96_cs2cs.txt

# --- State Plane and UTM grids in US survey feet, international feet and metres
# Each CRS's base geographic CRS (no datum shift: cs2cs applies the CRS's own
# map projection only) to the grid, two points a grid: one near the middle of
# the zone and one near its edge. The unit code is the EPSG unit of measure of
# the CRS's axes as projinfo prints it in WKT1 (9001 metre, 9002 foot, the
# international foot, 9003 US survey foot).
{
  echo "# Grid coordinates of geographic points in projected CRSs in US survey feet, international feet and metres,"
  echo "# computed with cs2cs, $pjv, proj-data 9.1.1, proj.db with the EPSG dataset $epsgv."
  echo "# Command: echo 'lat lon' | cs2cs -f %.6f EPSG:<base> EPSG:<crs>   (input latitude first: the EPSG order of"
  echo "# geographic CRSs; output easting then northing, the axis order of every CRS here, in the CRS's own unit)"
  echo "# Unit: projinfo -q -o WKT1_GDAL EPSG:<crs>, the EPSG code of the CRS's linear UNIT."
  echo "# Columns: crs base (EPSG codes)  unit (EPSG unit of measure)  lat lon (degrees)  easting northing (CRS unit)"
  echo "# Tolerance: 1 mm in easting and northing, stated in the grid's unit (0.00328 ft)."
  while read -r crs base lat lon; do
    unit=$(projinfo -q -o WKT1_GDAL "EPSG:$crs" | tr -d ' \n' | grep -o 'UNIT\["[^"]*",[0-9.e-]*,AUTHORITY\["EPSG","[0-9]*"\]\],AXIS' | sed 's/.*"\([0-9]*\)"\]\],AXIS/\1/')
    en=$(echo "$lat $lon" | cs2cs -f %.6f "EPSG:$base" "EPSG:$crs" | awk '{ print $1, $2 }')
    echo "$crs $base $unit $lat $lon $en"
  done <<'CASES'
2231 4269 40.5 -105.1
2231 4269 40.98 -108.9
2263 4269 40.75 -73.5
2263 4269 41.15 -71.9
2236 4269 27.5 -80.5
2236 4269 29.8 -82.2
2278 4269 29.7 -95.4
2278 4269 30.6 -104.8
6430 6318 40.5 -105.1
2223 4269 33.4 -112.0
2223 4269 36.9 -113.3
2252 4269 44.5 -85.0
2252 4269 45.9 -87.0
2256 4269 46.8 -110.0
2256 4269 48.99 -116.0
2913 4152 45.5 -122.7
26913 4269 40.5 -105.1
26913 4269 48.0 -102.1
32613 4326 40.5 -105.1
32613 4326 0.5 -107.9
CASES
} >stateplane_cs2cs.txt

# --- Areas of use ------------------------------------------------------------
# proj.db's bounding box of a CRS's area of use, as projinfo prints it in
# its WKT (BBOX[south, west, north, east], degrees).
{
  echo "# Areas of use of projected CRSs from proj.db, printed by projinfo ($pjv), proj.db with the EPSG dataset $epsgv."
  echo "# Command: projinfo -q -o WKT2_2019 EPSG:<crs> | grep BBOX   (BBOX[south,west,north,east])"
  echo "# Columns: crs (EPSG code)  south west north east (degrees)"
  for c in 25832 2231 32760 3031 27700; do
    projinfo -q -o WKT2_2019 "EPSG:$c" | grep -o 'BBOX\[[^]]*\]' | tail -1 |
      sed 's/BBOX\[//; s/\]//; s/,/ /g' | awk -v c="$c" '{ print c, $1, $2, $3, $4 }'
  done
} >areas_projinfo.txt
