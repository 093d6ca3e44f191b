//! The digits the outputs write change no result downstream: `optimize` gives the
//! same levels from the assign CSV as from the full-precision assignments, and `fit`
//! the same parameters from the optimised level table as from the full-precision
//! levels. Before the outputs were written to the digits they carry, every number
//! was written with the fewest digits that read back to the same double, so the
//! full-precision values in memory are what those files held.
//!
//! Data: the He I lines and levels of the NIST ASD 2014 export (see
//! `assign_reference.rs`), the example model `examples/level-models/he-1snl-fit.toml`.

use std::process::Command;

use termsight::assign::{Flag, MatchConfig, assign_lines, records};
use termsight::levels::EMBEDDED_TABLES;
use termsight::levels::optimize::{
    BlendPolicy, ClassifiedLine, ClassifiedLines, OptimizationReport, OptimizeOptions,
    optimize_classified, read_classified_lines,
};
use termsight::report::{
    AssignReport, InputSummary, OptimizeContext, assign_csv, optimized_levels_csv,
};

use crate::assign_reference::{helium_measured_list, helium_predictions};

fn options() -> OptimizeOptions {
    OptimizeOptions {
        blends: BlendPolicy::Widen(2.0),
        ..OptimizeOptions::default()
    }
}

/// The He I lines assigned (k = 4, as in the assign test), as the assign CSV
/// written now and as the full-precision assignments in memory.
fn assigned() -> (Vec<u8>, ClassifiedLines) {
    let list = helium_measured_list();
    let predictions = helium_predictions();
    let config = MatchConfig::default().with_tolerance_sigma(4.0).unwrap();
    let assignments = assign_lines(&list.lines, &predictions, &config);
    let input = InputSummary::from_line_list(&list);
    let csv = assign_csv(&AssignReport {
        input: &input,
        config: &config,
        list: &list,
        predictions: &predictions,
        assignments: &assignments,
        evidence: None,
    });
    let lines = records(&list, &predictions, &assignments)
        .iter()
        .filter_map(|row| {
            let candidate = row.candidate.as_ref()?;
            Some(ClassifiedLine {
                line: row.line,
                source_line: row.line + 1,
                species: candidate.species,
                lower: candidate.lower.clone(),
                upper: candidate.upper.clone(),
                wavenumber_cm1: row.observed_wavenumber_cm1,
                uncertainty_cm1: row.observed_uncertainty_cm1,
                rank: row.rank,
                blend: row.flags.contains(&Flag::Blend),
                accept: None,
                lower_energy_cm1: Some(candidate.lower_energy_cm1),
                upper_energy_cm1: Some(candidate.upper_energy_cm1),
                intensity: row.observed_intensity,
            })
        })
        .collect();
    let full = ClassifiedLines {
        source: "assigned.csv".into(),
        lines,
        unassigned_rows: 0,
        has_accept_column: false,
    };
    (csv, full)
}

fn optimised() -> (OptimizationReport, OptimizationReport) {
    let (csv, full) = assigned();
    let from_file = read_classified_lines(csv.as_slice(), "assigned.csv", None).unwrap();
    assert_eq!(from_file.lines.len(), full.lines.len());
    (
        optimize_classified(&from_file, &options()).unwrap(),
        optimize_classified(&full, &options()).unwrap(),
    )
}

#[test]
fn optimize_gives_the_same_levels_from_the_written_assignments() {
    // "The same" within a thousandth of each level's uncertainty: the rounding of a
    // wavenumber (5·10⁻⁹ cm⁻¹) and of an uncertainty (half a unit in its third
    // digit, so weights change by at most 1 %) cannot move a level further.
    let (from_file, full) = optimised();
    assert_eq!(from_file.selection, full.selection);
    let (a, b) = (&from_file.species[0], &full.species[0]);
    assert_eq!(a.levels.len(), b.levels.len());
    assert!(a.levels.len() >= 20);
    for (x, y) in a.levels.iter().zip(&b.levels) {
        assert_eq!(x.label, y.label);
        let tolerance = 1e-3 * y.uncertainty_cm1 + 1e-8;
        assert!(
            (x.energy_cm1 - y.energy_cm1).abs() <= tolerance,
            "{}: {} from the file, {} in full precision",
            y.label,
            x.energy_cm1,
            y.energy_cm1
        );
        assert!((x.uncertainty_cm1 - y.uncertainty_cm1).abs() <= 1e-2 * y.uncertainty_cm1);
    }
    assert!(
        (a.chi_squared - b.chi_squared).abs() <= 2e-2 * b.chi_squared + 1e-9,
        "χ² {} from the file, {} in full precision",
        a.chi_squared,
        b.chi_squared
    );
}

