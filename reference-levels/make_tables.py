"""Build termsight's compiled spectra from the NIST ASD level and line exports.

Usage: python3 make_tables.py DIR
where DIR holds the converted exports (<Sym>-levels*.csv with the columns
configuration,term,J,energy_cm1,source_note and <Sym>-lines*.csv with
wavelength,unit,medium,intensity,lower_config,lower_term,lower_J,upper_config,
upper_term,upper_J,source_note; see SOURCES.md). For each spectrum of SPECTRA it
writes beside this script:

- <Sym>.csv, the level table, columns species,configuration,term,J,energy_cm1,
  uncertainty_cm1,source;
- <Sym>-lines.csv, when the export has a line list: one row per classified E1 line,
  columns lower,upper,A_s1,accuracy, where lower and upper are the 1-based data rows
  of the two levels in <Sym>.csv and A_s1 is blank when no A_ki is published.

What it does, and nothing else:
- energies are copied digit for digit; a value the source prints in square brackets
  (not from experiment) gets `bracketed` in the column energy_status, and a value
  relative to an unknown offset gets `+x` there (both: `bracketed +x`);
- uncertainty_cm1 is one unit in the last printed decimal (the exports print no level
  uncertainties), and 0 for the ground level, the zero of the scale by definition;
- odd parity, printed '*' in the exports, is written '°' (termsight's notation; its
  reader accepts both), in terms and in parent terms inside configurations; every
  other character of a label is copied as printed;
- labels printed more than once in one table get a repeat index, #1, #2, … in energy
  order, written before the parity mark (`2D#2°`, `#3°` for a bare `*`); the source
  column says so;
- two carrier slips are undone and said so in the source column: `(2P*}` for
  `(2P*)` in three K I configurations, and three Fe II rows whose outer electron sits
  in the term column (`3d6.(3P2<2>)` with "term" `4f`);
- rows that cannot be levels of the table are kept as `#` comment lines, with the
  reason: H I rows labelled by n alone (shell centroids, no term or J) and W I rows
  without J;
- rows are sorted by energy (the export order is kept among equal energies);
- a line row is kept when it is E1 (no `type=` in its note), with its A_ki when it
  prints one; a level pair printed twice (once per multipole, as in the Stout files)
  keeps its E1 row, and of two E1 rows the one with A_ki.
  Lines are matched to levels by label and by the energies printed with the line.
Deterministic: a rerun writes the same bytes.
"""
import csv
import os
import re
import sys

HERE = os.path.dirname(os.path.abspath(__file__))

ASD_2014 = ("Kramida, Ralchenko, Reader and NIST ASD Team, NIST Atomic Spectra Database "
            "(version of March 2014), lines export retrieved 2014-03-04")
CF = ("Kramida, Ralchenko, Reader and NIST ASD Team, NIST Atomic Spectra Database, "
      "levels and lines exports retrieved on or before {date}")
ST = ("Kramida, Ralchenko, Reader and NIST ASD Team, NIST Atomic Spectra Database, "
      "values retrieved {date} as re-tabulated in the Stout database (data-format stamp 17 09 05)")
PN = ("Kramida, Ralchenko, Reader and NIST ASD Team, NIST Atomic Spectra Database, "
      "levels export retrieved on or before {date}")

