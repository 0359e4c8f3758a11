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
