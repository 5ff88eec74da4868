#!/usr/bin/python3
"""An estimate computed outside gridstage, entered into its lineage ledger.

A co-author's own code for the Kessrin dockworkers: from the earnings chain
of the pipeline in this folder it computes the stationary mean of earnings
(exp of the log level) and how often a worker in the lowest earnings state
is still there a year later. It reads the chain through
`gridstage inspect --json` (grid, transition matrix and the chain's hash),
writes its result as JSON and records it with `gridstage enter`, so that
`gridstage lineage` can later say which chain fed it.

Usage, from the repository root after the pipeline has run:
    python3 examples/pipeline/precaution.py [GRIDSTAGE [PIPELINE_OUT]]
"""
import json
import math
import os
import subprocess
import sys

gridstage = sys.argv[1] if len(sys.argv) > 1 else "bin/gridstage"
out = sys.argv[2] if len(sys.argv) > 2 else "out/kessrin-pipeline"
chains = os.path.join(out, "chains")

chain = json.loads(subprocess.run(
    [gridstage, "inspect", chains, "--process", "earnings", "--point", "0", "--json"],
    check=True, capture_output=True, text=True).stdout)
levels = [state[0] for state in chain["grid"]]
P = chain["transition"]

# Stationary distribution by power iteration from the uniform law; the
# chain is ergodic, so 10,000 steps leave no visible error.
pi = [1.0 / len(levels)] * len(levels)
for _ in range(10000):
    pi = [sum(pi[i] * P[i][j] for i in range(len(pi))) for j in range(len(pi))]

estimate = {
    "code": {"name": "kessrin-precaution.py", "version": "1.0"},
    "model": "earnings-risk",
    "params": {},
    "chains": [{"path": os.path.join(chains, "earnings.points.parquet"),
                "point": chain["point"], "chain_hash": chain["chain_hash"]}],
    "scalars": {
        "mean_earnings": sum(p * math.exp(x) for p, x in zip(pi, levels)),
        "bottom_state_persistence": P[0][0],
    },
}
path = os.path.join(out, "precaution-estimate.json")
with open(path, "w") as f:
    json.dump(estimate, f, indent=2)
subprocess.run([gridstage, "enter", os.path.join(out, "lineage.parquet"), path], check=True)
