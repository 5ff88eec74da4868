#!/usr/bin/python3
"""Burnside's (1998) price-dividend ratio as an ordinary script: no gridstage
code and no gRPC. gridstage runs it once per chain under the file contract
(docs/FORMATS.md, "File-contract stages"): GRIDSTAGE_REQUEST names
request.json, which names the model's parameters and the chain's arrays as
plain text; the script writes its estimate as JSON where the request says.
Needs Debian's python3-numpy.
"""
import json
import os
import sys

import numpy as np

req = json.load(open(os.environ["GRIDSTAGE_REQUEST"]))
beta, theta = req["params"]["beta"], req["params"]["theta"]
x = np.loadtxt(req["files"]["grid"], ndmin=2)[:, 0]
P = np.loadtxt(req["files"]["transition"], ndmin=2)
pi = np.loadtxt(req["files"]["stationary"], ndmin=1)

# v_i = beta sum_j P_ij exp(theta x_j) (1 + v_j): one linear system.
a = beta * P * np.exp(theta * x)
v = np.linalg.solve(np.eye(len(x)) - a, a.sum(axis=1))
if not np.all(np.isfinite(v) & (v >= 0)):
    print("the price-dividend ratio is infinite on this chain", file=sys.stderr)
    sys.exit(2)  # exit status 2: the request does not suit the model

order = np.argsort(x)
estimate = {
    "scalars": {"price_dividend_at_mean": float(np.interp(pi @ x, x[order], v[order])),
                "price_dividend_mean": float(pi @ v)},
    "vectors": {"price_dividend": v.tolist()},
}
with open(req["estimate"], "w") as f:
    json.dump(estimate, f)
