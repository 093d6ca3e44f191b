//! The JSON output of `termsight assign`, written line by line as it is formatted.

use std::io::{self, Write};

use serde::Serialize;
use serde::ser::SerializeMap;

use super::assign_rows::{Rendered, Row, given_parts};
use super::digits::{Fixed, Uncertainty, WAVENUMBER_DECIMALS};
use super::{AssignCounts, AssignReport, InputSummary};
use crate::assign::LineAssignment;

/// Everything before the lines.
#[derive(Serialize)]
struct Head<'a> {
    input: &'a InputSummary,
    matching: Matching,
    species: Vec<SpeciesJson<'a>>,
    counts: AssignCounts,
    #[serde(skip_serializing_if = "Option::is_none")]
    evidence: Option<EvidenceJson<'a>>,
}

#[derive(Serialize)]
struct EvidenceJson<'a> {
    intensity_units: &'static str,
    resolution: &'static str,
    rounds: usize,
    converged: bool,
    lines_with_intensity: usize,
    species: &'a [crate::assign::SpeciesEvidence],
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
struct LineJson<'a> {
    line: usize,
    given_value: f64,
    given_unit: &'static str,
    given_medium: Option<&'static str>,
    observed_wavenumber_cm1: Fixed,
    observed_uncertainty_cm1: Uncertainty,
    observed_intensity: Option<f64>,
    unassigned: bool,
    extra: Extra<'a>,
    candidates: Vec<CandidateJson<'a>>,
}

/// The pass-through fields as an object, column name to text.
struct Extra<'a> {
    names: &'a [String],
    values: &'a [String],
}

impl Serialize for Extra<'_> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let pairs = self.names.iter().zip(self.values);
        let mut map = serializer.serialize_map(Some(pairs.len()))?;
        for (name, value) in pairs {
            map.serialize_entry(name, value)?;
        }
        map.end()
    }
}

#[derive(Serialize)]
struct LevelJson<'a> {
    configuration: &'a str,
    term: &'a str,
    #[serde(rename = "J")]
    j: &'a str,
    energy_cm1: Fixed,
}

#[derive(Serialize)]
struct CandidateJson<'a> {
    rank: usize,
    species: &'a str,
    lower: LevelJson<'a>,
    upper: LevelJson<'a>,
    predicted_wavenumber_cm1: Fixed,
    predicted_uncertainty_cm1: Uncertainty,
    predicted_in_given_unit: Option<Fixed>,
    predicted_strength: Option<Uncertainty>,
    ga_s1: Option<f64>,
    deviation_cm1: Fixed,
    combined_uncertainty_cm1: Uncertainty,
    deviation_sigma: Uncertainty,
    chance_probability: Uncertainty,
    selection_rules: &'static str,
    flags: Vec<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    observed_to_predicted_intensity: Option<Option<Uncertainty>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    predicted_relative_intensity: Option<Option<Uncertainty>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    log_likelihood: Option<Fixed>,
    #[serde(skip_serializing_if = "Option::is_none")]
    species_verdict: Option<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    per_line_rank: Option<usize>,
}

fn wavenumber(value: f64) -> Fixed {
    Fixed(value, WAVENUMBER_DECIMALS)
}

fn candidate<'a>(row: &Row<'a>) -> Option<CandidateJson<'a>> {
    let c = row.candidate?;
    Some(CandidateJson {
        rank: row.rank.unwrap_or(0),
        species: &c.lower.species,
        lower: LevelJson {
            configuration: &c.lower.configuration,
            term: &c.lower.term,
            j: &c.lower.j,
            energy_cm1: wavenumber(c.lower.energy_cm1),
        },
        upper: LevelJson {
            configuration: &c.upper.configuration,
            term: &c.upper.term,
            j: &c.upper.j,
            energy_cm1: wavenumber(c.upper.energy_cm1),
        },
        predicted_wavenumber_cm1: wavenumber(c.line.wavenumber_cm1),
        predicted_uncertainty_cm1: Uncertainty(c.predicted_uncertainty_cm1()),
        predicted_in_given_unit: row
            .predicted_in_given_unit()
            .map(|(value, decimals)| Fixed(value, decimals)),
        predicted_strength: c.line.relative_strength.map(Uncertainty),
        ga_s1: c.line.transition_probability.map(|t| t.ga_s1()),
        deviation_cm1: wavenumber(c.candidate.deviation_cm1),
        combined_uncertainty_cm1: Uncertainty(c.candidate.combined_uncertainty_cm1),
        deviation_sigma: Uncertainty(c.candidate.deviation_sigma),
        chance_probability: Uncertainty(c.candidate.chance_probability),
        selection_rules: c.line.rules.name(),
        flags: row.flags().map(|f| f.name()).collect(),
        observed_to_predicted_intensity: c
            .candidate
            .evidence
            .map(|e| e.observed_to_predicted_intensity.map(Uncertainty)),
        predicted_relative_intensity: c
            .candidate
            .evidence
            .map(|e| e.predicted_relative_intensity.map(Uncertainty)),
        log_likelihood: c.candidate.evidence.map(|e| Fixed(e.log_likelihood, 3)),
        species_verdict: c.candidate.evidence.map(|e| e.species_verdict.name()),
        per_line_rank: c.candidate.evidence.map(|e| e.per_line_rank),
    })
}

