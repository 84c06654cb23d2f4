#!/usr/bin/python3
"""Reference volatilities of one invented portfolio under four estimators, computed independently with Debian's
numpy and scikit-learn, for tests/api/portfolioReference.test.ts (which stores the same panel as return series, fits
FA and PPCA with Loadline's engine through the same code path as the product, and asks the risk API).

Run:  /usr/bin/python3 tests/reference/generate_portfolio_risk.py
Writes tests/reference/fixtures/portfolio_risk.json. Inputs are invented (seeded numpy generator), not market data.

Checks and their sources:
- sample covariance: numpy.cov (ddof = 1, i.e. 1/(T−1), with the sample mean);
- Ledoit–Wolf: sklearn.covariance.LedoitWolf (Ledoit & Wolf 2004; scikit-learn centres the data and uses 1/T);
- factor analysis: sklearn.decomposition.FactorAnalysis (svd_method='lapack', tol=1e-12, max_iter=100000),
  Σ = W Wᵀ + diag Ψ (get_covariance());
- probabilistic PCA in closed form (Tipping & Bishop 1999, eqs. 7–8) from numpy.linalg.eigh of the 1/T covariance:
  σ² = (tr S − Σ top-L eigenvalues)/(N − L), W = U_L (Λ_L − σ² I)^½;
- portfolio volatility √(wᵀΣw), annualised by √252 (common practice for daily data).
"""
import json
import os

import numpy as np
from sklearn.covariance import LedoitWolf
from sklearn.decomposition import FactorAnalysis

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures", "portfolio_risk.json")
rng = np.random.default_rng(20261203)

T, N, L = 260, 40, 3
PERIODS_PER_YEAR = 252

# Planted factor panel: a market-like factor plus two others, heterogeneous specific risk (invented).
B = rng.normal(0.0, 0.006, size=(N, L))
B[:, 0] = np.abs(B[:, 0]) + 0.006
F = rng.normal(0.0, 1.0, size=(T, L))
specific_sd = 0.006 + 0.012 * rng.random(N)
X = 0.0003 + F @ B.T + rng.normal(0.0, 1.0, size=(T, N)) * specific_sd
X = np.round(X, 10)  # the values the test stores are exactly these decimals

# A 15-holding long portfolio with one short (weights sum to 1).
held = sorted(rng.choice(N, size=15, replace=False).tolist())
raw = 0.5 + rng.random(15)
raw[3] = -0.3
weights = raw / raw.sum()
w = np.zeros(N)
w[held] = weights


def vol(sigma):
    return float(np.sqrt(w @ sigma @ w))


sample = np.cov(X, rowvar=False, ddof=1)
lw = LedoitWolf().fit(X)
fa = FactorAnalysis(n_components=L, svd_method="lapack", tol=1e-12, max_iter=100000).fit(X)
fa_sigma = fa.get_covariance()

S_ml = np.cov(X, rowvar=False, ddof=0)
evals, evecs = np.linalg.eigh(S_ml)
order = np.argsort(evals)[::-1]
evals, evecs = evals[order], evecs[:, order]
sigma2 = (np.trace(S_ml) - evals[:L].sum()) / (N - L)
W_ppca = evecs[:, :L] * np.sqrt(evals[:L] - sigma2)
ppca_sigma = W_ppca @ W_ppca.T + sigma2 * np.eye(N)

dates = np.datetime64("2025-01-01") + np.arange(T)  # consecutive calendar days: the test needs only distinct dates
fixture = {
    "generator": "tests/reference/generate_portfolio_risk.py",
    "numpy": np.__version__,
    "periodsPerYear": PERIODS_PER_YEAR,
    "observations": T,
    "assets": N,
    "factors": L,
    "symbols": [f"R{i:02d}" for i in range(N)],
    "dates": [str(d) for d in dates],
    "values": [[float(v) for v in row] for row in X],
    "holdings": [{"symbol": f"R{i:02d}", "weight": float(x)} for i, x in zip(held, weights)],
    "volatility": {
        "sample": vol(sample),
        "ledoitWolf": vol(lw.covariance_),
        "ledoitWolfShrinkage": float(lw.shrinkage_),
        "fa": vol(fa_sigma),
        "faLogLikelihoodPerObservation": float(fa.score(X)),
        "ppca": vol(ppca_sigma),
        "ppcaNoiseVariance": float(sigma2),
    },
}
os.makedirs(os.path.dirname(OUT), exist_ok=True)
with open(OUT, "w") as f:
    json.dump(fixture, f, indent=1)
print(f"wrote {OUT}: sample {fixture['volatility']['sample']:.6g}, LW {fixture['volatility']['ledoitWolf']:.6g}, "
      f"FA {fixture['volatility']['fa']:.6g}, PPCA {fixture['volatility']['ppca']:.6g} (per period)")
