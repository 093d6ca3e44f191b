//! The assign path checked against the NIST ASD (2014) He I lines export
//! (tests/data/HeI-lines-asd2014.csv; Kramida, Ralchenko, Reader and NIST ASD Team,
//! NIST Atomic Spectra Database, version of March 2014, retrieved 2014-03-04).

use termsight::assign::{MatchConfig, assign_lines, records};
use termsight::levels::{
    EMBEDDED_TABLES, LevelLabel, Predictions, SelectionRules, predict_from_table, ritz_wavenumber,
};
use termsight::linelist::{GivenPosition, LineList, ObservedLine, ReadOptions, read_line_list};
use termsight::notation::Species;
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

/// One row of the He I lines export.
struct AsdLine {
    /// The wavelength column (Å, air): observed when `observed`, else Ritz.
    wavelength: String,
    observed: bool,
    /// The intensity column as printed (ASD codes such as `*` for a blend kept).
    intensity: String,
    lower: LevelLabel,
    upper: LevelLabel,
    /// `ritz_as_printed` of the source note (Å, air).
    ritz: f64,
    /// `type` of the source note: empty for E1.
    kind: String,
    /// g_k·A_ki from `Aki_s-1` of the source note and the upper J, s⁻¹.
    ga: f64,
}

fn note_field<'a>(note: &'a str, key: &str) -> Option<&'a str> {
    note.split(';')
        .map(str::trim)
        .find_map(|part| part.strip_prefix(key)?.strip_prefix('='))
}

fn helium_lines() -> Vec<AsdLine> {
    let text = include_str!("data/HeI-lines-asd2014.csv");
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    reader
        .records()
        .map(|row| {
            let row = row.unwrap();
            let note = &row[10];
            AsdLine {
                wavelength: row[0].to_string(),
                observed: note.contains("wl=observed"),
                intensity: row[3].to_string(),
                lower: LevelLabel::from_fields(&row[4], &row[5], &row[6]).unwrap(),
                upper: LevelLabel::from_fields(&row[7], &row[8], &row[9]).unwrap(),
                ritz: note_field(note, "ritz_as_printed")
                    .unwrap()
                    .parse()
                    .unwrap(),
                kind: note_field(note, "type").unwrap_or("").to_string(),
                ga: {
                    let upper = LevelLabel::from_fields(&row[7], &row[8], &row[9]).unwrap();
                    let a: f64 = note_field(note, "Aki_s-1").unwrap().parse().unwrap();
                    f64::from(upper.j.twice + 1) * a
                },
            }
        })
        .collect()
}

fn helium() -> Species {
    "He I".parse().unwrap()
}

pub(crate) fn helium_predictions() -> Predictions {
    let table = EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == "He I")
        .unwrap();
    predict_from_table(&table.load().unwrap()).unwrap()
}

/// The intensity printed with each distinct observed wavelength, as (Å in air as
/// printed, intensity as printed).
pub(crate) fn helium_printed_intensities() -> Vec<(String, String)> {
    let mut out: Vec<(String, String)> = Vec::new();
    for line in helium_lines().into_iter().filter(|l| l.observed) {
        if !out.iter().any(|(w, _)| *w == line.wavelength) {
            out.push((line.wavelength, line.intensity));
        }
    }
    out
}

/// Standard uncertainty from the printed digits: one unit in the last decimal, but
/// at least 0.01 Å, because many observed He I wavelengths are centroids of
/// unresolved fine-structure components (export-notes: observed − Ritz up to 0.013 Å).
fn printed_uncertainty_angstrom(printed: &str) -> f64 {
    let decimals = printed.split_once('.').map_or(0, |(_, d)| d.len());
    10f64.powi(-(decimals as i32)).max(0.01)
}

/// The observed He I wavelengths of the export as a measured line list (air, Å),
/// one line per distinct observed wavelength, in order of first appearance.
pub(crate) fn helium_measured_list() -> LineList {
    let mut printed: Vec<String> = Vec::new();
    for line in helium_lines().into_iter().filter(|l| l.observed) {
        if !printed.contains(&line.wavelength) {
            printed.push(line.wavelength);
        }
    }
    let formula = AirFormula::BirchDowns1994;
    let mut lines: Vec<ObservedLine> = printed
        .iter()
        .enumerate()
        .map(|(i, text)| {
            let w = Wavelength {
                value: text.parse().unwrap(),
                unit: LengthUnit::Angstrom,
                medium: Medium::Air,
            };
            ObservedLine {
                row: i + 1,
                source_line: i + 2,
                given: GivenPosition::Wavelength {
                    value: w.value,
                    unit: w.unit,
                    medium: w.medium,
                },
                wavenumber_cm1: w.to_wavenumber_cm1(formula).unwrap(),
                uncertainty_cm1: w
                    .wavenumber_uncertainty_cm1(printed_uncertainty_angstrom(text), formula)
                    .unwrap(),
                intensity: None,
                extra: vec![],
            }
        })
        .collect();
    lines.sort_by(|a, b| a.wavenumber_cm1.total_cmp(&b.wavenumber_cm1));
    LineList {
        source: "HeI-lines-asd2014.csv".into(),
        lines,
        extra_columns: vec![],
        air_formula: formula,
        skipped: vec![],
        skipped_total: 0,
        medium_assumed: false,
    }
}

