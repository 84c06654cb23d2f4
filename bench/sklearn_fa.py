#!/usr/bin/python3
"""Runs scikit-learn's FactorAnalysis on a panel written by bench/engine.bench.ts, for the time/likelihood comparison.

Usage: /usr/bin/python3 bench/sklearn_fa.py PANEL.bin T N L
PANEL.bin holds T × N float64 values, row-major, little-endian. Prints one JSON object:
{"lapack": {"seconds", "loglike", "iterations"}, "randomized": {...}} — loglike is scikit-learn's total
log-likelihood (loglike_[-1], 1/T covariance convention), the same convention as the engine's.
"""
import json
import sys
import time

import numpy as np
from sklearn.decomposition import FactorAnalysis

path, t, n, l = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
x = np.fromfile(path, dtype="<f8").reshape(t, n)
out = {}
for method, tol in (("lapack", 1e-6), ("randomized", 1e-6)):
    fa = FactorAnalysis(n_components=l, svd_method=method, tol=tol, max_iter=10000, random_state=0)
    start = time.perf_counter()
    fa.fit(x)
    seconds = time.perf_counter() - start
    out[method] = {"seconds": seconds, "loglike": float(fa.loglike_[-1]), "iterations": int(fa.n_iter_)}
print(json.dumps(out))
