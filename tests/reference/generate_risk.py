#!/usr/bin/python3
"""Reference values for Loadline's risk, rotation, score and evaluation code, computed independently with
Debian's numpy / scipy / scikit-learn (and R's stats::varimax through /usr/bin/Rscript when present).

Run:  /usr/bin/python3 tests/reference/generate_risk.py
Writes tests/reference/fixtures/risk.json. Inputs are invented (seeded numpy generator), not market data.

Sources of the formulas checked:
- portfolio variance w'Σw, Euler contributions w_i(Σw)_i/σ (Litterman 1996; Tasche 1999), explicit Σ = WWᵀ + diag Ψ;
- minimum-variance weights Σ⁻¹1/(1ᵀΣ⁻¹1) (Merton 1972) by numpy.linalg.solve on the explicit Σ;
- normal VaR z_α σ √h and ES σ √h φ(z_α)/(1−α) with scipy.stats.norm;
- principal angles: scipy.linalg.subspace_angles (Björck & Golub 1973; Knyazev & Argentati 2002);
- varimax (Kaiser 1958): scikit-learn's _ortho_rotation (raw) and R's stats::varimax (Kaiser-normalised);
- Kupiec (1995) proportion-of-failures LR with scipy.special.xlogy and scipy.stats.chi2.sf;
- factor scores (I + WᵀΨ⁻¹W)⁻¹WᵀΨ⁻¹(x−μ) on the observed assets of each date (Tipping & Bishop 1999, eqs. 6–7).
"""
import json
import os
import shutil
import subprocess
import sys

import numpy as np
import scipy
import scipy.linalg
import scipy.special
import scipy.stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures", "risk.json")
rng = np.random.default_rng(20261202)


def invented_factor_model(n, l, scale=0.01):
    w = rng.normal(0.0, scale, size=(n, l))
    w[:, 0] = np.abs(w[:, 0]) + 0.5 * scale  # a market-like first factor
    psi = (0.008 + 0.017 * rng.random(n)) ** 2
    mu = rng.normal(0.0003, 0.0002, size=n)
    return w, psi, mu


def risk_figures(sigma, w, b, mu, periods_per_year, horizon):
    sw = sigma @ w
    var = float(w @ sw)
    vol = np.sqrt(var)
    out = {
        "variance": var,
        "volatility": vol,
        "annualisedVolatility": vol * np.sqrt(periods_per_year),
        "marginalContributions": (sw / vol).tolist(),
        "contributions": (w * sw / vol).tolist(),
        "percentContributions": (w * sw / var).tolist(),
        "meanReturn": float(w @ mu),
    }
    a = w - b
    out["trackingError"] = float(np.sqrt(a @ sigma @ a))
    te = out["trackingError"]
    out["activeContributions"] = (a * (sigma @ a) / te).tolist() if te > 0 else [0.0] * len(a)
    tails = []
    for c in (0.95, 0.99):
        z = scipy.stats.norm.ppf(c)
        tails.append({
            "confidence": c,
            "quantile": float(z),
            "valueAtRisk": float(z * vol * np.sqrt(horizon)),
            "expectedShortfall": float(vol * np.sqrt(horizon) * scipy.stats.norm.pdf(z) / (1 - c)),
        })
    out["parametric"] = tails
    return out


def canonical_columns(m):
    """Columns by decreasing sum of squares, each column's largest-magnitude entry positive (for comparing rotations)."""
    ss = (m ** 2).sum(axis=0)
    order = np.argsort(-ss, kind="stable")
    m = m[:, order]
    for k in range(m.shape[1]):
        j = np.argmax(np.abs(m[:, k]))
        if m[j, k] < 0:
            m[:, k] = -m[:, k]
    return m


