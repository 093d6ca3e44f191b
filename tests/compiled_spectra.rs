//! The compiled spectra checked against the published NIST ASD exports they were made
//! from (copies in tests/data/reference-data/, see its SOURCES.md: Kramida,
//! Ralchenko, Reader and NIST ASD Team, NIST Atomic Spectra Database, retrievals of
//! 2013–2017 as carried in the repositories named there).
//!
//! For every compiled spectrum: no level of the published file is lost except the
//! documented ones; every published E1 line with A_ki is predicted, at the Ritz
//! wavelength the export gives, with its A_ki unchanged. Then a line list made of the
//! published Ar II, N I and O I lines is assigned against all compiled spectra.

use std::collections::HashMap;

use termsight::assign::{MatchConfig, assign_lines, records};
use termsight::levels::{
    EMBEDDED_TABLES, EmbeddedTable, Level, LevelLabel, Listing, Predictions, compiled_predictions,
    compiled_predictions_near,
};
use termsight::linelist::{ReadOptions, read_line_list};
use termsight::notation::Species;
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

use crate::util::data_path;

/// (compiled spectrum, published levels file, published lines file), as in
/// reference-levels/make_tables.py.
const EXPORTS: [(&str, &str, Option<&str>); 29] = [
    ("H I", "HI-levels.csv", Some("HI-lines.csv")),
    ("He I", "HeI-levels.csv", Some("HeI-lines.csv")),
    ("Li I", "LiI-levels.csv", Some("LiI-lines.csv")),
    ("C I", "CI-levels.csv", Some("CI-lines.csv")),
    ("C II", "CII-levels.csv", Some("CII-lines.csv")),
    ("N I", "NI-levels.csv", Some("NI-lines.csv")),
    ("N II", "NII-levels.csv", Some("NII-lines.csv")),
    ("O I", "OI-levels.csv", Some("OI-lines.csv")),
    ("O II", "OII-levels.csv", Some("OII-lines.csv")),
    ("Ne I", "NeI-levels.csv", Some("NeI-lines.csv")),
    ("Ne II", "NeII-levels.csv", Some("NeII-lines.csv")),
    ("Na I", "NaI-levels.csv", Some("NaI-lines.csv")),
    ("Mg I", "MgI-levels.csv", Some("MgI-lines.csv")),
    ("Mg II", "MgII-levels.csv", Some("MgII-lines.csv")),
    ("Al I", "AlI-levels.csv", Some("AlI-lines.csv")),
    ("Si I", "SiI-levels.csv", Some("SiI-lines.csv")),
    (
        "Ar I",
        "ArI-levels-asd2013.csv",
        Some("ArI-lines-asd2013.csv"),
    ),
    ("Ar II", "ArII-levels.csv", Some("ArII-lines.csv")),
    ("K I", "KI-levels.csv", Some("KI-lines.csv")),
    ("Ca I", "CaI-levels.csv", Some("CaI-lines.csv")),
    ("Ca II", "CaII-levels.csv", Some("CaII-lines.csv")),
    ("Fe I", "FeI-levels.csv", Some("FeI-lines.csv")),
    ("Fe II", "FeII-levels.csv", None),
    ("Cu I", "CuI-levels.csv", Some("CuI-lines.csv")),
    ("Zn I", "ZnI-levels.csv", None),
    ("Kr II", "KrII-levels.csv", None),
    ("Cd I", "CdI-levels.csv", Some("CdI-lines.csv")),
    ("W I", "WI-levels.csv", None),
    ("Hg I", "HgI-levels.csv", Some("HgI-lines.csv")),
];

fn rows(file: &str) -> Vec<HashMap<String, String>> {
    let path = data_path(&format!("reference-data/{file}"));
    let mut reader =
        csv::Reader::from_path(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    reader
        .records()
        .map(|r| {
            let r = r.unwrap();
            header
                .iter()
                .cloned()
                .zip(r.iter().map(String::from))
                .collect()
        })
        .collect()
}

fn note_field<'a>(note: &'a str, key: &str) -> Option<&'a str> {
    note.split(';')
        .map(str::trim)
        .find_map(|part| part.strip_prefix(key)?.strip_prefix('='))
}

/// The number in an energy as printed (`[87846.9]`, `142080.75+x`).
fn energy(printed: &str) -> f64 {
    let digits: String = printed
        .trim_start_matches('[')
        .chars()
        .take_while(|c| c.is_ascii_digit() || *c == '.' || *c == '-')
        .collect();
    digits
        .parse()
        .unwrap_or_else(|_| panic!("energy '{printed}'"))
}

