#!/usr/bin/python3
"""The asset-pricing model of Burnside (1998) as a gridstage stage, written
with the gridstage_stage module (Debian's python3-grpcio, python3-protobuf
and python3-numpy). On a Markov chain for dividend growth x the
price-dividend ratio solves v_i = beta sum_j P_ij exp(theta x_j) (1 + v_j).
Burnside (1998), "Solving asset pricing models with Gaussian shocks",
Journal of Economic Dynamics and Control 22, 329-340.

The host launches it as: /usr/bin/python3 stages/python/burnside_stage.py
"""
import numpy as np

from gridstage_stage import BadRequest, serve


def burnside(chain, beta, theta):
    if not 0.0 < beta < 1.0:
        raise BadRequest("model burnside: parameter beta = %g is out of range: want in (0, 1)" % beta)
    if chain.dim != 1:
        raise BadRequest("chain %s has %d dimensions; burnside needs a univariate chain" % (chain.hash, chain.dim))
    x = chain.levels
    a = beta * chain.transition * np.exp(theta * x)  # a_ij = beta P_ij e^(theta x_j)
    v = np.linalg.solve(np.eye(chain.states) - a, a.sum(axis=1))
    # A finite non-negative solution exists exactly when the spectral
    # radius of a is below one (M-matrix property).
    if not np.all(np.isfinite(v) & (v >= 0)):
        raise BadRequest("chain %s: the price-dividend ratio is infinite on this chain" % chain.hash)
    pi = chain.stationary
    order = np.argsort(x)
    return {"price_dividend_at_mean": np.interp(pi @ x, x[order], v[order]), "price_dividend_mean": pi @ v,
            "stationary_mean_growth": pi @ x, "price_dividend": v, "levels": x}


if __name__ == "__main__":
    serve("gridstage-python-burnside", "0.2.0", {"burnside": burnside})