def r_varimax(m):
    rscript = "/usr/bin/Rscript"
    if not os.path.exists(rscript):
        return None
    code = (
        "x <- as.matrix(read.table(file('stdin')));"
        "v <- varimax(x, normalize=TRUE, eps=1e-14);"
        "write.table(unclass(v$loadings), stdout(), row.names=FALSE, col.names=FALSE)"
    )
    text = "\n".join(" ".join(repr(float(v)) for v in row) for row in m)
    res = subprocess.run([rscript, "-e", code], input=text, capture_output=True, text=True, check=True)
    rows = [list(map(float, line.split())) for line in res.stdout.strip().splitlines()]
    return np.array(rows)


cases = []
for (n, l, p, ppy, horizon) in [(3, 1, 3, 252, 1), (8, 2, 4, 52, 5), (30, 3, 5, 12, 10)]:
    w_load, psi, mu = invented_factor_model(n, l)
    sigma = w_load @ w_load.T + np.diag(psi)
    portfolios = [rng.normal(1.0 / n, 0.5 / n, size=n) for _ in range(p)]
    portfolios[0] = np.full(n, 1.0 / n)
    benchmark = np.full(n, 1.0 / n)
    inv1 = np.linalg.solve(sigma, np.ones(n))
    cases.append({
        "kind": "factor",
        "assets": n,
        "factors": l,
        "loadings": w_load.ravel().tolist(),
        "specificVariance": psi.tolist(),
        "mean": mu.tolist(),
        "periodsPerYear": ppy,
        "horizon": horizon,
        "benchmark": benchmark.tolist(),
        "portfolios": [q.tolist() for q in portfolios],
        "risk": [risk_figures(sigma, q, benchmark, mu, ppy, horizon) for q in portfolios],
        "factorVariance": [float(np.sum((w_load.T @ q) ** 2)) for q in portfolios],
        "specificVarianceOfPortfolio": [float(np.sum(psi * q ** 2)) for q in portfolios],
        "minimumVarianceWeights": (inv1 / inv1.sum()).tolist(),
    })

# A dense (full covariance) case: an invented positive definite Σ.
n = 6
a = rng.normal(0, 0.01, size=(n, 2 * n))
sigma = a @ a.T / (2 * n) + np.diag(rng.random(n) * 1e-4)
mu = np.zeros(n)
q = rng.normal(1.0 / n, 0.3 / n, size=n)
benchmark = np.full(n, 1.0 / n)
inv1 = np.linalg.solve(sigma, np.ones(n))
dense_case = {
    "kind": "dense",
    "assets": n,
    "covariance": sigma.ravel().tolist(),
    "mean": mu.tolist(),
    "periodsPerYear": 252,
    "horizon": 1,
    "benchmark": benchmark.tolist(),
    "portfolios": [q.tolist()],
    "risk": [risk_figures(sigma, q, benchmark, mu, 252, 1)],
    "minimumVarianceWeights": (inv1 / inv1.sum()).tolist(),
}

# Principal angles between loading subspaces.
angle_cases = []
for (n, la, lb) in [(20, 3, 3), (50, 4, 2), (12, 2, 5)]:
    A = rng.normal(size=(n, la))
    B = rng.normal(size=(n, lb))
    # Make B share one direction with A, nearly share another.
    B[:, 0] = A @ rng.normal(size=la)
    if lb > 1:
        B[:, 1] = A[:, -1] + 1e-6 * rng.normal(size=n)
    ang = np.sort(scipy.linalg.subspace_angles(A, B))
    angle_cases.append({"n": n, "la": la, "lb": lb, "a": A.ravel().tolist(), "b": B.ravel().tolist(), "angles": ang.tolist()})

