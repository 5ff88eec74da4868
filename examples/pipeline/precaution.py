#!/usr/bin/python3
"""An estimate computed outside gridstage, entered into its lineage ledger.

A co-author's own code for the Kessrin dockworkers: from the earnings chain
of the pipeline in this folder it computes the stationary mean of earnings
(exp of the log level) and how often a worker in the lowest earnings state
is still there a year later. It takes the chain as plain NumPy arrays
(`gridstage arrays`: grid, transition matrix, stationary distribution and
the chain's hash in one .npz file), writes its result as JSON and records
it with `gridstage enter`, so that `gridstage lineage` can later say which
chain fed it. It needs numpy only (Debian: python3-numpy), no Parquet
reader.

Usage, from the repository root after the pipeline has run:
    /usr/bin/python3 examples/pipeline/precaution.py [GRIDSTAGE [PIPELINE_OUT]]
"""
import json
import os
import subprocess
import sys

import numpy as np

gridstage = sys.argv[1] if len(sys.argv) > 1 else "bin/gridstage"
out = sys.argv[2] if len(sys.argv) > 2 else "out/kessrin-pipeline"
chains = os.path.join(out, "chains")

# The earnings chains as NumPy arrays, one .npz per sweep point; the
# sidecar names each point's files.
arrays = os.path.join(out, "arrays")
subprocess.run([gridstage, "arrays", chains, "--process", "earnings", "--to", "npz", "--out", arrays],
               check=True, capture_output=True)
folder = os.path.join(arrays, "earnings")
with open(os.path.join(folder, "provenance.json")) as f:
    point = json.load(f)["points"][0]
chain = np.load(os.path.join(folder, point["files"][0]))
levels, P, pi = chain["grid"][:, 0], chain["transition"], chain["stationary"]

estimate = {
    "code": {"name": "kessrin-precaution.py", "version": "1.0"},
    "model": "earnings-risk",
    "params": {},
    "chains": [{"path": os.path.join(chains, "earnings.points.parquet"),
                "point": int(chain["point"]), "chain_hash": str(chain["chain_hash"])}],
    "scalars": {
        "mean_earnings": float(pi @ np.exp(levels)),
        "bottom_state_persistence": float(P[0, 0]),
    },
}
path = os.path.join(out, "precaution-estimate.json")
with open(path, "w") as f:
    json.dump(estimate, f, indent=2)
subprocess.run([gridstage, "enter", os.path.join(out, "lineage.parquet"), path], check=True)
