#!/usr/bin/python3
"""Reference values for model.Relations: scipy's PCHIP (Fritsch-Butland monotone cubic)
through the embedded dwarf-sequence table, in log10 mass.

Run with Debian's system python (scipy 1.10):
    /usr/bin/python3 testdata/dwarf_sequence_pchip.py > testdata/dwarf_sequence_pchip.csv
from the repository root. The table itself is model/tables/dwarf_sequence.csv.
"""
import csv
import os

import numpy as np
import scipy
from scipy.interpolate import PchipInterpolator

here = os.path.dirname(os.path.abspath(__file__))
table = os.path.join(here, "..", "model", "tables", "dwarf_sequence.csv")
cols = ["teff_k", "log_l_lsun", "radius_rsun", "b_v", "v_ks", "v_ic", "abs_mag_v", "abs_mag_ks"]

with open(table) as f:
    rows = list(csv.DictReader(line for line in f if not line.startswith("#")))
mass = np.array([float(r["mass_msun"]) for r in rows])
order = np.argsort(mass)
x = np.log10(mass[order])

# Masses between and on the rows, spread over the whole table.
rng = np.random.default_rng(20240611)
probe = np.sort(np.concatenate([
    10 ** rng.uniform(x[0], x[-1], 60),
    mass[order][1:-1],
]))

print("# scipy %s PchipInterpolator in log10(mass_msun) through %s" % (scipy.__version__, "model/tables/dwarf_sequence.csv"))
print("mass_msun," + ",".join(cols))
interp = {c: PchipInterpolator(x, np.array([float(r[c]) for r in rows])[order]) for c in cols}
for m in probe:
    print("%.12g," % m + ",".join("%.12g" % float(interp[c](np.log10(m))) for c in cols))