/// The optimised levels as a level table in full precision (every number with
/// the fewest digits that read back to the same double).
fn full_precision_table(report: &OptimizationReport) -> String {
    let mut text = String::from(
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source,line_count,system,\
         tabulated_energy_cm1,optimized_minus_tabulated_cm1,flags\n",
    );
    for species in &report.species {
        for level in &species.levels {
            text.push_str(&format!(
                "{},{},{},{},{},{},optimised,,,,,\n",
                species.species,
                level.label.configuration,
                level.label.term,
                level.label.j,
                level.energy_cm1,
                level.uncertainty_cm1
            ));
        }
    }
    text
}

fn fit(levels: &std::path::Path, weights: &str) -> serde_json::Value {
    let model = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/level-models/he-1snl-fit.toml"
    );
    let out = Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(["fit", model, "--levels"])
        .arg(levels)
        .args(["--weights", weights, "--format", "json"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn fit_gives_the_same_parameters_from_the_written_levels() {
    // The levels optimize writes (energies to 10⁻⁸ cm⁻¹, uncertainties to three
    // digits) against the same levels in full precision: every fitted parameter
    // agrees within 10⁻⁶ cm⁻¹ plus a thousandth of the fit's standard deviation.
    let (from_file, _) = optimised();
    let context = OptimizeContext {
        source: "assigned.csv",
        options: &options(),
        air_formula: Default::default(),
    };
    let dir = tempfile::tempdir().unwrap();
    let written = dir.path().join("written.csv");
    let full = dir.path().join("full.csv");
    // The lines fix only the excited levels: the compiled levels that no line
    // reaches (the ground level among them) are added to both tables as they are.
    let optimised_labels: Vec<String> = from_file.species[0]
        .levels
        .iter()
        .map(|l| l.label.to_string())
        .collect();
    let helium = EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == "He I")
        .unwrap();
    let mut others = String::new();
    for level in helium.load().unwrap().levels {
        if !optimised_labels.contains(&level.label.to_string()) {
            others.push_str(&format!(
                "He I,{},{},{},{},{},compiled,,,,,\n",
                level.label.configuration,
                level.label.term,
                level.label.j,
                level.energy_cm1,
                level.uncertainty_cm1
            ));
        }
    }
    let mut written_text = optimized_levels_csv(&from_file, &context);
    written_text.extend_from_slice(others.as_bytes());
    std::fs::write(&written, written_text).unwrap();
    std::fs::write(&full, full_precision_table(&from_file) + &others).unwrap();
    for weights in ["equal", "uncertainty"] {
        let (a, b) = (fit(&written, weights), fit(&full, weights));
        assert_eq!(a["matched_levels"], b["matched_levels"]);
        let sigma = b["sigma_cm1"].as_f64().unwrap_or(1.0);
        let (pa, pb) = (
            a["parameters"].as_array().unwrap(),
            b["parameters"].as_array().unwrap(),
        );
        assert_eq!(pa.len(), pb.len());
        for (x, y) in pa.iter().zip(pb) {
            assert_eq!(x["name"], y["name"]);
            let (x, y) = (
                x["fitted_cm1"].as_f64().unwrap(),
                y["fitted_cm1"].as_f64().unwrap(),
            );
            assert!((x - y).abs() <= 1e-6 + 1e-3 * sigma, "{x} vs {y}");
        }
    }
}
