#!/usr/bin/python3
"""Reference FITS files for the fitstable package, written by astropy.

Run from the repository root with Debian's astropy:

    apt-get install -y python3-astropy
    /usr/bin/python3 fitstable/testdata/fits_reference.py          # write the reference files
    /usr/bin/python3 fitstable/testdata/fits_reference.py --check  # read our writer's file back

Writing makes
  reference.fits       primary HDU with a small image, then BINTABLE 'STARS'
                       (every scalar type, unsigned integers by the TZERO
                       convention, masked values as TNULL and NaN, units,
                       strings, a vector column), an IMAGE extension 'MAP',
                       and BINTABLE 'EXTRA' (TSCAL/TZERO scaling, an explicit
                       TNULL, double-precision units);
  reference.fits.gz    the same file gzip-compressed (mtime 0, so the bytes
                       do not change from run to run);
  reference.json       every value astropy reads back, with each column's
                       TFORM, unit and header scaling, for the Go tests.

--check reads written_by_fitstable.fits (made by the Go test
TestWriterGolden with -update) with astropy, verifies it against the
standard (HDUList.verify('exception')) and compares every value with
written_by_fitstable.json. The Go tests pin that file byte for byte, so the
check stays true until the writer changes.
"""
import gzip
import json
import math
import os
import sys

import numpy as np
from astropy import units as u
from astropy.io import fits
from astropy.table import MaskedColumn, Table

HERE = os.path.dirname(os.path.abspath(__file__))


def stars_table():
    n = 7
    t = Table()
    t["flag"] = np.array([True, False, True, True, False, False, True])
    t["u8"] = np.array([0, 1, 2, 127, 128, 254, 255], dtype=np.uint8)
    t["i16"] = np.array([-32768, -1, 0, 1, 32767, 1234, -1234], dtype=np.int16)
    t["u16"] = np.array([0, 1, 32767, 32768, 65535, 40000, 7], dtype=np.uint16)
    t["i32"] = np.array([-2**31, -1, 0, 1, 2**31 - 1, 123456789, -7], dtype=np.int32)
    t["u32"] = np.array([0, 1, 2**31 - 1, 2**31, 2**32 - 1, 3000000000, 9], dtype=np.uint32)
    t["i64"] = np.array([-2**63, -1, 0, 1, 2**63 - 1, 2**53 + 1, -(2**40)], dtype=np.int64)
    t["u64"] = np.array([0, 1, 2**63 - 1, 2**63, 2**64 - 1, 2**63 + 12345, 3], dtype=np.uint64)
    t["period"] = MaskedColumn(np.array([12.5, 0.75, np.nan, 33.0, 1e-3, 45.25, 2.0], dtype=np.float32),
                               mask=[False, False, False, False, False, True, False], unit=u.day)
    t["plx"] = MaskedColumn(np.array([4.0, 1.5, 10.25, np.nan, 0.3, 2.5, -0.1]),
                            mask=[False, False, False, False, True, False, False], unit=u.mas)
    t["ra"] = Column_deg(np.array([10.0, 359.99, 0.0, 180.5, 45.125, 270.0, 1e-7]))
    t["count"] = MaskedColumn(np.array([5, 6, 7, 8, 9, 10, 11], dtype=np.int32),
                              mask=[False, True, False, False, False, False, True])
    t["name"] = np.array(["alpha", "b", "", "with space", "it's", "  lead", "twelve chars"])
    t["vec"] = np.arange(3 * n, dtype=np.float32).reshape(n, 3)
    return t


def Column_deg(values):
    from astropy.table import Column
    return Column(values, unit=u.deg)


def extra_hdu():
    # An explicit TNULL through astropy's low-level column interface; the
    # "scaled" column holds stored integers, and its TSCAL/TZERO cards are
    # added to the written file by add_scaling (astropy 5.2 with Debian's
    # numpy fails to write a scaled integer column itself; it reads one
    # fine, and the expected values come from that read).
    stored = np.array([0, 50, -1, 234, 0], dtype=np.int16)
    scaled = fits.Column(name="scaled", format="I", array=stored)
    # Signed bytes: stored v + 128, read back as v by TZERO2 = -128 (astropy
    # writes an int8 table column as logical, so this one is made by hand).
    i8 = fits.Column(name="i8", format="B", array=(np.array([-128, -1, 0, 1, 127], dtype=np.int16) + 128).astype(np.uint8))
    raw = np.array([1, -999, 3, 4, -999], dtype=np.int32)
    nulled = fits.Column(name="nulled", format="J", null=-999, array=raw)
    dist = fits.Column(name="dist", format="D", unit="pc", array=np.array([100.0, 250.5, 1e4, 3.25, 7.0]))
    hdu = fits.BinTableHDU.from_columns([scaled, i8, nulled, dist], name="EXTRA")
    return hdu