# (file stem, species, levels export, lines export or None, citation, short source tag)
SPECTRA = [
    ("HI", "H I", "HI-levels.csv", "HI-lines.csv", ASD_2014, "ASD 2014"),
    ("HeI", "He I", "HeI-levels.csv", "HeI-lines.csv", ASD_2014, "ASD 2014"),
    ("LiI", "Li I", "LiI-levels.csv", "LiI-lines.csv",
     ST.format(date="2013-11-08 (levels) and 2013-10-18 (A values)"), "ASD 2013-11"),
    ("CI", "C I", "CI-levels.csv", "CI-lines.csv", CF.format(date="2013-12-20"), "ASD 2013"),
    ("CII", "C II", "CII-levels.csv", "CII-lines.csv", CF.format(date="2013-12-20"), "ASD 2013"),
    ("NI", "N I", "NI-levels.csv", "NI-lines.csv", CF.format(date="2013-12-20"), "ASD 2013"),
    ("NII", "N II", "NII-levels.csv", "NII-lines.csv", CF.format(date="2013-12-20"), "ASD 2013"),
    ("OI", "O I", "OI-levels.csv", "OI-lines.csv", CF.format(date="2013-12-20"), "ASD 2013"),
    ("OII", "O II", "OII-levels.csv", "OII-lines.csv",
     CF.format(date="2013-12-20 (lines) and 2014-02-16 (levels)"), "ASD 2013"),
    ("NeI", "Ne I", "NeI-levels.csv", "NeI-lines.csv", ASD_2014, "ASD 2014"),
    ("NeII", "Ne II", "NeII-levels.csv", "NeII-lines.csv", ST.format(date="2013-10-01"), "ASD 2013-10"),
    ("NaI", "Na I", "NaI-levels.csv", "NaI-lines.csv", ST.format(date="2013-10-01"), "ASD 2013-10"),
    ("MgI", "Mg I", "MgI-levels.csv", "MgI-lines.csv", ST.format(date="2017-10-09"), "ASD 2017-10"),
    ("MgII", "Mg II", "MgII-levels.csv", "MgII-lines.csv", ST.format(date="2014-09-16"), "ASD 2014-09"),
    ("AlI", "Al I", "AlI-levels.csv", "AlI-lines.csv", ST.format(date="2017-10-09"), "ASD 2017-10"),
    ("SiI", "Si I", "SiI-levels.csv", "SiI-lines.csv", ST.format(date="2013-10-01"), "ASD 2013-10"),
    ("ArI", "Ar I", "ArI-levels-asd2013.csv", "ArI-lines-asd2013.csv",
     CF.format(date="2013-09-18"), "ASD 2013"),
    ("ArII", "Ar II", "ArII-levels.csv", "ArII-lines.csv", CF.format(date="2013-09-18"), "ASD 2013"),
    ("KI", "K I", "KI-levels.csv", "KI-lines.csv", ST.format(date="2013-10-01"), "ASD 2013-10"),
    ("CaI", "Ca I", "CaI-levels.csv", "CaI-lines.csv", ST.format(date="2013-10-01"), "ASD 2013-10"),
    ("CaII", "Ca II", "CaII-levels.csv", "CaII-lines.csv", ST.format(date="2014-09-16"), "ASD 2014-09"),
    ("FeI", "Fe I", "FeI-levels.csv", "FeI-lines.csv", ST.format(date="2013-10-18"), "ASD 2013-10"),
    ("FeII", "Fe II", "FeII-levels.csv", None, PN.format(date="2015-10-20"), "ASD 2015"),
    ("CuI", "Cu I", "CuI-levels.csv", "CuI-lines.csv", ST.format(date="2014-09-16"), "ASD 2014-09"),
    ("ZnI", "Zn I", "ZnI-levels.csv", None, ST.format(date="2014-09-16"), "ASD 2014-09"),
    ("KrII", "Kr II", "KrII-levels.csv", None, PN.format(date="2016-11-25"), "ASD 2016"),
    ("CdI", "Cd I", "CdI-levels.csv", "CdI-lines.csv", ASD_2014, "ASD 2014"),
    ("WI", "W I", "WI-levels.csv", None, PN.format(date="2016-11-25"), "ASD 2016"),
    ("HgI", "Hg I", "HgI-levels.csv", "HgI-lines.csv", ASD_2014, "ASD 2014"),
]

NUMBER = re.compile(r"[-+]?\d+(?:\.\d*)?")


