#!/usr/bin/python3
"""Small ECSV catalogs written by astropy, for spinpop/compare/catalog tests.

Run with Debian's system python (python3-astropy 5.2):

    cd testdata && /usr/bin/python3 catalog_example.py

Writes
  catalog_example.ecsv          space-delimited ECSV as astropy writes it
                                (units, a masked parallax, a string column with
                                quotes, a description with commas, table meta);
  catalog_example_comma.ecsv    the same table with delimiter ','
  catalog_example.fits.gz       the same table as a FITS binary table, extension
                                'STARS' (HDU 2, after a one-row table 'RUN' in
                                HDU 1), gzip-compressed with mtime 0; the
                                masked parallax is NaN, units are TUNITn
  catalog_example_expected.csv  per row: Galactic l, b from astropy's
                                SkyCoord(...).galactic, distance 1000/parallax,
                                absolute magnitude m - 5 log10(d/10) and height
                                d sin b + z_sun with z_sun = 20.8 pc, computed
                                here with numpy (NaN where the parallax is masked).
The stars are invented.
"""
import astropy
import astropy.units as u
import numpy as np
from astropy.coordinates import SkyCoord
from astropy.table import MaskedColumn, Table

Z_SUN_PC = 20.8
rng = np.random.default_rng(11)
n = 12
t = Table()
t["star_id"] = np.arange(1000, 1000 + n)
t["prot"] = np.round(rng.uniform(0.5, 45.0, n), 4) * u.day
t["color"] = np.round(rng.uniform(0.6, 3.0, n), 4) * u.mag
t["app_mag"] = np.round(rng.uniform(9.0, 16.5, n), 4) * u.mag
plx = np.round(rng.uniform(0.8, 12.0, n), 4)
mask = np.zeros(n, bool)
mask[5] = True
t["plx"] = MaskedColumn(plx, mask=mask, unit=u.mas,
                             description="parallax, as measured: not corrected")
t["ra"] = np.round(rng.uniform(0, 360, n), 6) * u.deg
t["dec"] = np.round(np.degrees(np.arcsin(rng.uniform(-1, 1, n))), 6) * u.deg
t["name"] = [f'star "{i}", field' if i % 3 == 0 else f"star {i}" for i in range(n)]
t.meta["comment"] = "invented stars for reader tests"

t.write("catalog_example.ecsv", format="ascii.ecsv", overwrite=True)
t.write("catalog_example_comma.ecsv", format="ascii.ecsv", delimiter=",", overwrite=True)

from astropy.io import fits
import gzip
import io

run = fits.BinTableHDU(Table({"survey": ["Larkspur"], "release": [3]}), name="RUN")
stars = fits.table_to_hdu(t)
stars.name = "STARS"
buf = io.BytesIO()
fits.HDUList([fits.PrimaryHDU(), run, stars]).writeto(buf)
with open("catalog_example.fits.gz", "wb") as f:
    f.write(gzip.compress(buf.getvalue(), mtime=0))

c = SkyCoord(ra=np.asarray(t["ra"]) * u.deg, dec=np.asarray(t["dec"]) * u.deg, frame="icrs").galactic
d = 1000.0 / plx
absmag = np.asarray(t["app_mag"]) - 5 * np.log10(d / 10)
z = d * np.sin(c.b.rad) + Z_SUN_PC
with open("catalog_example_expected.csv", "w") as f:
    f.write(f"# from catalog_example.py, astropy {astropy.__version__}, z_sun = {Z_SUN_PC} pc\n")
    f.write("star_id,l_deg,b_deg,dist_pc,abs_mag,z_pc\n")
    for i in range(n):
        if mask[i]:
            f.write(f"{t['star_id'][i]},{c.l.deg[i]!r},{c.b.deg[i]!r},nan,nan,nan\n")
        else:
            f.write(f"{t['star_id'][i]},{c.l.deg[i]!r},{c.b.deg[i]!r},{d[i]!r},{absmag[i]!r},{z[i]!r}\n")