/// The compiled level of `table` for a published (configuration, term, J) at the
/// printed energy: same label, or the same label with the repeat index the compiled
/// table adds to labels printed twice. Two carrier slips are read as
/// reference-levels/make_tables.py reads them (`}` for `)` in K I; the outer electron
/// in the term column in Fe II).
fn find<'a>(
    levels: &'a [Level],
    configuration: &str,
    term: &str,
    j: &str,
    energy_cm1: f64,
) -> Option<&'a Level> {
    let configuration = configuration.replace('}', ")");
    let (configuration, term) = if term.len() == 2 && term.ends_with(['f', 'd', 'p']) {
        (format!("{configuration}.{term}"), String::new())
    } else {
        (configuration, term.to_string())
    };
    let label = LevelLabel::from_fields(&configuration, &term, j).ok()?;
    levels.iter().find(|l| {
        l.energy_cm1 == energy_cm1
            && (l.label == label
                || LevelLabel {
                    term: l.label.term.with_index(label.term.index()),
                    ..l.label.clone()
                } == label)
    })
}

fn compiled(species: &str) -> &'static EmbeddedTable {
    EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == species)
        .unwrap()
}

#[test]
fn no_published_level_is_lost_except_the_documented_ones() {
    // Left out, and said so in the table and reference-levels/SOURCES.md: the H I
    // rows labelled by n alone (39, shell centroids with no term or J) and the W I
    // rows without J (43).
    for (species, levels_file, _) in EXPORTS {
        let table = compiled(species).load().unwrap();
        let mut left_out = 0;
        let published = rows(levels_file);
        for row in &published {
            let (c, t, j) = (&row["configuration"], &row["term"], &row["J"]);
            if j.is_empty() {
                left_out += 1;
                continue;
            }
            let value = energy(&row["energy_cm1"]);
            assert!(
                find(&table.levels, c, t, j, value).is_some(),
                "{species}: published level {c} {t} {j} at {value} cm-1 is not compiled"
            );
        }
        let expected_left_out = match species {
            "H I" => 39,
            "W I" => 43,
            _ => 0,
        };
        assert_eq!(left_out, expected_left_out, "{species}");
        assert_eq!(table.levels.len() + left_out, published.len(), "{species}");
    }
}

/// One published E1 line with its A_ki, and what the check found.
struct Checked {
    predicted: usize,
    not_predicted: Vec<String>,
}

/// The published lines with A_ki of one spectrum, checked against its compiled
/// predictions: position (the export's Ritz value, vacuum below 2000 Å and above
/// 20000 Å, air between, Birch & Downs 1994 as in Morton 2000 — the convention the
/// exports state) and A_ki unchanged.
fn check_lines(species: &str, lines_file: &str) -> Checked {
    let table = compiled(species);
    let predictions = table.predictions().unwrap();
    let levels = predictions.levels();
    let mut by_pair: HashMap<(usize, usize), usize> = HashMap::new();
    for (i, line) in predictions.lines().iter().enumerate() {
        by_pair.insert((line.lower, line.upper), i);
    }
    let mut checked = Checked {
        predicted: 0,
        not_predicted: Vec::new(),
    };
    for row in rows(lines_file) {
        let note = &row["source_note"];
        let Some(a) = note_field(note, "Aki_s-1") else {
            continue;
        };
        if note_field(note, "type").is_some() {
            continue; // not E1
        }
        let side = |prefix: &str, key: &str| {
            let value = note_field(note, key).map(energy)?;
            find(
                levels,
                &row[&format!("{prefix}_config")],
                &row[&format!("{prefix}_term")],
                &row[&format!("{prefix}_J")],
                value,
            )
        };
        let description = format!(
            "{} {} {} – {} {} {} ({} Å)",
            row["lower_config"],
            row["lower_term"],
            row["lower_J"],
            row["upper_config"],
            row["upper_term"],
            row["upper_J"],
            row["wavelength"]
        );
        let (Some(lower), Some(upper)) = (side("lower", "Ei_cm-1"), side("upper", "Ek_cm-1"))
        else {
            checked
                .not_predicted
                .push(format!("{description}: level not compiled"));
            continue;
        };
        let index = |level: &Level| levels.iter().position(|l| std::ptr::eq(l, level)).unwrap();
        let Some(&line) = by_pair.get(&(index(lower), index(upper))) else {
            checked
                .not_predicted
                .push(format!("{description}: not predicted"));
            continue;
        };
        let line = &predictions.lines()[line];
        // Ritz: σ = E_k − E_i of the compiled levels.
        assert_eq!(line.wavenumber_cm1, upper.energy_cm1 - lower.energy_cm1);
        let vacuum_angstrom = 1e8 / line.wavenumber_cm1;
        let medium = if (2000.0..=20000.0).contains(&vacuum_angstrom) {
            Medium::Air
        } else {
            Medium::Vacuum
        };
        let computed = Wavelength::from_wavenumber_cm1(
            line.wavenumber_cm1,
            LengthUnit::Angstrom,
            medium,
            AirFormula::BirchDowns1994,
        )
        .unwrap()
        .value;
        // The 2023–2017 exports print the Ritz value computed from the same energies
        // to 4 decimals; the 2014 exports print the observed wavelength and the Ritz
        // value as ASD gives it (ritz_as_printed), with 0 to 7 decimals.
        let (published, tolerance) = match note_field(note, "ritz_as_printed") {
            Some(ritz) => {
                let ritz = ritz.trim_end_matches('+');
                let decimals = ritz.split_once('.').map_or(0, |(_, d)| d.len());
                (
                    ritz.parse::<f64>().unwrap(),
                    10f64.powi(-(decimals as i32)) + 3e-4,
                )
            }
            None => (row["wavelength"].parse::<f64>().unwrap(), 1e-4),
        };
        assert!(
            (computed - published).abs() <= tolerance,
            "{species} {description}: Ritz {computed} Å computed, {published} Å published"
        );
        assert_eq!(row["medium"], medium.name(), "{species} {description}");
        // A_ki carried unchanged, with g_k = 2J_k + 1.
        let published_a: f64 = a.parse().unwrap();
        assert_eq!(line.listing, Listing::Listed, "{species} {description}");
        let carried = line
            .transition_probability
            .unwrap_or_else(|| panic!("{species} {description}: no A_ki"));
        assert_eq!(carried.a_ki_s1, published_a, "{species} {description}");
        assert_eq!(carried.g_upper, upper.label.j.multiplicity());
        checked.predicted += 1;
    }
    checked
}