def last_decimal_unit(printed):
    """One unit in the last printed decimal of a number written like '123.4567'."""
    digits = NUMBER.search(printed).group(0)
    if "." not in digits or digits.endswith("."):
        return "1"
    decimals = len(digits.split(".", 1)[1])
    return "0." + "0" * (decimals - 1) + "1"


def odd_mark(label):
    return label.replace("*", "°")


def note_field(note, key):
    for part in note.split(";"):
        part = part.strip()
        if part.startswith(key + "="):
            return part[len(key) + 1:]
    return None


def printed_energy(row):
    """(energy as written in the table, numeric value, bracketed?, offset?)"""
    note = row["source_note"]
    printed = note_field(note, "printed")
    if printed is not None:
        printed = printed.split(" (")[0].strip()
    elif "square brackets" in note:
        printed = "[" + row["energy_cm1"] + "]"
    else:
        printed = row["energy_cm1"]
    value = float(NUMBER.search(printed.replace("[", "")).group(0))
    return printed, value, "[" in printed, "+x" in printed


def with_index(term, index):
    """The term with a repeat index before its parity mark and any `?`."""
    core, tail = term, ""
    while core and core[-1] in "°?":
        tail = core[-1] + tail
        core = core[:-1]
    return f"{core}#{index}{tail}"


