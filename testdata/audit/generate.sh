#!/usr/bin/env bash
# Regenerates the computed check values in this folder with reference tools
# from Debian 12 (geographiclib-tools 2.1.2; proj-bin and proj-data 9.1.1).
# Run from this folder: ./generate.sh
set -euo pipefail
export LC_ALL=C

gsv=$(GeodSolve --version 2>&1 | head -1 | sed "s/^GeodSolve: //")
pjv=$(cs2cs 2>&1 | head -1)

# --- GNSS vectors in ETRS89 / UTM zone 32N ---------------------------------
# Invented mark pairs (lat lon h, degrees and metres on ETRS89): for each,
# the geocentric X Y Z of both ends (cs2cs EPSG:4937 -> EPSG:4936), their
# UTM 32N easting and northing (cs2cs EPSG:4258 -> EPSG:25832) and the
# geodesic between them on GRS80 (GeodSolve -i).
pairs() {
  cat <<'PAIRS'
50.100000000 8.600000000 120.000 50.104000000 8.604500000 131.250
50.100000000 8.600000000 120.000 50.112000000 8.622000000 95.400
49.950000000 8.950000000 310.500 50.010000000 9.040000000 402.800
49.800000000 8.700000000 150.000 50.000000000 8.950000000 520.000
PAIRS
}
{
  echo "# GNSS vector check values: ETRS89 (GRS80), UTM zone 32N (EPSG:25832)."
  echo "# Geocentric: echo 'lat lon h' | cs2cs -f %.6f EPSG:4937 EPSG:4936 ($pjv)"
  echo "# Grid:       echo 'lat lon'   | cs2cs -f %.6f EPSG:4258 EPSG:25832"
  echo "# Geodesic:   echo 'latA lonA latB lonB' | GeodSolve -i -e 6378137 1/298.257222101 -p 9 ($gsv)"
  echo "# Columns: latA lonA hA latB lonB hB XA YA ZA XB YB ZB EA NA EB NB s12"
  echo "# Units: degrees, metres. Tolerances: 0.1 mm on lengths (the tools print 1 µm)."
  pairs | while read -r la oa ha lb ob hb; do
    xa=$(echo "$la $oa $ha" | cs2cs -f %.6f EPSG:4937 EPSG:4936 | awk '{ print $1, $2, $3 }')
    xb=$(echo "$lb $ob $hb" | cs2cs -f %.6f EPSG:4937 EPSG:4936 | awk '{ print $1, $2, $3 }')
    ga=$(echo "$la $oa" | cs2cs -f %.6f EPSG:4258 EPSG:25832 | awk '{ print $1, $2 }')
    gb=$(echo "$lb $ob" | cs2cs -f %.6f EPSG:4258 EPSG:25832 | awk '{ print $1, $2 }')
    s=$(echo "$la $oa $lb $ob" | GeodSolve -i -e 6378137 1/298.257222101 -p 9 | awk '{ print $3 }')
    echo "$la $oa $ha $lb $ob $hb $xa $xb $ga $gb $s"
  done
} >vectors_utm32.txt
