#!/bin/sh
# The stationary mean, standard deviation and first-order autocorrelation
# of a chain's first coordinate, with nothing but awk: a stage under
# gridstage's file contract (docs/FORMATS.md, "File-contract stages").
# gridstage runs it once per chain; GRIDSTAGE_WORK names the folder that
# holds grid.txt, stationary.txt and transition.txt, and where
# estimate.json goes.
set -eu
cd "$GRIDSTAGE_WORK"
awk '
FILENAME == "grid.txt"       { x[FNR] = $1; n = FNR; next }
FILENAME == "stationary.txt" { p[FNR] = $1; next }
                             { for (j = 1; j <= NF; j++) P[FNR, j] = $j }
END {
  for (i = 1; i <= n; i++) m += p[i] * x[i]
  for (i = 1; i <= n; i++) v += p[i] * (x[i] - m) ^ 2
  for (i = 1; i <= n; i++) for (j = 1; j <= n; j++) c += p[i] * P[i, j] * (x[i] - m) * (x[j] - m)
  printf "{\"scalars\": {\"mean\": %.17g, \"sd\": %.17g, \"autocorrelation\": %.17g}}\n", m, sqrt(v), c / v > "estimate.json"
}' grid.txt stationary.txt transition.txt
