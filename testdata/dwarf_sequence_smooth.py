#!/usr/bin/python3
"""Reference values for model.Relations: scipy's make_smoothing_spline (the cubic
smoothing spline minimising sum w (y - f)^2 + lam * integral f''^2) through the
embedded mean dwarf sequence, in log10 mass, with the project's smoothing parameter
and the Sun pinned at 1 Msun (IAU 2015 Resolution B3: Teff 5772 K, L = 1 Lsun).

Run with Debian's system python (scipy 1.10):
    /usr/bin/python3 testdata/dwarf_sequence_smooth.py > testdata/dwarf_sequence_smooth.csv
from the repository root. The table itself is model/tables/mean-dwarf-sequence.csv;
lam must equal model.RelationsSmoothing.
"""
import csv
import os

import numpy as np
import scipy
from scipy.interpolate import make_smoothing_spline

LAM = 1e-4          # model.RelationsSmoothing
SUN_WEIGHT = 1e8    # weight of the pinned Sun against 1 per row

here = os.path.dirname(os.path.abspath(__file__))
table = os.path.join(here, "..", "model", "tables", "mean-dwarf-sequence.csv")
with open(table) as f:
    rows = list(csv.DictReader(line for line in f if not line.startswith("#")))
mass = np.array([float(r["mass_msun"]) for r in rows])
order = np.argsort(mass)
x = np.log10(mass[order])
sun = int(np.argmin(np.abs(mass[order] - 1.0)))
assert mass[order][sun] == 1.0

fits = {}
for col, pin in [("teff_k", 5772.0), ("log_l_lsun", 0.0), ("b_v_mag", None),
                 ("v_ks_mag", None), ("v_ic_mag", None), ("abs_v_mag", None)]:
    y = np.array([float(r[col]) for r in rows])[order]
    w = np.ones_like(y)
    if pin is not None:
        y[sun], w[sun] = pin, SUN_WEIGHT
    fits[col] = make_smoothing_spline(x, y, w=w, lam=LAM)

# Masses between and on the rows, spread over the whole table.
rng = np.random.default_rng(20240515)
probe = np.sort(np.concatenate([
    10 ** rng.uniform(x[0], x[-1], 80),
    mass[order][1:-1],
]))

print(f"# scipy {scipy.__version__} make_smoothing_spline, lam = {LAM}, x = log10(mass), "
      "Sun pinned at 1 Msun; radius from L = R^2 (Teff/5772 K)^4, abs_mag_ks = abs_mag_v - v_ks")
print("mass_msun,teff_k,log_l_lsun,radius_rsun,b_v,v_ks,v_ic,abs_mag_v,abs_mag_ks")
for m in probe:
    t = np.log10(m)
    teff = float(fits["teff_k"](t))
    logl = float(fits["log_l_lsun"](t))
    r = np.sqrt(10 ** logl) / (teff / 5772.0) ** 2
    bv, vks, vic, mv = (float(fits[c](t)) for c in ("b_v_mag", "v_ks_mag", "v_ic_mag", "abs_v_mag"))
    print(f"{m:.9g},{teff:.6f},{logl:.8f},{r:.8f},{bv:.8f},{vks:.8f},{vic:.8f},{mv:.8f},{mv - vks:.8f}")
