#!/usr/bin/python3
"""Reference values for the estimation engine from Debian's scikit-learn 1.2 and numpy.

Run:  /usr/bin/python3 tests/reference/generate_sklearn.py
Writes tests/reference/fixtures/engine_sklearn.json. Inputs are invented planted-factor panels from a seeded numpy
generator (rounded to 1e-8 so the JSON holds the exact panel the references saw), not market data.

References computed:
- sklearn.decomposition.FactorAnalysis(svd_method='lapack', tol=1e-9, max_iter=200000): ML factor analysis
  (its loglike_[-1] is the total log-likelihood with the 1/T covariance; checked to have converged);
- sklearn.decomposition.PCA(svd_solver='full'): components, explained variance (1/(T−1)), noise_variance_, score;
- the closed-form PPCA σ² = (tr S − Σ_{k≤L} λ_k)/(N − L) with S the 1/T covariance (Tipping & Bishop 1999, eq. 8),
  from numpy.linalg.eigvalsh (scikit-learn's noise_variance_ divides by min(N,T) − L when T < N, so it is not the
  ML value there);
- sklearn.covariance.LedoitWolf(store_precision=False) (and assume_centered=True for zero mean);
- numpy.cov (1/(T−1)), and numpy.cov with exponential aweights (half-life 20).
"""
import json
import os

import numpy as np
import sklearn
from sklearn.covariance import LedoitWolf
from sklearn.decomposition import PCA, FactorAnalysis

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures", "engine_sklearn.json")


def planted(n, t, k, seed):
    rng = np.random.default_rng(seed)
    b = np.zeros((n, k))
    b[:, 0] = 0.01 * (0.5 + rng.random(n))
    for f in range(1, k):
        b[:, f] = 0.006 / np.sqrt(f) * rng.standard_normal(n)
    psi = (0.008 + 0.017 * rng.random(n)) ** 2
    f = rng.standard_normal((t, k))
    e = rng.standard_t(5, size=(t, n)) * np.sqrt(3 / 5) * np.sqrt(psi)
    x = 0.0003 + f @ b.T + e
    return np.round(x, 8)


def dense(m):
    return [float(v) for v in np.asarray(m).ravel()]


cases = []
for name, n, t, k, l, seed, full_matrices in [
    ("n30_t60", 30, 60, 3, 3, 101, True),
    ("n60_t40", 60, 40, 3, 4, 202, False),
    ("n120_t80", 120, 80, 3, 5, 303, False),
]:
    x = planted(n, t, k, seed)
    fa = FactorAnalysis(n_components=l, svd_method="lapack", tol=1e-9, max_iter=200000, random_state=0).fit(x)
    assert fa.n_iter_ < 200000, f"{name}: FactorAnalysis did not converge"
    s_ml = np.cov(x, rowvar=False, bias=True)
    eig = np.sort(np.linalg.eigvalsh(s_ml))[::-1]
    sigma2 = (np.trace(s_ml) - eig[:l].sum()) / (n - l)
    pca = PCA(n_components=l, svd_solver="full").fit(x)
    lw = LedoitWolf(store_precision=False).fit(x)
    lw0 = LedoitWolf(store_precision=False, assume_centered=True).fit(x)
    cov = np.cov(x, rowvar=False)
    h = 20.0
    lam = 0.5 ** (1 / h)
    aw = lam ** np.arange(t - 1, -1, -1)
    cov_w = np.cov(x, rowvar=False, aweights=aw)
    case = {
        "name": name,
        "assets": n,
        "observations": t,
        "factors": l,
        "values": dense(x),
        "fa": {
            "loglike": float(fa.loglike_[-1]),
            "score": float(fa.score(x)),
            "iterations": int(fa.n_iter_),
            "noiseVariance": dense(fa.noise_variance_),
            "components": dense(fa.components_),  # L × N
            "mean": dense(fa.mean_),
        },
        "ppca": {
            "sigma2Closed": float(sigma2),
            "topEigenvalues": dense(eig[: l + 2]),
            "sklearnNoiseVariance": float(pca.noise_variance_),
            "sklearnExplainedVariance": dense(pca.explained_variance_),
            "sklearnComponents": dense(pca.components_),
            "sklearnScore": float(pca.score(x)),
        },
        "ledoitWolf": {
            "shrinkage": float(lw.shrinkage_),
            "shrinkageZeroMean": float(lw0.shrinkage_),
            "covarianceDiagonal": dense(np.diag(lw.covariance_)),
            "covarianceFrobenius": float(np.linalg.norm(lw.covariance_)),
        },
        "numpyCov": {
            "diagonal": dense(np.diag(cov)),
            "frobenius": float(np.linalg.norm(cov)),
            "weightedHalfLife": h,
            "weightedFrobenius": float(np.linalg.norm(cov_w)),
            "weightedDiagonal": dense(np.diag(cov_w)),
        },
    }
    if full_matrices:
        case["ledoitWolf"]["covariance"] = dense(lw.covariance_)
        case["numpyCov"]["covariance"] = dense(cov)
        case["numpyCov"]["weightedCovariance"] = dense(cov_w)
    else:
        case["ledoitWolf"]["firstRows"] = dense(lw.covariance_[:5])
        case["numpyCov"]["firstRows"] = dense(cov[:5])
    # W Wᵀ + Ψ is rebuilt in the tests from components_ and noise_variance_ (what get_covariance() returns)
    cases.append(case)

with open(OUT, "w") as fh:
    json.dump({"generator": "tests/reference/generate_sklearn.py", "sklearn": sklearn.__version__, "numpy": np.__version__, "cases": cases}, fh)
print("wrote", OUT, os.path.getsize(OUT), "bytes")
