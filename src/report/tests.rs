//! Tests of the assign outputs: round trip of the CSV, content of the table and JSON.

use super::*;
use crate::assign::{MatchConfig, assign_lines, read_assignments, records};
use crate::levels::{EMBEDDED_TABLES, Predictions, predict_from_table};
use crate::linelist::{LineList, ObservedLine};
use crate::units::{LengthUnit, Wavelength};

fn helium_and_neon() -> Predictions {
    let sets = EMBEDDED_TABLES
        .iter()
        .filter(|t| t.species == "He I" || t.species == "Ne I")
        .map(|t| predict_from_table(&t.load().unwrap()).unwrap());
    Predictions::combine(sets).unwrap()
}

/// Three lines in air (nm): He I 587.5621 and Ne I 640.2248 (wavelengths as printed
/// in the NIST ASD 2014 exports, from memory for Ne), and 600.0000, which matches
/// nothing here.
fn list() -> LineList {
    let formula = AirFormula::default();
    let mut lines: Vec<ObservedLine> = [(587.5621, "a,b"), (640.2248, "x"), (600.0, "")]
        .iter()
        .enumerate()
        .map(|(i, &(nm, note))| {
            let w = Wavelength {
                value: nm,
                unit: LengthUnit::Nanometre,
                medium: Medium::Air,
            };
            ObservedLine {
                row: i + 1,
                source_line: i + 3,
                given: GivenPosition::Wavelength {
                    value: nm,
                    unit: w.unit,
                    medium: w.medium,
                },
                wavenumber_cm1: w.to_wavenumber_cm1(formula).unwrap(),
                uncertainty_cm1: w.wavenumber_uncertainty_cm1(0.001, formula).unwrap(),
                intensity: Some(100.0 * (i + 1) as f64),
                extra: vec![note.to_string()],
            }
        })
        .collect();
    lines.sort_by(|a, b| a.wavenumber_cm1.total_cmp(&b.wavenumber_cm1));
    LineList {
        source: "demo.csv".into(),
        lines,
        extra_columns: vec!["note".into()],
        air_formula: formula,
        skipped: vec![],
        skipped_total: 0,
        medium_assumed: false,
    }
}

struct Run {
    input: InputSummary,
    config: MatchConfig,
    predictions: Predictions,
    records: Vec<crate::assign::AssignmentRecord>,
    extra: Vec<String>,
}

fn run() -> Run {
    let list = list();
    let predictions = helium_and_neon();
    let config = MatchConfig::default();
    let result = assign_lines(&list.lines, &predictions, &config);
    Run {
        input: InputSummary::from_line_list(&list),
        config,
        records: records(&list, &predictions, &result),
        predictions,
        extra: list.extra_columns.clone(),
    }
}

impl Run {
    fn report(&self) -> AssignReport<'_> {
        AssignReport {
            input: &self.input,
            config: &self.config,
            species: self.predictions.species(),
            records: &self.records,
            extra_columns: &self.extra,
        }
    }
}

#[test]
fn csv_round_trips() {
    let run = run();
    let bytes = assign_csv(&run.report());
    let text = String::from_utf8(bytes.clone()).unwrap();
    assert!(text.starts_with("# Input: 3 lines from demo.csv: air wavelengths (nm)"));
    let back = read_assignments(bytes.as_slice(), "out.csv").unwrap();
    assert_eq!(back.records, run.records);
    assert_eq!(back.extra_columns, vec!["note".to_string()]);
    // The pass-through field with a comma survives the quoting.
    assert_eq!(back.records[0].extra, vec!["a,b".to_string()]);
}

#[test]
fn csv_has_the_columns_of_the_issue_and_odd_parity_marks() {
    let run = run();
    let text = String::from_utf8(assign_csv(&run.report())).unwrap();
    let header = text.lines().find(|l| !l.starts_with('#')).unwrap();
    for column in [
        "line",
        "observed_wavenumber_cm1",
        "observed_uncertainty_cm1",
        "rank",
        "species",
        "lower_configuration",
        "lower_term",
        "lower_J",
        "upper_configuration",
        "upper_term",
        "upper_J",
        "predicted_wavenumber_cm1",
        "deviation_cm1",
        "deviation_sigma",
        "chance_probability",
        "flags",
    ] {
        assert!(header.split(',').any(|c| c == column), "{column}");
    }
    // He I 587.56 nm is 1s2p 3P° – 1s3d 3D (NIST ASD 2014): the term prints as 3P°.
    assert!(text.contains(",He I,1s.2p,3P°,"), "{text}");
    assert!(text.contains(",unassigned"));
}

#[test]
fn table_names_medium_formula_rules_and_shows_the_best_candidates() {
    let run = run();
    let text = assign_table(&run.report(), &TableOptions::default());
    assert!(text.contains("Birch & Downs"), "{text}");
    assert!(text.contains("Predictions, Ne I"), "{text}");
    assert!(text.contains("parity and J rules only"), "{text}");
    assert!(text.contains("LS rules"), "{text}");
    assert!(text.contains("air λ, nm"), "{text}");
    assert!(text.contains("unassigned"), "{text}");
    for line in text.lines() {
        assert!(line.chars().count() <= 120, "too wide: {line}");
    }
    let all = assign_table(
        &run.report(),
        &TableOptions {
            all: true,
            ..TableOptions::default()
        },
    );
    assert!(all.lines().count() >= text.lines().count());
}

#[test]
fn json_groups_candidates_by_line() {
    let run = run();
    let json: serde_json::Value = serde_json::from_str(&assign_json(&run.report())).unwrap();
    let lines = json["lines"].as_array().unwrap();
    assert_eq!(lines.len(), 3);
    assert_eq!(lines[0]["line"], 1);
    assert_eq!(lines[0]["candidates"][0]["species"], "He I");
    assert_eq!(lines[0]["candidates"][0]["lower"]["term"], "3P°");
    assert_eq!(lines[0]["extra"]["note"], "a,b");
    assert_eq!(lines[2]["unassigned"], true);
    assert_eq!(json["input"]["air_formula"]["name"], "birch-downs");
    assert_eq!(json["counts"]["unassigned"], 1);
}

#[test]
fn significant_digits() {
    assert_eq!(significant(0.012345, 2), "0.012");
    assert_eq!(significant(123.456, 2), "123");
    assert_eq!(significant(-0.5, 2), "-0.50");
    assert_eq!(significant(2.5e-7, 2), "2.5e-7");
}
