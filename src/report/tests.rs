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
    let lines: Vec<ObservedLine> = [(587.5621, "a,b"), (640.2248, "x"), (600.0, "")]
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
    list: LineList,
    predictions: Predictions,
    assignments: Vec<crate::assign::LineAssignment>,
}

fn run() -> Run {
    let list = list();
    let predictions = helium_and_neon();
    let config = MatchConfig::default();
    let assignments = assign_lines(&list.lines, &predictions, &config);
    Run {
        input: InputSummary::from_line_list(&list),
        config,
        list,
        predictions,
        assignments,
    }
}

impl Run {
    fn report(&self) -> AssignReport<'_> {
        AssignReport {
            input: &self.input,
            config: &self.config,
            list: &self.list,
            predictions: &self.predictions,
            assignments: &self.assignments,
            evidence: None,
        }
    }

    fn records(&self) -> Vec<crate::assign::AssignmentRecord> {
        records(&self.list, &self.predictions, &self.assignments)
    }
}

/// Records read back from a CSV agree with those in memory to the digits written:
/// positions to half of 10⁻⁸ cm⁻¹ (or of 10⁻¹¹ nm in the given unit; to 15
/// significant digits where that is coarser), the rest to
/// half a unit in the third significant digit.
fn assert_records_read_back(
    back: &[crate::assign::AssignmentRecord],
    expected: &[crate::assign::AssignmentRecord],
) {
    let position = |a: f64, b: f64, resolution: f64| {
        // At most 15 significant digits are written.
        let resolution = resolution.max(10f64.powf(b.abs().log10().floor() - 14.0));
        assert!(
            (a - b).abs() <= 0.5 * resolution + 4.0 * f64::EPSILON * b.abs(),
            "{a} read back for {b}"
        );
    };
    let three_digits = |a: f64, b: f64| {
        assert!((a - b).abs() <= 5e-3 * b.abs(), "{a} read back for {b}");
    };
    assert_eq!(back.len(), expected.len());
    for (a, b) in back.iter().zip(expected) {
        assert_eq!(
            (
                a.line,
                a.given,
                a.observed_intensity,
                a.rank,
                &a.flags,
                &a.extra
            ),
            (
                b.line,
                b.given,
                b.observed_intensity,
                b.rank,
                &b.flags,
                &b.extra
            )
        );
        position(a.observed_wavenumber_cm1, b.observed_wavenumber_cm1, 1e-8);
        three_digits(a.observed_uncertainty_cm1, b.observed_uncertainty_cm1);
        assert_eq!(a.candidate.is_some(), b.candidate.is_some());
        let (Some(x), Some(y)) = (&a.candidate, &b.candidate) else {
            continue;
        };
        assert_eq!(
            (x.species, &x.lower, &x.upper, x.selection_rules),
            (y.species, &y.lower, &y.upper, y.selection_rules)
        );
        position(x.lower_energy_cm1, y.lower_energy_cm1, 1e-8);
        position(x.upper_energy_cm1, y.upper_energy_cm1, 1e-8);
        position(x.predicted_wavenumber_cm1, y.predicted_wavenumber_cm1, 1e-8);
        position(x.deviation_cm1, y.deviation_cm1, 1e-8);
        let nm = match a.given {
            GivenPosition::Wavelength { unit, .. } => 1e-11 / unit.nanometres(),
            GivenPosition::Wavenumber { .. } => 1e-8,
        };
        match (x.predicted_in_given_unit, y.predicted_in_given_unit) {
            (Some(p), Some(q)) => position(p, q, nm),
            (p, q) => assert_eq!(p, q),
        }
        three_digits(x.predicted_uncertainty_cm1, y.predicted_uncertainty_cm1);
        three_digits(x.combined_uncertainty_cm1, y.combined_uncertainty_cm1);
        three_digits(x.deviation_sigma, y.deviation_sigma);
        three_digits(x.chance_probability, y.chance_probability);
        match (x.predicted_strength, y.predicted_strength) {
            (Some(p), Some(q)) => three_digits(p, q),
            (p, q) => assert_eq!(p, q),
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
    assert_records_read_back(&back.records, &run.records());
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

#[test]
fn the_table_writer_lays_out_as_the_table_crate_does() {
    // The fixed-width writer replaces comfy-table for large tables; on a table
    // that fits, both must give the same text.
    let run = run();
    for all in [false, true] {
        let options = TableOptions {
            all,
            ..TableOptions::default()
        };
        let (ours, crate_text) = assign_table::by_both_writers(&run.report(), &options);
        assert_eq!(ours, crate_text);
    }
}

#[test]
fn json_numbers_are_those_of_the_csv() {
    let run = run();
    let csv_text = String::from_utf8(assign_csv(&run.report())).unwrap();
    let json: serde_json::Value = serde_json::from_str(&assign_json(&run.report())).unwrap();
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(csv_text.as_bytes());
    let header = reader.headers().unwrap().clone();
    let row = reader.records().next().unwrap().unwrap();
    let field = |name: &str| -> f64 {
        let i = header.iter().position(|h| h == name).unwrap();
        row[i].parse().unwrap()
    };
    let line = &json["lines"][0];
    let candidate = &line["candidates"][0];
    assert_eq!(
        line["observed_wavenumber_cm1"],
        field("observed_wavenumber_cm1")
    );
    assert_eq!(
        line["observed_uncertainty_cm1"],
        field("observed_uncertainty_cm1")
    );
    assert_eq!(candidate["lower"]["energy_cm1"], field("lower_energy_cm1"));
    assert_eq!(
        candidate["predicted_wavenumber_cm1"],
        field("predicted_wavenumber_cm1")
    );
    assert_eq!(
        candidate["predicted_in_given_unit"],
        field("predicted_in_given_unit")
    );
    assert_eq!(candidate["deviation_cm1"], field("deviation_cm1"));
    assert_eq!(candidate["deviation_sigma"], field("deviation_sigma"));
    assert_eq!(candidate["chance_probability"], field("chance_probability"));
}

/// A line list of `n` lines in input order (not sorted), near the He I and Ne I
/// predictions or anywhere, some in air nm and some in vacuum cm⁻¹, with a
/// pass-through column; from a seeded generator.
fn large_list(n: usize, predictions: &Predictions) -> LineList {
    use rand::{Rng, SeedableRng, rngs::StdRng};
    let mut rng = StdRng::seed_from_u64(15);
    let formula = AirFormula::default();
    let predicted = predictions.lines();
    let lines = (0..n)
        .map(|i| {
            let u = 0.01 * 10f64.powf(rng.random::<f64>());
            let sigma = if i % 2 == 0 {
                let pick = rng.random_range(0..predicted.len());
                predicted[pick].wavenumber_cm1 + u * (2.0 * rng.random::<f64>() - 1.0)
            } else {
                15000.0 + 10000.0 * rng.random::<f64>()
            };
            let given = if i % 3 == 0 || sigma > 45000.0 {
                GivenPosition::Wavenumber { value: sigma }
            } else {
                let w = Wavelength::from_wavenumber_cm1(
                    sigma,
                    LengthUnit::Nanometre,
                    Medium::Air,
                    formula,
                )
                .unwrap();
                GivenPosition::Wavelength {
                    value: w.value,
                    unit: w.unit,
                    medium: w.medium,
                }
            };
            ObservedLine {
                row: i + 1,
                source_line: i + 2,
                given,
                wavenumber_cm1: sigma,
                uncertainty_cm1: u,
                intensity: (i % 5 != 0).then(|| f64::from(rng.random_range(1..1000u32))),
                extra: vec![format!("note {i}, \"quoted\"")],
            }
        })
        .collect();
    LineList {
        source: "large.csv".into(),
        lines,
        extra_columns: vec!["note".into()],
        air_formula: formula,
        skipped: vec![],
        skipped_total: 0,
        medium_assumed: false,
    }
}

#[test]
fn outputs_are_the_same_on_one_core_and_on_four() {
    // Matching and formatting run in parallel tasks; the result and the bytes of
    // every format must not depend on how many threads did the work. 40 000 lines
    // make two output batches and several tasks in each.
    let predictions = helium_and_neon();
    let list = large_list(40_000, &predictions);
    let config = MatchConfig::default();
    let input = InputSummary::from_line_list(&list);
    let outputs = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| {
            let assignments = assign_lines(&list.lines, &predictions, &config);
            let report = AssignReport {
                input: &input,
                config: &config,
                list: &list,
                predictions: &predictions,
                assignments: &assignments,
                evidence: None,
            };
            let table = assign_table(
                &report,
                &TableOptions {
                    all: true,
                    ..TableOptions::default()
                },
            );
            (
                assignments.clone(),
                assign_csv(&report),
                assign_json(&report),
                table,
            )
        })
    };
    let one = outputs(1);
    let four = outputs(4);
    assert_eq!(one.0, four.0);
    assert!(one.1 == four.1, "the CSV differs");
    assert!(one.2 == four.2, "the JSON differs");
    assert!(one.3 == four.3, "the table differs");
    // The matching in input order agrees with matching the lines one at a time.
    for (i, line) in list.lines.iter().enumerate().step_by(997) {
        let alone = assign_lines(std::slice::from_ref(line), &predictions, &config);
        assert_eq!(alone[0].candidates, one.0[i].candidates);
    }
    // Every row is there, in input order, and the JSON parses.
    let csv_text = String::from_utf8(one.1).unwrap();
    let back = read_assignments(csv_text.as_bytes(), "large.csv").unwrap();
    assert!(back.records.windows(2).all(|w| w[0].line <= w[1].line));
    assert_eq!(back.records.last().unwrap().line, 40_000);
    assert_records_read_back(&back.records, &records(&list, &predictions, &four.0));
    let json: serde_json::Value = serde_json::from_str(&one.2).unwrap();
    assert_eq!(json["lines"].as_array().unwrap().len(), 40_000);
}
