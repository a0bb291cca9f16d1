#!/usr/bin/env python3
"""Writes the malformed catalogs of spinpop's input corpus (standard library
only): run from this folder, `python3 make_catalogs.py`. Each file is one way
a catalog can be wrong; cmd/spinpop/corpus_test.go says what spinpop must
answer to each. The FITS and Parquet cases are damaged copies of the
reference files of fitstable/ and parquettable/ (written by astropy and
hyparquet-writer, see their scripts)."""
import gzip
import os
import random
import struct
import zlib

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", "..", "..", "..", ".."))

HEADER = "prot_d,bv_mag,mv_mag,z_pc\n"
ROWS = "".join(f"{8 + i % 20},{0.6 + 0.01 * (i % 80):.2f},{4.5 + 0.02 * (i % 100):.2f},{(i % 30) * 20 - 300}\n" for i in range(200))
GOOD = HEADER + ROWS

ECSV_HEAD = """# %ECSV 1.0
# ---
# datatype:
# - {name: prot_d, unit: d, datatype: float64}
# - {name: bv_mag, unit: mag, datatype: float64}
# - {name: mv_mag, unit: mag, datatype: float64}
# - {name: z_pc, unit: pc, datatype: float64}
"""
ECSV_BODY = "prot_d bv_mag mv_mag z_pc\n" + ROWS.replace(",", " ")

rnd = random.Random(13)


def rand_bytes(n):
    # Random bytes without NUL or line breaks: the hardest case, one long
    # "header row" of binary.
    return bytes(b for b in (rnd.getrandbits(8) for _ in range(n * 2)) if b not in (0, 10))[:n]


def write(name, data):
    if isinstance(data, str):
        data = data.encode("utf-8")
    with open(os.path.join(HERE, name), "wb") as f:
        f.write(data)


def gz(data):
    if isinstance(data, str):
        data = data.encode("utf-8")
    return gzip.compress(data, mtime=0)


def read(rel):
    with open(os.path.join(ROOT, rel), "rb") as f:
        return f.read()


# A good file, the control: the corpus test reads it without error.
write("good.csv", GOOD)

# Plain CSV.
write("empty.csv", "")
write("comments-only.csv", "# a catalog\n# with nothing in it\n")
write("header-only.csv", HEADER)
write("semicolons.csv", GOOD.replace(",", ";"))
write("tabs.csv", GOOD.replace(",", "\t"))
write("missing-column.csv", "prot_d,bv_mag,mv_mag\n10,0.7,5\n")
write("misspelt-column.csv", GOOD.replace("prot_d", "prot_days", 1))
write("header-unclosed-quote.csv", '"prot_d,bv_mag,mv_mag,z_pc\n10,0.7,5,30\n')
write("binary.csv", rand_bytes(4000))
write("nul-bytes.csv", b"prot_d,bv_mag\x00\x00,mv_mag,z_pc\n10,0.7,5,30\n")
write("utf16.csv", "\ufeff".encode("utf-16-le") + GOOD.encode("utf-16-le"))
write("spreadsheet.csv", b"PK\x03\x04\x14\x00\x06\x00\x08\x00" + rand_bytes(2000))
write("html-page.csv", "<!DOCTYPE html>\n<html><head><title>Not found</title></head><body>404</body></html>\n")
write("one-line-no-breaks.csv", "prot_d,bv_mag,mv_mag,z_pc " + "10,0.7,5,30 " * 20)
write("long-line.csv.gz", gz("x" * (2 << 20) + "\n"))
write("first-row-semicolons.csv", HEADER + "10;0.7;5;30\n")

# gzip.
write("random.csv.gz", gz(rand_bytes(4000)))
write("trailing-bytes.csv.gz", gz(GOOD) + b"appended by mistake\n")
full = gz(GOOD)
write("truncated.csv.gz", full[: len(full) // 2])
bad = bytearray(full)
bad[-6] ^= 0xFF  # CRC-32 of the trailer (RFC 1952, section 2.3)
write("bad-checksum.csv.gz", bytes(bad))
write("not-really-gzip.csv.gz", b"\x1f\x8b" + b"\xff" * 40)
write("gzip-of-parquet.parquet.gz", gz(read("parquettable/testdata/reference.parquet")))
write("gzip-of-empty.csv.gz", gz(""))

# ECSV.
write("ecsv-version-2.ecsv", ECSV_HEAD.replace("%ECSV 1.0", "%ECSV 2.0") + ECSV_BODY)
write("ecsv-no-separator.ecsv", ECSV_HEAD.replace("# ---\n", "") + ECSV_BODY)
write("ecsv-tab-in-yaml.ecsv", ECSV_HEAD.replace("# - {name: bv_mag", "#\t- {name: bv_mag") + ECSV_BODY)
write("ecsv-indented-hash.ecsv", ECSV_HEAD.replace("# - {name: bv_mag", "\t# - {name: bv_mag") + ECSV_BODY)
write("ecsv-unclosed-quote.ecsv", ECSV_HEAD.replace("unit: d,", "unit: 'd,") + ECSV_BODY)
write("ecsv-no-datatype.ecsv", "# %ECSV 1.0\n# ---\n# meta: {}\n" + ECSV_BODY)
write("ecsv-names-differ.ecsv", ECSV_HEAD + ECSV_BODY.replace("mv_mag", "absmag", 1))
write("ecsv-wrong-unit.ecsv", ECSV_HEAD.replace("{name: prot_d, unit: d,", "{name: prot_d, unit: h,") + ECSV_BODY)
write("ecsv-pipe-delimiter.ecsv", ECSV_HEAD.replace("# datatype:", "# delimiter: '|'\n# datatype:") + ECSV_BODY)
write("ecsv-datatype-not-list.ecsv", "# %ECSV 1.0\n# ---\n# datatype: float64\n" + ECSV_BODY)
write("ecsv-entry-without-name.ecsv", ECSV_HEAD.replace("{name: z_pc, unit: pc,", "{unit: pc,") + ECSV_BODY)
write("ecsv-header-only.ecsv", ECSV_HEAD)
write("ecsv-comma-body-undeclared.ecsv", ECSV_HEAD + GOOD)

# FITS (damaged copies of astropy's reference file).
fits = read("fitstable/testdata/reference.fits")
write("fits-truncated.fits", fits[: 2880 * 2 + 100])
write("fits-header-cut.fits", fits[:1000])
write("fits-garbage-header.fits", b"SIMPLE  =                    T" + b"\x00" * 3000)
write("fits-columns-differ.fits", fits)
write("fits-truncated.fits.gz", gz(fits)[:600])

# Parquet (damaged copies of hyparquet-writer's reference file).
pq = read("parquettable/testdata/reference.parquet")
write("parquet-truncated.parquet", pq[: len(pq) // 2])
write("parquet-no-footer-magic.parquet", pq[:-4] + b"XXXX")
write("parquet-footer-length-huge.parquet", pq[:-8] + struct.pack("<I", 0x7FFFFFF0) + b"PAR1")
write("parquet-columns-differ.parquet", pq)

# A folder where a file is expected.
os.makedirs(os.path.join(HERE, "folder.csv"), exist_ok=True)
write(os.path.join("folder.csv", "README"), "A folder named like a catalog: spinpop must refuse it.\n")
