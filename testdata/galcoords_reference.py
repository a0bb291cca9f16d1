#!/usr/bin/python3
"""Reference Galactic -> heliocentric and Galactocentric Cartesian positions.

Run with Debian's system python (it has astropy 5.2):

    /usr/bin/python3 testdata/galcoords_reference.py > testdata/galcoords_reference.csv

The Go package disk (galcoords_test.go) reads the CSV.

Frame parameters, passed explicitly (not astropy's defaults):
  galcen_distance = 8.122 kpc  (Sun-Galactic-centre distance, 3D)
  z_sun           = 20.8 pc    (Sun above the midplane; astropy tilts the frame
                                about y by asin(z_sun / galcen_distance))
  galcen_v_sun    = (12.9, 245.6, 7.78) km/s (irrelevant for positions; stated
                                for completeness)
  galcen_coord    = the ICRS position of Galactic (l, b) = (0, 0)
  roll            = computed below so that, before the tilt, the frame's axes
                    coincide with the Galactic Cartesian axes.

Why galcen_coord and roll are not astropy's defaults: astropy puts the x axis
toward the radio source at the dynamical centre, which in astropy's Galactic
frame lies about 1e-4 deg from (l, b) = (0, 0), and its default roll
(58.5986320306 deg) aligns the z axis with the Galactic pole to a similar
order. The disk model puts the Galactic centre at (l, b) = (0, 0) by
definition, so the reference uses astropy's machinery (translation, tilt
convention, axis directions) with the centre direction and roll of the model.
The header reports how far astropy's default centre direction and roll would
move the points (about 0.015 pc for these rows, ~1e-6 relative), to show the
size of the convention difference.
"""

import sys

import astropy
import astropy.units as u
import numpy as np
from astropy.coordinates import ICRS, CartesianRepresentation, Galactic, Galactocentric
from astropy.coordinates.builtin_frames.galactocentric import get_matrix_vectors

GALCEN_DISTANCE = 8.122 * u.kpc
Z_SUN = 20.8 * u.pc
GALCEN_V_SUN = [12.9, 245.6, 7.78] * (u.km / u.s)

# The Galactic centre direction of the model: (l, b) = (0, 0).
galcen_coord = Galactic(l=0 * u.deg, b=0 * u.deg).transform_to(ICRS())
galcen_coord = ICRS(ra=galcen_coord.ra, dec=galcen_coord.dec)

# ICRS -> Galactic rotation matrix: row i is Galactic axis i in ICRS.
icrs_axes = ICRS(CartesianRepresentation(np.eye(3) * u.one), representation_type="cartesian")
gal = icrs_axes.transform_to(Galactic())
gal.representation_type = "cartesian"
m_gal = np.vstack([gal.cartesian.x.value, gal.cartesian.y.value, gal.cartesian.z.value])
# Columns of the stacked array are the images of the ICRS unit vectors, so
# m_gal maps ICRS Cartesian to Galactic Cartesian.


def frame(roll, z_sun=Z_SUN):
    return Galactocentric(
        galcen_coord=galcen_coord,
        galcen_distance=GALCEN_DISTANCE,
        galcen_v_sun=GALCEN_V_SUN,
        z_sun=z_sun,
        roll=roll,
    )


# Rotation left after the centre alignment with roll = 0 and no tilt.
a0, _ = get_matrix_vectors(frame(0 * u.deg, z_sun=0 * u.pc))
x_rot = m_gal @ a0.T  # pure rotation about x
alpha = np.degrees(np.arctan2(x_rot[1, 2], x_rot[1, 1]))
roll = -alpha * u.deg
a1, _ = get_matrix_vectors(frame(roll, z_sun=0 * u.pc))
align_err = np.max(np.abs(a1 - m_gal))
if align_err > 1e-12:
    sys.exit(f"frame alignment failed: max |A - M_gal| = {align_err}")

# Points spanning the sky and 10 pc - 5 kpc.
rows = [
    (0.0, 0.0, 10.0),
    (0.0, 0.0, 5000.0),
    (180.0, 0.0, 5000.0),
    (90.0, 0.0, 1000.0),
    (270.0, 0.0, 2500.0),
    (0.0, 90.0, 300.0),
    (0.0, -90.0, 300.0),
    (45.0, 30.0, 50.0),
    (135.0, -30.0, 150.0),
    (225.0, 60.0, 700.0),
    (315.0, -60.0, 1200.0),
    (10.0, 5.0, 4000.0),
    (350.0, -5.0, 3000.0),
    (76.5, 13.3, 2000.0),
    (120.0, 1.0, 20.0),
    (200.0, -1.0, 80.0),
    (300.0, 45.0, 400.0),
    (30.0, -45.0, 5000.0),
    (359.9, 0.1, 4500.0),
    (160.0, 75.0, 3500.0),
    (250.0, -80.0, 600.0),
    (5.0, 2.0, 8000.0),
]
l = np.array([r[0] for r in rows]) * u.deg
b = np.array([r[1] for r in rows]) * u.deg
d = np.array([r[2] for r in rows]) * u.pc

g = Galactic(l=l, b=b, distance=d)
helio = g.cartesian
gc = g.transform_to(frame(roll))
gc_default = g.transform_to(
    Galactocentric(galcen_distance=GALCEN_DISTANCE, galcen_v_sun=GALCEN_V_SUN, z_sun=Z_SUN)
)
shift = np.sqrt(
    (gc.x - gc_default.x) ** 2 + (gc.y - gc_default.y) ** 2 + (gc.z - gc_default.z) ** 2
).to_value(u.pc)

print(f"# astropy {astropy.__version__}; Galactic (l, b, d) -> Galactocentric")
print(
    f"# galcen_distance_kpc=8.122 z_sun_pc=20.8 galcen_v_sun_kms=12.9,245.6,7.78 "
    f"galcen_coord_icrs_deg={galcen_coord.ra.deg:.10f},{galcen_coord.dec.deg:.10f} "
    f"roll_deg={roll.to_value(u.deg):.10f}"
)
print(
    "# galcen_coord is Galactic (l,b)=(0,0), roll aligns the untilted axes with "
    f"Galactic axes (max matrix deviation {align_err:.1e}); astropy's default "
    f"galcen_coord and roll would move these points by up to {shift.max():.3f} pc"
)
print("l_deg,b_deg,d_pc,x_helio_pc,y_helio_pc,z_helio_pc,x_gc_pc,y_gc_pc,z_gc_pc")
for i in range(len(rows)):
    print(
        ",".join(
            f"{v:.10f}"
            for v in (
                l[i].value,
                b[i].value,
                d[i].value,
                helio.x[i].to_value(u.pc),
                helio.y[i].to_value(u.pc),
                helio.z[i].to_value(u.pc),
                gc.x[i].to_value(u.pc),
                gc.y[i].to_value(u.pc),
                gc.z[i].to_value(u.pc),
            )
        )
    )
