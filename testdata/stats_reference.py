#!/usr/bin/python3
"""Reference values for spinpop/compare/stats, computed with scipy.

Run with Debian's system python (python3-scipy 1.10):

    /usr/bin/python3 testdata/stats_reference.py > testdata/stats_reference.json

Every number in stats_reference.json comes from a scipy call named beside it
here; the Go tests in compare/stats read the JSON and compare.
"""
import json
import sys

import numpy as np
import scipy
from scipy import special, stats

out = {"generator": "testdata/stats_reference.py",
       "scipy_version": scipy.__version__,
       "numpy_version": np.__version__}

rng = np.random.default_rng(20240611)

# --- Poisson log-likelihood sums: scipy.stats.poisson.logpmf(n, mu).sum()
poisson = []
cases = [
    ([0.5, 1.0, 2.5, 10.0, 0.1], [0, 1, 3, 12, 0]),
    ([3.2, 7.7, 0.01, 45.0, 1500.0, 2000.5], [2, 9, 0, 51, 1480, 2031]),
    ([0.0, 2.0, 0.0], [0, 1, 0]),  # empty bins with zero expectation
]
mu = rng.uniform(0.2, 30.0, size=200)
cases.append((mu.tolist(), rng.poisson(mu).tolist()))
for m, n in cases:
    poisson.append({"mu": list(map(float, m)), "n": list(map(int, n)),
                    "logL": float(stats.poisson.logpmf(n, m).sum())})
out["poisson"] = poisson

# --- Multinomial: scipy.stats.multinomial.logpmf(n, N, p), p = mu/sum(mu)
multinomial = []
for m, n in cases[:2] + cases[3:]:
    m = np.asarray(m, float)
    n = np.asarray(n)
    multinomial.append({"mu": m.tolist(), "n": n.tolist(),
                        "logL": float(stats.multinomial.logpmf(n, n.sum(), m / m.sum()))})
out["multinomial"] = multinomial

# --- One-sample two-sided KS distribution: scipy.stats.kstwo.sf(d, n),
# on points chosen to reach every branch of scipy's _kolmogn.
kstwo = []
for n in [1, 5, 20, 100, 140, 141, 500, 2000, 50000, 100001, 300000]:
    ds = {0.3 / n, 0.8 / n, 1.0 / n, 0.55, 0.9, 1 - 1.5 / n if n > 3 else 0.7}
    for s in [0.05, 0.3, 0.7, 0.75, 0.9, 1.5, 2.1, 3.0, 3.9, 4.5, 8.0, 30.0, 200.0, 400.0]:
        d = (s / n) ** 0.5
        if d < 1:
            ds.add(d)
    for d in sorted(ds):
        if 0 < d < 1:
            kstwo.append({"n": n, "d": d, "sf": float(stats.kstwo.sf(d, n))})
out["kstwo_sf"] = kstwo

# --- One-sided: scipy.special.smirnov(n, d) = P(D_n+ >= d)
smirnov = []
for n in [1, 3, 10, 57, 300, 4000, 60000]:
    for d in [0.001, 0.01, 0.05, 0.1, 0.2, 0.35, 0.5, 0.8, 0.99]:
        smirnov.append({"n": n, "d": d, "sf": float(special.smirnov(n, d))})
out["smirnov"] = smirnov

# --- Two-sample KS: scipy.stats.ks_2samp(x, y, method='asymp')
ks = []
pairs = [
    (rng.normal(0, 1, 40), rng.normal(0.3, 1, 55)),
    (rng.normal(0, 1, 300), rng.normal(0.1, 1.2, 250)),
    (rng.normal(0, 1, 3000), rng.normal(0.05, 1, 5000)),
    (np.round(rng.normal(0, 2, 400)), np.round(rng.normal(0.4, 2, 300))),  # ties
    (rng.uniform(0, 1, 7), rng.uniform(0.5, 1.5, 9)),
]
for x, y in pairs:
    r = stats.ks_2samp(x, y, method="asymp")
    ks.append({"x": x.tolist(), "y": y.tolist(),
               "D": float(r.statistic), "p": float(r.pvalue)})
out["ks_2samp_asymp"] = ks

# --- Anderson-Darling k-sample: scipy.stats.anderson_ksamp(samples) (midrank)
ad = []
sets = [
    [rng.normal(0, 1, 50), rng.normal(0.5, 1, 30)],
    [rng.normal(0, 1, 50), rng.normal(0, 1, 30), rng.normal(0, 1, 20)],
    [np.round(rng.normal(0, 1.5, 80)), np.round(rng.normal(0.3, 1.5, 60))],  # ties
    [rng.normal(0, 1, 200), rng.normal(1.0, 1, 150)],  # p floored
    [rng.normal(0, 1, 120), rng.normal(0.25, 1, 100), rng.normal(0, 1.3, 90)],
]
import warnings
# Add pairs with moderate shifts until three p-values fall inside the
# interpolated range (0.001, 0.25), so the polyfit branch is exercised.
inside = 0
while inside < 3:
    s = [rng.normal(0, 1, 60), rng.normal(0.4, 1, 45)]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        p = stats.anderson_ksamp(s).pvalue
    if 0.001 < p < 0.25:
        sets.append(s)
        inside += 1
for s in sets:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = stats.anderson_ksamp(s)
    ad.append({"samples": [a.tolist() for a in s],
               "statistic": float(r.statistic),
               "critical": [float(c) for c in r.critical_values],
               "p": float(r.pvalue)})
out["anderson_ksamp"] = ad

# --- Chernoff mixture: 0.5 * scipy.stats.chi2.sf(t, 1)
chi2 = []
for t in [1e-6, 0.01, 0.5, 1.0, 2.706, 3.841, 5.0, 9.0, 25.0, 60.0]:
    chi2.append({"t": t, "chi2_sf_1dof": float(stats.chi2.sf(t, 1))})
out["chi2_sf"] = chi2

# --- Binomial intervals: Clopper-Pearson from scipy.stats.beta.ppf and
# Wilson from scipy.stats.binomtest(k, n).proportion_ci(method='wilson')
binom = []
for k, n, conf in [(0, 10, 0.95), (3, 20, 0.95), (10, 10, 0.9), (47, 130, 0.68),
                   (1, 1000, 0.95), (500, 1000, 0.99)]:
    a = 1 - conf
    lo = float(stats.beta.ppf(a / 2, k, n - k + 1)) if k > 0 else 0.0
    hi = float(stats.beta.ppf(1 - a / 2, k + 1, n - k)) if k < n else 1.0
    w = stats.binomtest(k, n).proportion_ci(confidence_level=conf, method="wilson")
    binom.append({"k": k, "n": n, "conf": conf, "cp_lo": lo, "cp_hi": hi,
                  "wilson_lo": float(w.low), "wilson_hi": float(w.high)})
out["binomial"] = binom

# One record per line keeps the file readable and its diffs small.
lines = []
for key, val in out.items():
    if isinstance(val, list):
        body = ",\n".join("  " + json.dumps(v) for v in val)
        lines.append(f" {json.dumps(key)}: [\n{body}\n ]")
    else:
        lines.append(f" {json.dumps(key)}: {json.dumps(val)}")
sys.stdout.write("{\n" + ",\n".join(lines) + "\n}\n")
