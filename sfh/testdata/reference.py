#!/usr/bin/python3
"""Reference values for the sfh package tests, from SciPy.

Run with Debian's system Python (python3-scipy 1.10):
    /usr/bin/python3 reference.py > reference.json

The histories below are written out again here from the package's documented
definitions (sfh/doc.go, sfh/component.go), independently of the Go code:
truncated Gaussian bursts from scipy.stats.truncnorm, exponentials and dips by
hand, integrals by scipy.integrate.quad.
"""
import json

import numpy as np
import scipy
from scipy import integrate, special, stats


def truncnorm_case(mu, sigma, lo, hi, x, u):
    a, b = (lo - mu) / sigma, (hi - mu) / sigma
    d = stats.truncnorm(a, b, loc=mu, scale=sigma)
    return dict(mu=mu, sigma=sigma, lo=lo, hi=hi, x=x, cdf=float(d.cdf(x)),
                u=u, ppf=float(d.ppf(u)), mean=float(d.mean()))


def history(max_age, smooth, bursts, dips):
    """smooth: list of (kind, params, weight); bursts: (age, width, frac);
    dips: (age, width, depth). Returns the normalised rate and break points."""
    burst_sum = sum(f for _, _, f in bursts)
    wsum = sum(w for _, _, w in smooth)
    comps = []
    pts = [0.0, max_age]
    for kind, par, w in smooth:
        share = (1 - burst_sum) * w / wsum
        if kind == "constant":
            comps.append((share, lambda t: np.where((t >= 0) & (t <= max_age), 1 / max_age, 0.0)))
        elif kind == "exponential":
            T = par
            norm = T * np.expm1(max_age / T)  # integral of exp(t/T) over [0, max_age]
            comps.append((share, lambda t, T=T, norm=norm: np.exp(t / T) / norm))
        elif kind == "piecewise":
            edges, rates = par
            tot = sum(r * (edges[i + 1] - edges[i]) for i, r in enumerate(rates))
            pts += list(edges)

            def f(t, edges=edges, rates=rates, tot=tot):
                for i, r in enumerate(rates):
                    if edges[i] <= t < edges[i + 1] or (i == len(rates) - 1 and t == edges[-1]):
                        return r / tot
                return 0.0
            comps.append((share, f))
    for age, width, frac in bursts:
        d = stats.truncnorm(-age / width, (max_age - age) / width, loc=age, scale=width)
        comps.append((frac, d.pdf))
        pts += [age + k * width for k in (-4, -2, -1, 0, 1, 2, 4) if 0 < age + k * width < max_age]

    def dipf(t):
        f = 1.0
        for age, width, depth in dips:
            f *= 1 - depth * np.exp(-0.5 * ((t - age) / width) ** 2)
        return f
    for age, width, _ in dips:
        pts += [age + k * width for k in (-4, -2, -1, 0, 1, 2, 4) if 0 < age + k * width < max_age]
    pts = sorted(set(pts))

    def raw(t):
        return float(sum(s * f(t) for s, f in comps)) * dipf(t)

    def integral(lo, hi, moment=0):
        p = [x for x in pts if lo < x < hi]
        val, _ = integrate.quad(lambda t: raw(t) * t ** moment, lo, hi, points=p or None,
                                limit=500, epsabs=1e-14, epsrel=1e-12)
        return val
    norm = integral(0, max_age)
    return (lambda t: raw(t) / norm), (lambda lo, hi, m=0: integral(lo, hi, m) / norm)


def mixture_case(name, max_age, smooth, bursts, dips, ages, mean_range):
    rate, integ = history(max_age, smooth, bursts, dips)
    lo, hi = mean_range
    return dict(name=name, ages=ages,
                rate=[rate(t) for t in ages],
                cumulative=[integ(0, t) for t in ages],
                mean_range=[lo, hi],
                mean_age=integ(lo, hi, 1) / integ(lo, hi))


out = dict(
    generator="sfh/testdata/reference.py with SciPy " + scipy.__version__,
    normal_ppf_0975=float(stats.norm.ppf(0.975)),
    truncnorm=[
        truncnorm_case(2.0, 0.3, 0.0, 13.0, 2.25, 0.3),
        truncnorm_case(0.0, 1.0, 0.0, 40.0, 1.0, 0.95),
        truncnorm_case(1.0, 0.1, 1.8, 1.9, 1.85, 0.5),
        truncnorm_case(10.0, 0.5, 5.5, 6.0, 5.9, 0.25),
        truncnorm_case(6.0, 50.0, 0.0, 13.0, 4.0, 0.7),
        truncnorm_case(3.0, 1.0, 2.0, 5.0, 3.5, 0.9),
    ],
    mixtures=[
        mixture_case("mix1", 13.0,
                     [("constant", None, 1.0), ("exponential", 3.0, 2.0)],
                     [(2.0, 0.3, 0.2)], [(5.0, 0.5, 0.6)],
                     [0.5, 1.0, 2.0, 4.5, 5.0, 8.0, 12.0], (4.0, 6.0)),
        mixture_case("mix2", 13.0,
                     [("exponential", -2.0, 1.0),
                      ("piecewise", ([0.0, 1.0, 3.0, 6.0, 13.0], [3.0, 0.0, 1.0, 0.5]), 1.0)],
                     [(10.0, 1.0, 0.1)], [(1.5, 0.3, 1.0), (8.0, 2.0, 0.3)],
                     [0.25, 1.5, 2.0, 3.5, 7.0, 10.0, 12.9], (0.0, 13.0)),
    ],
    kolmogorov=[dict(x=x, sf=float(special.kolmogorov(x)))
                for x in (0.5, 0.8, 1.2238, 1.3581, 1.6276, 1.9495)],
)
print(json.dumps(out, indent=1))