#[test]
fn ritz_air_wavelengths_of_the_helium_export_are_reproduced() {
    // Every printed Ritz wavelength (ritz_as_printed, Å in air) of the ASD 2014 He I
    // export, E1 and E2 alike, from the embedded He I levels with the Birch & Downs
    // (1994) air formula as given by Morton (2000): to 0.0003 Å. (The export's own
    // cross-check finds at most 0.00018 Å, the difference of air formulas.)
    let table = EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == "He I")
        .unwrap()
        .load()
        .unwrap();
    let predictions = helium_predictions();
    let mut checked = 0;
    for line in helium_lines() {
        let lower = table.find(helium(), &line.lower).unwrap();
        let upper = table.find(helium(), &line.upper).unwrap();
        let (sigma, _) = ritz_wavenumber(lower, upper);
        let air = Wavelength::from_wavenumber_cm1(
            sigma,
            LengthUnit::Angstrom,
            Medium::Air,
            AirFormula::BirchDowns1994,
        )
        .unwrap();
        assert!(
            (air.value - line.ritz).abs() < 0.0003,
            "{} – {}: {} Å computed, {} Å printed",
            line.lower,
            line.upper,
            air.value,
            line.ritz
        );
        // E1 lines are among the predictions, with the same wavenumber.
        if line.kind.is_empty() {
            let found = predictions.lines().iter().any(|p| {
                let (lo, up) = predictions.levels_of(p).unwrap();
                lo.label == line.lower && up.label == line.upper && p.wavenumber_cm1 == sigma
            });
            assert!(found, "{} – {} not predicted", line.lower, line.upper);
        }
        checked += 1;
    }
    assert_eq!(checked, 254); // rows of the export
}

/// Which component of an unresolved group of the export rank 1 must be.
#[derive(Clone, Copy, PartialEq)]
pub(crate) enum Component {
    /// The one whose Ritz value is nearest the observed wavelength (by position).
    Nearest,
    /// The one with the largest published g_k·A_ki (by intensity: the components
    /// of one multiplet share an upper configuration and term, so at any
    /// excitation temperature their intensities go as g_k·A_ki).
    Strongest,
}

/// Each of the 36 distinct observed wavelengths of the ASD 2014 He I export must be
/// assigned at rank 1 to the configurations and terms the export gives, and to the
/// J values of one row of it, chosen by `component` (the 84 rows with an observed
/// wavelength share 36 values: unresolved fine-structure components of one
/// multiplet share one observed value).
pub(crate) fn assert_rank_one_is_the_published_classification(
    list: &LineList,
    predictions: &Predictions,
    assignments: &[termsight::assign::LineAssignment],
    component: Component,
) {
    let rows = records(list, predictions, assignments);
    let asd = helium_lines();
    let observed_rows: Vec<&AsdLine> = asd.iter().filter(|l| l.observed).collect();
    assert_eq!(observed_rows.len(), 84);
    let distinct: Vec<&str> = {
        let mut d: Vec<&str> = Vec::new();
        for l in &observed_rows {
            if !d.contains(&l.wavelength.as_str()) {
                d.push(&l.wavelength);
            }
        }
        d
    };
    assert_eq!(distinct.len(), list.lines.len());
    let mut j_checked = 0;
    for row in &observed_rows {
        let line_number = distinct.iter().position(|w| *w == row.wavelength).unwrap() + 1;
        let best = rows
            .iter()
            .find(|r| r.line == line_number && r.rank == Some(1))
            .unwrap_or_else(|| panic!("{} Å unassigned", row.wavelength));
        let c = best.candidate.as_ref().unwrap();
        let same_terms =
            |a: &LevelLabel, b: &LevelLabel| a.configuration == b.configuration && a.term == b.term;
        assert!(
            same_terms(&c.lower, &row.lower) && same_terms(&c.upper, &row.upper),
            "{} Å: assigned {} – {}, the export gives {} – {}",
            row.wavelength,
            c.lower,
            c.upper,
            row.lower,
            row.upper
        );
        let group: Vec<&&AsdLine> = observed_rows
            .iter()
            .filter(|l| l.wavelength == row.wavelength)
            .collect();
        let observed: f64 = row.wavelength.parse().unwrap();
        let nearest = match component {
            Component::Nearest => group.iter().min_by(|a, b| {
                (a.ritz - observed)
                    .abs()
                    .total_cmp(&(b.ritz - observed).abs())
            }),
            Component::Strongest => group.iter().max_by(|a, b| a.ga.total_cmp(&b.ga)),
        }
        .unwrap();
        if std::ptr::eq(**nearest, *row) {
            assert_eq!(
                (c.lower.j, c.upper.j),
                (row.lower.j, row.upper.j),
                "{} Å: J values",
                row.wavelength
            );
            j_checked += 1;
        }
    }
    assert_eq!(j_checked, distinct.len());
}

