#!/usr/bin/env python3
"""Seed corpora for the fuzz targets, from the repository's own files.

Run from the repository's top directory:
    python3 tests/fuzz/make_seeds.py ASSIGNED.csv...
writes tests/fuzz/work/<target>/ (not committed; `cargo fuzz cmin` then keeps the
inputs that add coverage in tests/fuzz/corpus/<target>/). The ASSIGNED files are
outputs of `termsight assign --format csv` (the CSV that `optimize` reads).
Every seed is kept under 8 KiB, the -max_len of the runs.
"""
import glob
import hashlib
import os
import random
import sys

random.seed(20261203)  # fixed seed: the same seeds every time
LIMIT = 8000
OUT = "tests/fuzz/work"


def put(target, data):
    if isinstance(data, str):
        data = data.encode("utf-8")
    data = data[:LIMIT]
    d = os.path.join(OUT, target)
    os.makedirs(d, exist_ok=True)
    name = hashlib.sha1(data).hexdigest()
    with open(os.path.join(d, name), "wb") as f:
        f.write(data)


def head(path, rows):
    with open(path, encoding="utf-8") as f:
        lines = f.read().splitlines(True)
    comments = [l for l in lines if l.startswith("#")][:3]
    body = [l for l in lines if not l.startswith("#")]
    if len(body) <= rows + 1:
        return "".join(comments + body)
    pick = sorted(random.sample(range(1, len(body)), rows))
    return "".join(comments + [body[0]] + [body[i] for i in pick])


# Line lists: the shipped example and variants of its format; the first byte of
# each input chooses the reader's options (see src/fuzzing.rs).
example = open("examples/he-ne-teaching-tube/lines.csv", encoding="utf-8").read()
rows = [l for l in example.splitlines() if l and not l.startswith("#")]
header, data = rows[0], rows[1:15]
variants = [
    example,
    "\n".join([header] + data) + "\n",
    "\ufeff" + "\r\n".join([header] + data) + "\r\n",
    "\n".join([header.replace(",", "\t")] + [r.replace(",", "\t") for r in data]) + "\n",
    "\n".join([header.replace(",", "  ")] + [r.replace(",", "   ") + " # note" for r in data]) + "\n",
    "wavenumber_cm1,uncertainty_cm1,medium\n25708.844,0.2,vacuum\n17016.96,0.05,\n",
    "wavelength_A,uncertainty_A,intensity,note\n5875.621,0.02,1200,\"strong, \"\"clean\"\"\"\n3888.648,0.01,,\n",
    "wavelength_um uncertainty_um\n1.0830 0.0001\n2.0581 0.0002\n",
    "# comment only\n\nwavelength_nm\n121.567\n587.5621\n",
    "wavelength_nm,uncertainty_cm1,medium,intensity\n185.0,0.1,air,1\n199.99,0.1,,2\n200.0,0.1,,3\n",
]
for v in variants:
    for choice in (0x00, 0x01, 0x22, 0x4B, 0x85):
        put("line_list", bytes([choice]) + v.encode("utf-8"))

# Level tables: the compiled tables, a sample of rows of each.
for path in sorted(glob.glob("reference-levels/*.csv")):
    if path.endswith("-lines.csv"):
        continue
    put("level_table", head(path, 25))
for path in sorted(glob.glob("tests/data/reference-data/*-levels*.csv"))[:4]:
    put("level_table", head(path, 15))

# Models: the example models and the test model.
for path in sorted(glob.glob("examples/level-models/*.toml")) + sorted(glob.glob("tests/data/*.toml")):
    put("model", open(path, encoding="utf-8").read())

MG = """species = "Mg I"
model_uncertainty_cm1 = 120

[[configuration]]
label = "3s2"
Eav = 0.0

[[configuration]]
label = "3s.3p"
Eav = 30000.0
"G1(3s,3p)" = { value = 12000.0, uncertainty = 150.0 }
"zeta(3p)" = { value = 40.0, vary = "fixed" }

[[configuration]]
label = "3p2"
Eav = 60000
"F2(3p,3p)" = 30000.0
"zeta(3p)" = { tie = "zeta(3p)@3s.3p", ratio = 1.1 }

[[interaction]]
between = ["3s2", "3p2"]
"R1(3s3s,3p3p)" = 15000.0

[dipole]
"P(3s,3p)" = -2.6
"""
put("model", MG)
put("model", MG.replace('"zeta(3p)@3s.3p"', '"zeta(3p)"'))
put("model", MG.replace('"R1(3s3s,3p3p)" = 15000.0', '"R1(3s3s,3p3p)" = { tie = "G1(3s,3p)", ratio = 0.5 }'))
put("model", 'species = "Ti III"\n[[configuration]]\nlabel = "3d2"\nEav = 0\n"F2(3d)" = 1e4\n"F4(3d)" = { tie = "F2(3d)", ratio = 0.63 }\n"zeta(3d)" = 120\n')

# Notation: every distinct label field of the compiled tables, alone and as the
# configuration,term,J triple of a row; and the parameter names of the models.
seen = set()
texts = []
for path in sorted(glob.glob("reference-levels/*.csv")):
    if path.endswith("-lines.csv"):
        continue
    for line in open(path, encoding="utf-8"):
        if line.startswith("#") or line.startswith("species,"):
            continue
        fields = line.split(",")
        if len(fields) < 4:
            continue
        for text in (fields[0], fields[1], fields[2], fields[3], ",".join(fields[1:4])):
            if text not in seen:
                seen.add(text)
                texts.append(text)
# A sample keeps the seed corpus small; the minimisation keeps what adds coverage.
for text in random.sample(texts, min(len(texts), 1500)):
    put("notation", text)
for path in sorted(glob.glob("examples/level-models/*.toml")):
    for line in open(path, encoding="utf-8"):
        if line.startswith('"'):
            put("notation", line.split('"')[1])

# Assignment CSVs: outputs of `termsight assign --format csv`, in pieces.
for path in sys.argv[1:]:
    text = open(path, encoding="utf-8").read()
    lines = text.splitlines(True)
    comments = [l for l in lines if l.startswith("#")]
    body = [l for l in lines if not l.startswith("#")]
    put("assignments", "".join(comments[:4] + body[:20]))
    for start in range(1, len(body), 25):
        put("assignments", "".join([body[0]] + body[start:start + 25]))
    # With an accept column.
    accepted = [body[0].rstrip("\n") + ",accept\n"] + [
        l.rstrip("\n") + (",yes\n" if i % 2 else ",no\n") for i, l in enumerate(body[1:20])
    ]
    put("assignments", "".join(accepted))

for target in sorted(os.listdir(OUT)):
    print(target, len(os.listdir(os.path.join(OUT, target))))