#[test]
fn every_published_line_with_a_transition_probability_is_predicted_with_it() {
    // Lines not predicted, each documented in reference-levels/SOURCES.md: H I lines
    // to the n-only levels that are left out (52), and the two J = 0 – 0 lines that
    // Stout lists as E1 (Mg I 4575 Å, Si I 4116 Å: they break the rigorous J rule).
    let mut total = 0;
    for (species, _, lines_file) in EXPORTS {
        let Some(lines_file) = lines_file else {
            continue;
        };
        let checked = check_lines(species, lines_file);
        let expected_missing = match species {
            "H I" => 52,
            "Mg I" | "Si I" => 1,
            _ => 0,
        };
        assert_eq!(
            checked.not_predicted.len(),
            expected_missing,
            "{species}: {:#?}",
            checked.not_predicted
        );
        if matches!(species, "Mg I" | "Si I") {
            assert!(
                checked.not_predicted[0].contains(" 0 – "),
                "{:?}",
                checked.not_predicted
            );
        }
        total += checked.predicted;
    }
    // Lines with a published A_ki kept in reference-levels/*-lines.csv.
    assert_eq!(total, 9_781);
}

/// A rank-1 assignment of a published line, or what was found instead.
fn published_list(files: &[(&str, &str)]) -> (String, Vec<(Species, String, String)>) {
    let mut text = String::from("wavelength_A,uncertainty_A,medium\n");
    let mut expected = Vec::new();
    for (species, file) in files {
        let species: Species = species.parse().unwrap();
        for row in rows(file) {
            if note_field(&row["source_note"], "type").is_some() || row["lower_config"].is_empty() {
                continue;
            }
            let wavelength: f64 = row["wavelength"].parse().unwrap();
            // Realistic uncertainty (common practice, no source): a centroid to a fifth
            // of the resolution element of a spectrometer with resolving power 10⁵.
            let u = wavelength * 2e-6;
            text.push_str(&format!("{},{u:.6},{}\n", row["wavelength"], row["medium"]));
            expected.push((
                species,
                format!(
                    "{} {} {}",
                    row["lower_config"], row["lower_term"], row["lower_J"]
                ),
                format!(
                    "{} {} {}",
                    row["upper_config"], row["upper_term"], row["upper_J"]
                ),
            ));
        }
    }
    (text, expected)
}