# Varimax: raw (scikit-learn's implementation) and Kaiser-normalised (R's stats::varimax).
varimax_cases = []
for (n, l) in [(10, 2), (24, 3)]:
    m = rng.normal(size=(n, l)) * 0.5
    m[: n // 2, 0] += 1.0
    m[n // 2:, 1] += 1.0
    from sklearn.decomposition._factor_analysis import _ortho_rotation
    raw = _ortho_rotation(m, method="varimax", tol=1e-14, max_iter=10000).T
    entry = {"n": n, "l": l, "loadings": m.ravel().tolist(), "raw": canonical_columns(raw).ravel().tolist()}
    try:
        normalised = r_varimax(m)
        entry["normalised"] = None if normalised is None else canonical_columns(normalised).ravel().tolist()
    except subprocess.CalledProcessError as err:
        sys.stderr.write(f"R varimax failed: {err.stderr}\n")
        entry["normalised"] = None
    varimax_cases.append(entry)

# Kupiec (1995) POF statistics.
kupiec = []
for (x, t, c) in [(0, 250, 0.99), (2, 250, 0.99), (6, 250, 0.99), (12, 250, 0.95), (25, 250, 0.95), (40, 500, 0.95), (250, 250, 0.95)]:
    p = 1 - c
    rate = x / t
    log_null = scipy.special.xlogy(t - x, 1 - p) + scipy.special.xlogy(x, p)
    log_alt = scipy.special.xlogy(t - x, 1 - rate) + scipy.special.xlogy(x, rate)
    lr = max(0.0, -2.0 * (log_null - log_alt))
    kupiec.append({"exceedances": x, "observations": t, "confidence": c, "statistic": float(lr), "pValue": float(scipy.stats.chi2.sf(lr, 1))})

# Factor scores with missing entries.
n, l, t = 9, 2, 6
w_load, psi, mu = invented_factor_model(n, l)
x = mu + rng.normal(size=(t, l)) @ w_load.T + rng.normal(size=(t, n)) * np.sqrt(psi)
x[1, 3] = np.nan
x[2, :6] = np.nan
x[4, 0] = np.nan
x[4, 8] = np.nan
scores, covs = [], []
for row in x:
    obs = ~np.isnan(row)
    wo = w_load[obs]
    pinv = 1 / psi[obs]
    m = np.eye(l) + wo.T @ (wo * pinv[:, None])
    cov = np.linalg.inv(m)
    scores.append((cov @ (wo.T @ (pinv * (row[obs] - mu[obs])))).tolist())
    covs.append(cov.ravel().tolist())
score_case = {
    "assets": n, "factors": l, "observations": t,
    "loadings": w_load.ravel().tolist(), "specificVariance": psi.tolist(), "mean": mu.tolist(),
    "values": [None if np.isnan(v) else float(v) for v in x.ravel()],
    "scores": scores, "posteriorCovariances": covs,
}

# Bias statistic and QLIKE on invented forecasts.
t = 60
vol = 0.01 * (1 + 0.5 * rng.random(t))
ret = rng.normal(size=t) * vol * 1.1
b = ret / vol
proxy = ret ** 2
evaluation = {
    "realisedReturns": ret.tolist(),
    "forecastVolatility": vol.tolist(),
    "bias": float(np.std(b, ddof=1)),
    "qlikeMean": float(np.mean(np.log(vol ** 2) + proxy / vol ** 2)),
    "qlikeNormalised": float(np.mean(proxy / vol ** 2 - np.log(proxy / vol ** 2) - 1)),
}

quantiles = {str(c): float(scipy.stats.norm.ppf(c)) for c in (0.9, 0.95, 0.975, 0.99, 0.995, 0.999)}

out = {
    "generator": "tests/reference/generate_risk.py",
    "versions": {"numpy": np.__version__, "scipy": scipy.__version__},
    "factorCases": cases,
    "denseCase": dense_case,
    "principalAngles": angle_cases,
    "varimax": varimax_cases,
    "kupiec": kupiec,
    "scores": score_case,
    "evaluation": evaluation,
    "normalQuantiles": quantiles,
}
os.makedirs(os.path.dirname(OUT), exist_ok=True)
with open(OUT, "w") as f:
    json.dump(out, f, indent=1)
print(f"wrote {OUT} ({os.path.getsize(OUT)} bytes)")