def read_levels(directory, sym, species, export, tag):
    with open(os.path.join(directory, export), encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    kept, comments = [], []
    for order, row in enumerate(rows):
        config, term, j = row["configuration"], row["term"], row["J"]
        printed, value, bracketed, offset = printed_energy(row)
        notes = [tag]
        if bracketed:
            notes.append("printed in brackets (not from experiment)")
        if offset:
            notes.append("relative to an unknown offset x")
        if term == "" and j == "" and re.fullmatch(r"\d+", config):
            comments.append(f"n-only row (shell centroid, no term or J) left out: "
                            f"{config},,,{printed}")
            continue
        if j == "":
            comments.append(f"row without J left out: {odd_mark(config)},{odd_mark(term)},,{printed}")
            continue
        if "}" in config:
            notes.append(f"configuration printed {config} in the carrier; read with ')' for '}}'")
            config = config.replace("}", ")")
        if re.fullmatch(r"\d+[spdfghik]", term):
            notes.append(f"carrier prints the outer electron {term} in the term column; "
                         f"read as configuration {config}.{term}, term not given")
            config, term = f"{config}.{term}", ""
        ground = value == 0.0
        if row["source_note"].startswith("ground level"):
            notes = ["ground level: zero of the energy scale by definition (row added; not in the export)"]
        kept.append({
            "order": order,
            "value": value,
            "printed_label": (row["configuration"], row["term"], row["J"]),
            "species": species,
            "configuration": odd_mark(config),
            "term": odd_mark(term),
            "J": j,
            "energy_cm1": NUMBER.search(printed.replace("[", "")).group(0),
            "energy_status": " ".join(m for m, on in (("bracketed", bracketed), ("+x", offset)) if on),
            "uncertainty_cm1": "0" if ground else last_decimal_unit(printed),
            "notes": notes,
        })
    kept.sort(key=lambda r: (r["value"], r["order"]))
    groups = {}
    for level in kept:
        groups.setdefault((level["configuration"], level["term"], level["J"]), []).append(level)
    for (config, term, j), members in groups.items():
        if len(members) > 1:
            for index, level in enumerate(members, 1):
                level["term"] = with_index(term, index)
                level["notes"].append(f"label printed {len(members)} times in the source; "
                                      f"repeat index #{index} added here")
    return kept, comments


def line_energy(note, key):
    text = note_field(note, key) or ""
    match = NUMBER.search(text.replace("[", ""))
    return float(match.group(0)) if match else None


def read_lines(directory, export, levels):
    by_label = {}
    for number, level in enumerate(levels, 1):
        by_label.setdefault(level["printed_label"], []).append((number, level))
    with open(os.path.join(directory, export), encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    chosen = {}
    stats = {"rows": len(rows), "without_A": 0, "not_E1": 0, "unmatched": 0}
    for row in rows:
        note = row["source_note"]
        a = note_field(note, "Aki_s-1") or ""
        if note_field(note, "type"):
            stats["not_E1"] += 1
            continue
        if not a:
            stats["without_A"] += 1

        def find(side, key):
            label = (row[f"{side}_config"], row[f"{side}_term"], row[f"{side}_J"])
            energy = line_energy(note, key)
            for number, level in by_label.get(label, []):
                if energy is None or abs(level["value"] - energy) < 1e-6:
                    return number
            return None

        lower, upper = find("lower", "Ei_cm-1"), find("upper", "Ek_cm-1")
        if lower is None or upper is None:
            stats["unmatched"] += 1
            continue
        if (lower, upper) not in chosen or (a and not chosen[(lower, upper)][0]):
            chosen[(lower, upper)] = (a, note_field(note, "acc") or "")
    return chosen, stats


def write(sym, species, export, lines_export, citation, levels, comments, lines, stats):
    with open(os.path.join(HERE, f"{sym}.csv"), "w", encoding="utf-8", newline="") as f:
        f.write(f"# {species} levels. Source: {citation}.\n")
        f.write(f"# Made by make_tables.py from the export {export}; see SOURCES.md.\n")
        f.write("# energy_cm1 as printed; energy_status: bracketed = printed in brackets (not from"
                " experiment), +x = relative to an unknown offset x; uncertainty_cm1 = one unit in"
                " the last printed decimal (no level uncertainties are printed), 0 for the ground"
                " level.\n")
        for comment in comments:
            f.write(f"# {comment}\n")
        writer = csv.writer(f, lineterminator="\n")
        writer.writerow(["species", "configuration", "term", "J", "energy_cm1", "uncertainty_cm1",
                         "source", "energy_status"])
        for level in levels:
            writer.writerow([species, level["configuration"], level["term"], level["J"],
                             level["energy_cm1"], level["uncertainty_cm1"],
                             "; ".join(level["notes"]), level["energy_status"]])
    if lines_export is None:
        return
    with open(os.path.join(HERE, f"{sym}-lines.csv"), "w", encoding="utf-8", newline="") as f:
        with_a = sum(1 for a, _ in lines.values() if a)
        f.write(f"# {species} classified E1 lines and their transition probabilities A_ki (s-1, as"
                f" printed). Source: {citation}.\n")
        f.write(f"# Made by make_tables.py from the export {lines_export}: {stats['rows']} rows,"
                f" {stats['not_E1']} not E1 (type E2, M1, ...) left out, {stats['without_A']} E1"
                f" rows without A_ki, {stats['unmatched']} not matched to a level; {len(lines)}"
                f" lines kept, {with_a} with A_ki.\n")
        f.write(f"# lower, upper: 1-based data rows of the levels in {sym}.csv; A_s1 blank: no"
                " A_ki published; accuracy: the ASD accuracy code, blank when none is printed.\n")
        writer = csv.writer(f, lineterminator="\n")
        writer.writerow(["lower", "upper", "A_s1", "accuracy"])
        for (lower, upper), (a, acc) in sorted(lines.items()):
            writer.writerow([lower, upper, a, acc])


def main(directory):
    for sym, species, export, lines_export, citation, tag in SPECTRA:
        levels, comments = read_levels(directory, sym, species, export, tag)
        lines, stats = ({}, None)
        if lines_export:
            lines, stats = read_lines(directory, lines_export, levels)
        write(sym, species, export, lines_export, citation, levels, comments, lines, stats)
        print(f"{sym}: {len(levels)} levels, {len(comments)} rows as comments, {len(lines)} lines, "
              f"{sum(1 for a, _ in lines.values() if a)} with A"
              + (f" {stats}" if stats else ""))


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    main(sys.argv[1])
