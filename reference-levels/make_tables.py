"""Build termsight's reference level tables from the NIST ASD (2014) level exports.

Usage: python3 make_tables.py DIR
where DIR holds the exports <Sym>-levels.csv (columns configuration,term,J,energy_cm1,
source_note; see SOURCES.md). Writes HI.csv, HeI.csv, NeI.csv, ArI.csv, HgI.csv and
CdI.csv beside this script, in the column layout
species,configuration,term,J,energy_cm1,uncertainty_cm1,source.

What it does, and nothing else:
- energies are copied as printed (the same digits);
- uncertainty_cm1 is one unit in the last printed decimal of the energy (the export
  prints no level uncertainties), and 0 for the ground level, which is the zero of
  the scale by definition;
- odd parity, printed '*' in the export, is written '°' (termsight's notation; its
  reader accepts both), in terms and in parent terms inside configurations;
- H I rows labelled only by the principal quantum number n (centroids of all the
  levels of a shell, with no term and no J) are left out: see SOURCES.md;
- rows are sorted by energy (the export order is kept among equal energies).
Deterministic: a rerun writes the same bytes.
"""
import csv
import os
import sys

SPECTRA = [("HI", "H I"), ("HeI", "He I"), ("NeI", "Ne I"), ("ArI", "Ar I"), ("HgI", "Hg I"), ("CdI", "Cd I")]
HERE = os.path.dirname(os.path.abspath(__file__))
CITATION = ("Kramida, Ralchenko, Reader and NIST ASD Team, NIST Atomic Spectra Database "
            "(version of March 2014), lines export retrieved 2014-03-04")


def last_decimal_unit(printed):
    """One unit in the last printed decimal of a number written like '123.4567'."""
    if "." not in printed:
        return "1"
    decimals = len(printed.split(".", 1)[1])
    return "0." + "0" * (decimals - 1) + "1" if decimals > 0 else "1"


def odd_mark(label):
    return label.replace("*", "°")


def source_of(note):
    if note.startswith("ground level"):
        return "ground level: zero of the energy scale by definition (row added; not in the export)"
    if "square brackets" in note:
        return "NIST ASD 2014 export; printed in brackets (not from experiment: calculated or derived)"
    return "NIST ASD 2014 export"


def convert(directory, sym, species):
    with open(os.path.join(directory, f"{sym}-levels.csv"), encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    kept, dropped = [], 0
    for row in rows:
        if row["term"] == "" and row["J"] == "":
            dropped += 1  # H I shell centroid: no term, no J
            continue
        energy = row["energy_cm1"]
        ground = row["source_note"].startswith("ground level") or float(energy) == 0.0
        kept.append({
            "species": species,
            "configuration": odd_mark(row["configuration"]),
            "term": odd_mark(row["term"]),
            "J": row["J"],
            "energy_cm1": energy,
            "uncertainty_cm1": "0" if ground else last_decimal_unit(energy),
            "source": source_of(row["source_note"]),
        })
    kept.sort(key=lambda r: float(r["energy_cm1"]))
    out = os.path.join(HERE, f"{sym}.csv")
    with open(out, "w", encoding="utf-8", newline="") as f:
        f.write(f"# {species} levels. Source: {CITATION}.\n")
        f.write("# energy_cm1 as printed there; uncertainty_cm1 = one unit in the last printed decimal"
                " (no level uncertainties are printed), 0 for the ground level.\n")
        if dropped:
            f.write(f"# {dropped} rows labelled by n only (shell centroids, no term or J) left out;"
                    " see SOURCES.md.\n")
        f.write("# Made by make_tables.py from the export file " + f"{sym}-levels.csv; see SOURCES.md.\n")
        writer = csv.DictWriter(f, fieldnames=list(kept[0].keys()), lineterminator="\n")
        writer.writeheader()
        writer.writerows(kept)
    print(f"{sym}: {len(kept)} levels written, {dropped} centroid rows left out")


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    for sym, species in SPECTRA:
        convert(sys.argv[1], sym, species)