#[test]
fn observed_helium_lines_are_assigned_at_rank_one_to_the_published_classification() {
    // The 84 rows of the ASD 2014 He I export with an observed wavelength share 36
    // distinct observed wavelengths (unresolved fine-structure components of one
    // multiplet share one observed value). Each must be assigned at rank 1 to the
    // configurations and terms the export gives, and to its J values too where the
    // export's Ritz value of that row is the nearest of the row's group.
    //
    // k = 4: the 3935.912 Å line (1s2p 1P°1 – 1s8s 1S0) lies 0.033 Å from its own
    // Ritz value in the export, 3.3 times the 0.01 Å floor of the uncertainty; at
    // k = 3 it is, rightly, unassigned (checked below).
    let list = helium_measured_list();
    let predictions = helium_predictions();
    let config = MatchConfig::default().with_tolerance_sigma(4.0).unwrap();
    let result = assign_lines(&list.lines, &predictions, &config);
    assert_rank_one_is_the_published_classification(
        &list,
        &predictions,
        &result,
        Component::Nearest,
    );

    // At the default k = 3 the 3935.912 Å line is unassigned, and only it.
    let strict = assign_lines(&list.lines, &predictions, &MatchConfig::default());
    let unassigned: Vec<f64> = strict
        .iter()
        .filter(|a| a.is_unassigned())
        .map(|a| match list.lines[a.observed].given {
            GivenPosition::Wavelength { value, .. } => value,
            GivenPosition::Wavenumber { value } => value,
        })
        .collect();
    assert_eq!(unassigned, vec![3935.912]);
}

#[test]
fn helium_1083_nm_triplet_and_59_nm_intercombination_line_are_flagged_as_they_should() {
    // He I 1s2s 3S1 – 1s2p 3P°0,1,2 near 1083 nm (vacuum): LS-allowed, no rule flag.
    // 1s2 1S0 – 1s2p 3P°1 near 59.1 nm: flagged `intercombination` (ΔS = 1).
    // Level labels and energies: embedded NIST ASD 2014 He I table.
    let predictions = helium_predictions();
    let find = |lower: &str, upper: &str| {
        predictions
            .lines()
            .iter()
            .find(|p| {
                let (lo, up) = predictions.levels_of(p).unwrap();
                lo.label.to_string() == lower && up.label.to_string() == upper
            })
            .unwrap_or_else(|| panic!("{lower} – {upper} not predicted"))
    };
    for j in 0..=2 {
        let line = find("1s.2s 3S 1", &format!("1s.2p 3P° {j}"));
        assert_eq!(line.rules, SelectionRules::Ls);
        assert!(!line.flags.intercombination && !line.flags.l_forbidden);
        assert!(!line.flags.jump_forbidden);
        let vacuum_nm = 1e7 / line.wavenumber_cm1;
        assert!((vacuum_nm - 1083.3).abs() < 0.1, "{vacuum_nm}");
    }
    let spin_forbidden = find("1s2 1S 0", "1s.2p 3P° 1");
    let vacuum_nm = 1e7 / spin_forbidden.wavenumber_cm1;
    assert!((vacuum_nm - 59.14).abs() < 0.01, "{vacuum_nm}"); // 59.14 nm (ASD, from memory)
    assert!(spin_forbidden.flags.intercombination);

    // Matched as measured lines: a vacuum wavenumber for each, 0.05 cm⁻¹ uncertainty
    // (values chosen for the test), 0.01 and −0.02 cm⁻¹ off the predictions.
    let observe = |row: usize, sigma: f64| ObservedLine {
        row,
        source_line: row + 1,
        given: GivenPosition::Wavenumber { value: sigma },
        wavenumber_cm1: sigma,
        uncertainty_cm1: 0.05,
        intensity: None,
        extra: vec![],
    };
    let mut lines = vec![
        observe(1, find("1s.2s 3S 1", "1s.2p 3P° 2").wavenumber_cm1 + 0.01),
        observe(2, spin_forbidden.wavenumber_cm1 - 0.02),
    ];
    lines.sort_by(|a, b| a.wavenumber_cm1.total_cmp(&b.wavenumber_cm1));
    let list = LineList {
        source: "t".into(),
        lines,
        extra_columns: vec![],
        air_formula: AirFormula::default(),
        skipped: vec![],
        skipped_total: 0,
        medium_assumed: false,
    };
    let result = assign_lines(&list.lines, &predictions, &MatchConfig::default());
    let rows = records(&list, &predictions, &result);
    // 3P°2 and 3P°1 lie 0.076 cm⁻¹ apart (ASD 2014 levels): both within 3 × 0.05 cm⁻¹,
    // so the line is a blend; 3P°0 lies 1 cm⁻¹ away and is no candidate.
    let triplet: Vec<String> = rows
        .iter()
        .filter(|r| r.line == 1)
        .map(|r| {
            let c = r.candidate.as_ref().unwrap();
            format!("{} – {} {:?}", c.lower, c.upper, r.flags)
        })
        .collect();
    assert_eq!(
        triplet,
        vec![
            "1s.2s 3S 1 – 1s.2p 3P° 2 [Blend]",
            "1s.2s 3S 1 – 1s.2p 3P° 1 [Blend]"
        ]
    );
    let uv: Vec<String> = rows
        .iter()
        .filter(|r| r.line == 2)
        .map(|r| {
            let c = r.candidate.as_ref().unwrap();
            format!("{} – {} {:?}", c.lower, c.upper, r.flags)
        })
        .collect();
    assert_eq!(uv, vec!["1s2 1S 0 – 1s.2p 3P° 1 [Intercombination]"]);
}

