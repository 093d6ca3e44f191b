//! The JSON output of `termsight assign`.

use serde::Serialize;

use super::{AssignCounts, AssignReport, InputSummary};
use crate::assign::AssignmentRecord;
use crate::levels::LevelLabel;
use crate::linelist::GivenPosition;

#[derive(Serialize)]
struct Document<'a> {
    input: &'a InputSummary,
    matching: Matching,
    species: Vec<SpeciesJson<'a>>,
    counts: AssignCounts,
    lines: Vec<LineJson>,
}

#[derive(Serialize)]
struct Matching {
    tolerance_sigma: f64,
    density_window_factor: f64,
    rule_penalty_sigma: f64,
}

#[derive(Serialize)]
struct SpeciesJson<'a> {
    species: String,
    origin: &'a str,
    model_uncertainty_cm1: f64,
    levels: usize,
    ls_lines: usize,
    parity_and_j_lines: usize,
    selection_rules: String,
}

#[derive(Serialize)]
struct LineJson {
    line: usize,
    given_value: f64,
    given_unit: &'static str,
    given_medium: Option<&'static str>,
    observed_wavenumber_cm1: f64,
    observed_uncertainty_cm1: f64,
    observed_intensity: Option<f64>,
    unassigned: bool,
    extra: serde_json::Map<String, serde_json::Value>,
    candidates: Vec<CandidateJson>,
}

#[derive(Serialize)]
struct LevelJson {
    configuration: String,
    term: String,
    #[serde(rename = "J")]
    j: String,
    energy_cm1: f64,
}

#[derive(Serialize)]
struct CandidateJson {
    rank: usize,
    species: String,
    lower: LevelJson,
    upper: LevelJson,
    predicted_wavenumber_cm1: f64,
    predicted_uncertainty_cm1: f64,
    predicted_in_given_unit: Option<f64>,
    predicted_strength: Option<f64>,
    ga_s1: Option<f64>,
    deviation_cm1: f64,
    combined_uncertainty_cm1: f64,
    deviation_sigma: f64,
    chance_probability: f64,
    selection_rules: &'static str,
    flags: Vec<&'static str>,
}

fn level(label: &LevelLabel, energy_cm1: f64) -> LevelJson {
    LevelJson {
        configuration: label.configuration.to_string(),
        term: label.term.to_string(),
        j: label.j.to_string(),
        energy_cm1,
    }
}

/// The JSON of an assign run: `input`, `matching` (settings), `species` (origin and
/// rules per species), `counts`, and `lines`, one object per observed line with its
/// ranked `candidates` (empty when unassigned). Labels, units and flags are written as
/// in the CSV.
pub fn assign_json(report: &AssignReport<'_>) -> String {
    let mut lines: Vec<LineJson> = Vec::new();
    for record in report.records {
        if lines.last().is_none_or(|l| l.line != record.line) {
            lines.push(line(record, report.extra_columns));
        }
        if let (Some(c), Some(rank), Some(current)) =
            (&record.candidate, record.rank, lines.last_mut())
        {
            current.candidates.push(CandidateJson {
                rank,
                species: c.species.to_string(),
                lower: level(&c.lower, c.lower_energy_cm1),
                upper: level(&c.upper, c.upper_energy_cm1),
                predicted_wavenumber_cm1: c.predicted_wavenumber_cm1,
                predicted_uncertainty_cm1: c.predicted_uncertainty_cm1,
                predicted_in_given_unit: c.predicted_in_given_unit,
                predicted_strength: c.predicted_strength,
                ga_s1: c.ga_s1,
                deviation_cm1: c.deviation_cm1,
                combined_uncertainty_cm1: c.combined_uncertainty_cm1,
                deviation_sigma: c.deviation_sigma,
                chance_probability: c.chance_probability,
                selection_rules: c.selection_rules.name(),
                flags: record.flags.iter().map(|f| f.name()).collect(),
            });
        }
    }
    let document = Document {
        input: report.input,
        matching: Matching {
            tolerance_sigma: report.config.tolerance_sigma(),
            density_window_factor: report.config.density_window_factor(),
            rule_penalty_sigma: report.config.rule_penalty_sigma(),
        },
        species: report
            .species
            .iter()
            .map(|s| SpeciesJson {
                species: s.species.to_string(),
                origin: &s.origin,
                model_uncertainty_cm1: s.model_uncertainty_cm1,
                levels: s.levels,
                ls_lines: s.ls_lines,
                parity_and_j_lines: s.parity_and_j_lines,
                selection_rules: s.rules_sentence(),
            })
            .collect(),
        counts: report.counts(),
        lines,
    };
    // Serialising plain structs of strings and finite or infinite numbers cannot
    // fail; non-finite numbers become null.
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_default();
    text.push('\n');
    text
}

fn line(record: &AssignmentRecord, extra_columns: &[String]) -> LineJson {
    let (given_value, given_unit, given_medium) = match record.given {
        GivenPosition::Wavelength {
            value,
            unit,
            medium,
        } => (value, unit.suffix(), Some(medium.name())),
        GivenPosition::Wavenumber { value } => (value, "cm1", None),
    };
    LineJson {
        line: record.line,
        given_value,
        given_unit,
        given_medium,
        observed_wavenumber_cm1: record.observed_wavenumber_cm1,
        observed_uncertainty_cm1: record.observed_uncertainty_cm1,
        observed_intensity: record.observed_intensity,
        unassigned: record.candidate.is_none(),
        extra: extra_columns
            .iter()
            .zip(&record.extra)
            .map(|(k, v)| (k.clone(), serde_json::Value::String(v.clone())))
            .collect(),
        candidates: Vec::new(),
    }
}