/// Append the JSON object of one observed line on a line of its own in the
/// `lines` array, after a comma unless it is the first.
fn push_line<'a>(
    rendered: &'a Rendered<'a>,
    assignment: &'a LineAssignment,
    first: bool,
    out: &mut Vec<u8>,
) {
    let report = rendered.report;
    let Some(observed) = report.list.lines.get(assignment.observed) else {
        return;
    };
    let (given_value, given_unit, given_medium) = given_parts(&observed.given);
    let object = LineJson {
        line: observed.row,
        given_value,
        given_unit,
        given_medium,
        observed_wavenumber_cm1: wavenumber(observed.wavenumber_cm1),
        observed_uncertainty_cm1: Uncertainty(observed.uncertainty_cm1),
        observed_intensity: observed.intensity,
        unassigned: assignment.is_unassigned(),
        extra: Extra {
            names: &report.list.extra_columns,
            values: &observed.extra,
        },
        candidates: rendered
            .rows_of(assignment)
            .filter_map(|row| candidate(&row))
            .collect(),
    };
    out.extend_from_slice(if first { b"\n    " } else { b",\n    " });
    // Serialising strings and numbers into memory cannot fail; a non-finite
    // number becomes null.
    let _ = serde_json::to_writer(&mut *out, &object);
}

/// Write the JSON of an assign run to `out`: `input`, `matching` (settings),
/// `species` (origin and rules per species), `counts`, and `lines`, one object per
/// observed line in input order with its ranked `candidates` (empty when
/// unassigned), each on a line of its own (so that a million lines stay a file of
/// manageable size and can be read line by line). Labels, units, flags and the
/// digits of numbers are those of the CSV.
pub fn write_assign_json<W: Write + ?Sized>(
    report: &AssignReport<'_>,
    out: &mut W,
) -> io::Result<()> {
    let head = Head {
        input: report.input,
        matching: Matching {
            tolerance_sigma: report.config.tolerance_sigma(),
            density_window_factor: report.config.density_window_factor(),
            rule_penalty_sigma: report.config.rule_penalty_sigma(),
        },
        species: report
            .species()
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
        evidence: report.evidence.map(|e| EvidenceJson {
            intensity_units: e.config.units.name(),
            resolution: match e.config.resolution {
                crate::assign::Resolution::Joint => "joint",
                crate::assign::Resolution::PerLine => "per-line",
            },
            rounds: e.rounds,
            converged: e.converged,
            lines_with_intensity: e.lines_with_intensity,
            species: e.species,
        }),
    };
    let mut text = serde_json::to_vec_pretty(&head).map_err(io::Error::other)?;
    // Open the head object again for the lines: drop its closing "\n}".
    text.truncate(text.len().saturating_sub(2));
    text.extend_from_slice(b",\n  \"lines\": [");
    out.write_all(&text)?;
    let first = report.assignments.first();
    let rendered = Rendered::new(report);
    rendered.write_lines(out, |rendered, assignment, buffer| {
        let is_first = first.is_some_and(|f| std::ptr::eq(f, assignment));
        push_line(rendered, assignment, is_first, buffer);
    })?;
    if report.assignments.is_empty() {
        out.write_all(b"]\n}\n")
    } else {
        out.write_all(b"\n  ]\n}\n")
    }
}

/// [`write_assign_json`] into memory.
pub fn assign_json(report: &AssignReport<'_>) -> String {
    let mut out = Vec::new();
    // Writing to a Vec cannot fail.
    let _ = write_assign_json(report, &mut out);
    String::from_utf8(out).unwrap_or_default()
}