#[test]
fn observed_argon_lines_are_assigned_at_rank_one_to_the_published_pair_coupled_levels() {
    // The Ar I export (tests/data/ArI-lines-asd2014.csv, NIST ASD 2014): every
    // classified E1 row with an observed wavelength. Its levels are in pair coupling,
    // so only the parity and J rules apply. Each distinct observed wavelength, read
    // as a measured line list (air, Å, uncertainty from the printed digits but at
    // least 0.01 Å), must be assigned at rank 1 to one of the classifications the
    // export gives it, J values included.
    let text = include_str!("data/ArI-lines-asd2014.csv");
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let mut published: Vec<(String, Vec<(LevelLabel, LevelLabel)>)> = Vec::new();
    for row in reader.records() {
        let row = row.unwrap();
        let note = &row[10];
        if !note.contains("wl=observed") || row[4].is_empty() || note_field(note, "type").is_some()
        {
            continue;
        }
        let pair = (
            LevelLabel::from_fields(&row[4], &row[5], &row[6]).unwrap(),
            LevelLabel::from_fields(&row[7], &row[8], &row[9]).unwrap(),
        );
        match published.iter_mut().find(|(w, _)| w == &row[0]) {
            Some((_, pairs)) => pairs.push(pair),
            None => published.push((row[0].to_string(), vec![pair])),
        }
    }
    assert_eq!(published.len(), 132);
    let mut list_text = String::from("wavelength_A,uncertainty_A,medium\n");
    for (wavelength, _) in &published {
        let u = printed_uncertainty_angstrom(wavelength);
        list_text.push_str(&format!("{wavelength},{u},air\n"));
    }
    let list = read_line_list(list_text.as_bytes(), "argon.csv", &ReadOptions::default()).unwrap();
    let table = EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == "Ar I")
        .unwrap();
    let predictions = predict_from_table(&table.load().unwrap()).unwrap();
    let result = assign_lines(&list.lines, &predictions, &MatchConfig::default());
    let rows = records(&list, &predictions, &result);
    for (line, (wavelength, pairs)) in published.iter().enumerate() {
        let best = rows
            .iter()
            .find(|r| r.line == line + 1 && r.rank == Some(1))
            .unwrap_or_else(|| panic!("{wavelength} Å unassigned"));
        let c = best.candidate.as_ref().unwrap();
        assert_eq!(c.selection_rules, SelectionRules::ParityAndJ);
        assert!(
            pairs
                .iter()
                .any(|(lo, up)| *lo == c.lower && *up == c.upper),
            "{wavelength} Å: assigned {} – {}, the export gives {} – {}",
            c.lower,
            c.upper,
            pairs[0].0,
            pairs[0].1
        );
    }
}
