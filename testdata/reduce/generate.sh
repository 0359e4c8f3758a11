#!/usr/bin/env bash
# Regenerates the computed check values in this folder. Run from this
# folder: ./generate.sh
set -euo pipefail
export LC_ALL=C

# --- Šidák critical values ---------------------------------------------------
# Python's standard library (statistics.NormalDist, an inverse normal
# independent of Go's math.Erfcinv).
sidak='import math
from statistics import NormalDist
for a, n in [(0.05, 1), (0.05, 10), (0.05, 100), (0.05, 20000), (0.05, 1000000), (0.01, 20000), (0.001, 1)]:
    a1 = -math.expm1(math.log1p(-a) / n)
    print(a, n, repr(NormalDist().inv_cdf(1 - a1 / 2)))'
{
	echo "# Šidák critical values for |w|: α₁ = 1 − (1 − α)^(1/n), c = Φ⁻¹(1 − α₁/2)."
	echo "# Computed with $(python3 --version), statistics.NormalDist, by generate.sh:"
	echo "# python3 -c '"
	echo "$sidak" | sed 's/^/#   /'
	echo "# '"
	echo "# tolerance 1e-9 (dimensionless)"
	echo "# alpha n critical"
	python3 -c "$sidak"
} > sidak_python.txt

# --- Geodesics for horizontal-distance observations -------------------------
# Lines of 50 m to 10 km in the demo job's area (ETRS89 / UTM 32N, GRS 1980)
# with GeographicLib's GeodSolve: end points by the direct problem, then the
# inverse problem between the printed end points.
gsv=$(GeodSolve --version 2>&1 | head -1 | sed "s/^GeodSolve: //")
awk 'BEGIN { split("50 200 500 1000 2000 5000 7500 10000", L, " ");
  for (i = 0; i < 24; i++) printf "%.9f %.9f %d %s\n", 51.95 + 0.004 * i, 9.10 + 0.007 * i, (15 * i + 7) % 360, L[i % 8 + 1] }' >hd-directs.tmp
GeodSolve -e 6378137 1/298.257222101 -p 12 <hd-directs.tmp | paste -d' ' hd-directs.tmp - | awk '{ print $1, $2, $5, $6 }' >hd-pairs.tmp
{
	echo "# Geodesics on GRS 1980 (a = 6378137 m, f = 1/298.257222101) computed with GeodSolve, $gsv,"
	echo "# by generate.sh: 24 lines of 50 m to 10 km in the demo job's area (ETRS89 / UTM zone 32N),"
	echo "# end points from the direct problem (GeodSolve -e 6378137 1/298.257222101 -p 12), then"
	echo "# Command: GeodSolve -e 6378137 1/298.257222101 -i -p 10   (inverse between the printed end points)"
	echo "# Columns: lat1 lon1 lat2 lon2 (degrees)  azi1 azi2 (degrees)  s12 (metres)"
	echo "# Tolerance: 0.05 mm in s12 for the reduced horizontal-distance observation (Karney 2013: 15 nm)."
	GeodSolve -e 6378137 1/298.257222101 -i -p 10 <hd-pairs.tmp | paste -d' ' hd-pairs.tmp -
} >horizontal_geodsolve.txt
rm -f hd-directs.tmp hd-pairs.tmp