def add_scaling(raw, hdu_start):
    """Insert TSCAL1 = 0.01, TZERO1 = 10.0 and TZERO2 = -128 before the END
    card of the header that starts at byte hdu_start (there is room in its
    block)."""
    end = hdu_start
    while raw[end:end + 8] != b"END     ":
        end += 80
    cards = (b"TSCAL1  =                 0.01 / stored * TSCAL1 + TZERO1".ljust(80)
             + b"TZERO1  =                 10.0".ljust(80)
             + b"TZERO2  =                 -128 / signed bytes".ljust(80))
    block_end = hdu_start + ((end - hdu_start) // 2880 + 1) * 2880
    assert end + 80 + len(cards) <= block_end, "no room for the scaling cards"
    tail = raw[block_end - len(cards):block_end]
    assert tail == b" " * len(cards), "header padding is not blank"
    return raw[:end] + cards + raw[end:block_end - len(cards)] + raw[block_end:]


def values_of(path, hdu):
    """What astropy reads back from a table HDU, per column, JSON-ready:
    integers as decimal strings (JSON numbers lose 64-bit precision),
    floats as numbers, masked values (TNULL, and NaN in float columns) as
    null, vectors as lists."""
    with fits.open(path, uint=True) as hdul:
        header = hdul[hdu].header
    t = Table.read(path, hdu=hdu)
    out = []
    for i, name in enumerate(t.colnames):
        n = str(i + 1)
        col = t[name]
        entry = {
            "name": name,
            "tform": header["TFORM" + n],
            "unit": header.get("TUNIT" + n, ""),
            "tzero": str(header.get("TZERO" + n, "")),
            "tscal": str(header.get("TSCAL" + n, "")),
            "tnull": str(header.get("TNULL" + n, "")),
            "dtype": str(col.dtype),
        }
        vals = []
        for v in col:
            if np.ma.is_masked(v):
                vals.append(None)
            elif isinstance(v, np.ndarray):
                vals.append([float(x) for x in v])
            elif isinstance(v, (bool, np.bool_)):
                vals.append(bool(v))
            elif isinstance(v, (str, bytes, np.str_)):
                vals.append(str(v))
            elif np.issubdtype(type(v), np.integer):
                vals.append(str(int(v)))
            else:
                f = float(v)
                vals.append(None if math.isnan(f) else f)
        entry["values"] = vals
        out.append(entry)
    return out


def write_reference():
    primary = fits.PrimaryHDU(np.arange(15, dtype=np.int16).reshape(3, 5))
    stars = fits.table_to_hdu(stars_table())
    stars.name = "STARS"
    image = fits.ImageHDU(np.ones((4, 4), dtype=np.float32), name="MAP")
    hdul = fits.HDUList([primary, stars, image, extra_hdu()])
    path = os.path.join(HERE, "reference.fits")
    hdul.writeto(path, overwrite=True, checksum=False)
    with open(path, "rb") as f:
        raw = f.read()
    with fits.open(path) as h:
        extra_start = h.fileinfo(3)["hdrLoc"]
    raw = add_scaling(raw, extra_start)
    with open(path, "wb") as f:
        f.write(raw)
    with open(path + ".gz", "wb") as f:
        f.write(gzip.compress(raw, mtime=0))

    with fits.open(path, uint=True) as back:
        back.verify("exception")
        expected = {
            "source": "astropy " + __import__("astropy").__version__ + " via fitstable/testdata/fits_reference.py",
            "hdus": [{"number": i, "extname": h.name, "xtension": h.header.get("XTENSION", "")}
                     for i, h in enumerate(back)],
            "tables": {back[i].name: {"hdu": i, "rows": back[i].header["NAXIS2"], "columns": values_of(path, i)}
                       for i in (1, 3)},
        }
    with open(os.path.join(HERE, "reference.json"), "w") as f:
        json.dump(expected, f, indent=1)
        f.write("\n")
    print("wrote reference.fits (%d bytes), reference.fits.gz, reference.json" % len(raw))


def check_ours():
    path = os.path.join(HERE, "written_by_fitstable.fits")
    with open(os.path.join(HERE, "written_by_fitstable.json")) as f:
        want = json.load(f)
    with fits.open(path, uint=True) as hdul:
        hdul.verify("exception")
        hdu = hdul[1]
        assert hdu.name == want["extname"], (hdu.name, want["extname"])
        t = Table.read(hdu)  # applies TNULL masks and units
        assert len(t) == len(want["rows"]), (len(t), len(want["rows"]))
        for c, meta in zip(t.columns.values(), want["columns"]):
            assert c.name == meta["name"], (c.name, meta["name"])
            unit = "" if c.unit is None else c.unit.to_string()
            assert unit == meta["unit"] or (c.unit is not None and c.unit == u.Unit(meta["unit"])), (c.name, unit, meta["unit"])
        for j, row in enumerate(want["rows"]):
            for k, meta in enumerate(want["columns"]):
                got = t[meta["name"]][j]
                w = row[k]
                masked = np.ma.is_masked(got)
                if w is None:
                    if meta["type"] in ("float32", "float64"):
                        assert masked or math.isnan(float(got)), (j, meta["name"], got)
                    elif meta["type"] == "bool":
                        # The standard's null logical is a zero byte; astropy
                        # 5.2 reads it as False rather than masking it.
                        assert not bool(got), (j, meta["name"], got)
                    elif meta["type"] == "string":
                        assert masked or str(got) == "", (j, meta["name"], got)
                    else:
                        assert masked, (j, meta["name"], got)
                    continue
                if meta["type"] == "string" and w == "" and masked:
                    continue  # astropy masks an empty string on reading
                assert not masked, (j, meta["name"])
                if meta["type"] == "bool":
                    assert bool(got) == w, (j, meta["name"], got, w)
                elif meta["type"] == "string":
                    assert str(got) == w, (j, meta["name"], got, w)
                elif meta["type"] in ("int16", "int32", "int64"):
                    assert int(got) == int(w), (j, meta["name"], got, w)
                else:
                    assert float(got) == float(w), (j, meta["name"], got, w)
    print("astropy reads written_by_fitstable.fits back: %d rows, %d columns, all equal; verify('exception') passed"
          % (len(want["rows"]), len(want["columns"])))


if __name__ == "__main__":
    if "--check" in sys.argv[1:]:
        check_ours()
    else:
        write_reference()