#[test]
fn published_argon_ion_nitrogen_and_oxygen_lines_are_assigned_at_rank_one() {
    // The E1 lines of the published Ar II, N I and O I exports (positions only, as a
    // measured list would give them), against all 29 compiled spectra: at least 95 %
    // must be assigned at rank 1 to the published species and levels (the check of
    // the issue). The misses are listed when the test is run with --nocapture.
    let (text, expected) = published_list(&[
        ("Ar II", "ArII-lines.csv"),
        ("N I", "NI-lines.csv"),
        ("O I", "OI-lines.csv"),
    ]);
    let list = read_line_list(text.as_bytes(), "published.csv", &ReadOptions::default()).unwrap();
    let all: Vec<&EmbeddedTable> = EMBEDDED_TABLES.iter().collect();
    let predictions: Predictions = compiled_predictions(&all).unwrap();
    let result = assign_lines(&list.lines, &predictions, &MatchConfig::default());
    let rows = records(&list, &predictions, &result);
    let mut right = 0;
    let mut degenerate = 0;
    let mut misses = Vec::new();
    let strip = |l: &LevelLabel| LevelLabel {
        term: l.term.with_index(None),
        ..l.clone()
    };
    let same_term = |a: &LevelLabel, b: &LevelLabel| {
        a.configuration == b.configuration && a.term.with_index(None) == b.term.with_index(None)
    };
    for (line, (species, lower, upper)) in expected.iter().enumerate() {
        let lower: LevelLabel = lower.parse().unwrap();
        let upper: LevelLabel = upper.parse().unwrap();
        let candidates: Vec<_> = rows
            .iter()
            .filter(|r| r.line == line + 1)
            .filter_map(|r| r.candidate.as_ref().map(|c| (c, &r.flags)))
            .collect();
        let Some(&(best, flags)) = candidates.first() else {
            misses.push(format!("{species} {lower} – {upper}: unassigned"));
            continue;
        };
        let published = candidates.iter().find(|(c, _)| {
            c.species == *species
                && strip(&c.lower) == strip(&lower)
                && strip(&c.upper) == strip(&upper)
        });
        if best.species == *species
            && strip(&best.lower) == strip(&lower)
            && strip(&best.upper) == strip(&upper)
        {
            right += 1;
        } else if let Some((p, _)) = published
            && best.species == *species
            && p.predicted_wavenumber_cm1 == best.predicted_wavenumber_cm1
            && same_term(&best.lower, &lower)
            && same_term(&best.upper, &upper)
        {
            // J components that the source prints at one energy (unresolved fine
            // structure of high levels) lie at one position: position alone cannot
            // tell them apart, and rank 1 is one of them.
            degenerate += 1;
        } else {
            misses.push(format!(
                "{species} {lower} – {upper}: rank 1 is {} {} – {} (Δ/u {:+.2}, flags {:?}; \
                 published pair {})",
                best.species,
                best.lower,
                best.upper,
                best.deviation_sigma,
                flags,
                match published {
                    Some((p, f)) => format!("Δ/u {:+.2}, flags {:?}", p.deviation_sigma, f),
                    None => "not a candidate".into(),
                }
            ));
        }
    }
    let right = right + degenerate;
    println!(
        "rank 1 exact: {} of {}; of one position with the published J components: {degenerate}",
        right - degenerate,
        expected.len()
    );
    let share = right as f64 / expected.len() as f64;
    println!(
        "rank 1 right: {right} of {} ({:.1} %); misses:",
        expected.len(),
        100.0 * share
    );
    for miss in &misses {
        println!("  {miss}");
    }
    assert!(share >= 0.95, "{right} of {}", expected.len());
}

#[test]
fn predicting_only_what_the_list_reaches_changes_no_result() {
    // `assign` predicts the compiled spectra only within reach of the observed lines
    // (the candidate and density windows). The claim is exactness: every candidate,
    // deviation and chance probability is the same as with every line predicted.
    // Checked on seeded random lists (short and long, narrow and broad
    // uncertainties, vacuum UV to infrared) against all 29 compiled spectra; the
    // reference is the full prediction, not the code under test.
    use rand::{Rng, SeedableRng};
    let all: Vec<&EmbeddedTable> = EMBEDDED_TABLES.iter().collect();
    let full: Predictions = compiled_predictions(&all).unwrap();
    let mut rng = rand::rngs::StdRng::seed_from_u64(20261203);
    for (lines, relative_u) in [(5, 1e-6), (50, 5e-6), (200, 2e-5), (20, 1e-3)] {
        let mut text = String::from("wavenumber_cm1,uncertainty_cm1\n");
        for _ in 0..lines {
            let sigma: f64 = rng.random_range(4_000.0..100_000.0);
            text.push_str(&format!("{sigma:.4},{:.6}\n", sigma * relative_u));
        }
        let list = read_line_list(text.as_bytes(), "random.csv", &ReadOptions::default()).unwrap();
        let config = MatchConfig::default();
        let near = compiled_predictions_near(&all, &config.reach_of(&list.lines), 0.0).unwrap();
        assert!(near.lines().len() <= full.lines().len());
        if lines <= 5 {
            // A short list reaches a small part of 100 nm – 2.5 µm.
            assert!(near.lines().len() < full.lines().len() / 2, "{lines} lines");
        }
        assert_eq!(
            near.species(),
            full.species(),
            "the summaries count every line"
        );
        assert_eq!(near.span_cm1(), full.span_cm1());
        let from_full = records(&list, &full, &assign_lines(&list.lines, &full, &config));
        let from_near = records(&list, &near, &assign_lines(&list.lines, &near, &config));
        assert_eq!(
            format!("{from_full:?}"),
            format!("{from_near:?}"),
            "{lines} lines"
        );
        assert!(from_full.iter().any(|r| r.candidate.is_some()));
    }
}
