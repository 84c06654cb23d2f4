#!/usr/bin/python3
"""Small invented return panels for the CLI tests, with reference fits from Debian's numpy/scipy/scikit-learn.

Run:  /usr/bin/python3 tests/reference/generate_cli.py
Writes tests/fixtures/cli/returns.csv (120 dates × 8 assets, complete), returns_missing.csv (a few empty cells and a
late listing), weights.csv and tests/reference/fixtures/cli.json. Invented tickers and data (seeded numpy generator).

References:
- numpy.cov (1/(T−1)) and scipy.stats.multivariate_normal.logpdf summed over dates at the sample mean;
- scikit-learn FactorAnalysis (svd_method='lapack', tol=1e-12: run to convergence; Rubin & Thayer 1982 style EM
  with SVD), whose score(X)·T is the total Gaussian log-likelihood with the 1/T covariance convention;
- the closed-form PPCA σ² = (trace S − Σ top-L eigenvalues)/(N − L) (Tipping & Bishop 1999), S with 1/T;
- scikit-learn LedoitWolf (1/T, centred data).
"""
import json
import os

import numpy as np
import scipy.stats
import sklearn
from sklearn.covariance import LedoitWolf
from sklearn.decomposition import FactorAnalysis

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
CLI_DIR = os.path.join(ROOT, "tests", "fixtures", "cli")
OUT = os.path.join(HERE, "fixtures", "cli.json")

rng = np.random.default_rng(4242)
symbols = ["ZQ1", "ZQ2", "ZQ3", "ZQ4", "ZQ5", "ZQ6", "ZQ7", "ZQ8"]
n, t, l = len(symbols), 120, 2
w = rng.normal(0, 0.01, size=(n, l))
w[:, 0] = np.abs(w[:, 0]) + 0.008
psi = (0.006 + 0.006 * rng.random(n)) ** 2
x = 0.0004 + rng.normal(size=(t, l)) @ w.T + rng.normal(size=(t, n)) * np.sqrt(psi)
x = np.round(x, 6)  # six decimals in the file; the references use the rounded values
dates = [str(np.datetime64("2025-01-01") + np.timedelta64(i, "D")) for i in range(t)]


def write_csv(path, values):
    with open(path, "w") as f:
        f.write("date," + ",".join(symbols) + "\n")
        for d, row in zip(dates, values):
            f.write(d + "," + ",".join("" if np.isnan(v) else f"{v:.6f}" for v in row) + "\n")


os.makedirs(CLI_DIR, exist_ok=True)
write_csv(os.path.join(CLI_DIR, "returns.csv"), x)
xm = x.copy()
xm[:15, 5] = np.nan  # a late listing
xm[20, 1] = np.nan
xm[41, 3] = np.nan
write_csv(os.path.join(CLI_DIR, "returns_missing.csv"), xm)
weights = np.array([0.25, 0.2, 0.15, 0.1, 0.1, 0.1, 0.05, 0.05])
with open(os.path.join(CLI_DIR, "weights.csv"), "w") as f:
    f.write("symbol,weight\n" + "".join(f"{s},{v}\n" for s, v in zip(symbols, weights)))

mean = x.mean(axis=0)
cov = np.cov(x, rowvar=False)  # 1/(T−1)
sample_ll = float(scipy.stats.multivariate_normal(mean, cov).logpdf(x).sum())
s_ml = (x - mean).T @ (x - mean) / t

fa = FactorAnalysis(n_components=l, svd_method="lapack", tol=1e-12, max_iter=100000).fit(x)
fa_cov = fa.components_.T @ fa.components_ + np.diag(fa.noise_variance_)
fa_ll = float(fa.score(x) * t)

eig = np.sort(np.linalg.eigvalsh(s_ml))[::-1]
sigma2 = float((eig.sum() - eig[:l].sum()) / (n - l))

lw = LedoitWolf(store_precision=False).fit(x)

sigma_port = float(np.sqrt(weights @ cov @ weights))
out = {
    "generator": "tests/reference/generate_cli.py",
    "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "sklearn": sklearn.__version__},
    "symbols": symbols,
    "observations": t,
    "factors": l,
    "mean": mean.tolist(),
    "sampleCovariance": cov.ravel().tolist(),
    "sampleLogLikelihood": sample_ll,
    "faCovariance": fa_cov.ravel().tolist(),
    "faLogLikelihood": fa_ll,
    "faIterations": int(fa.n_iter_),
    "ppcaNoiseVariance": sigma2,
    "ledoitWolfShrinkage": float(lw.shrinkage_),
    "ledoitWolfCovariance": lw.covariance_.ravel().tolist(),
    "weights": weights.tolist(),
    "sampleVolatility": sigma_port,
    "sampleContributions": (weights * (cov @ weights) / sigma_port).tolist(),
}
with open(OUT, "w") as f:
    json.dump(out, f, indent=1)
print(f"wrote {OUT} and CSVs in {CLI_DIR}")
