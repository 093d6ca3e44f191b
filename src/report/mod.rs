//! Presenting results: terminal tables, CSV and JSON. Writers return text; only
//! [`crate::cli`] prints it or writes it to files.
//!
//! For `termsight assign`, an [`AssignReport`] gathers what every output says: the
//! input ([`InputSummary`]: source, how positions were given, the medium and air
//! formula), the matcher's settings, per species where the predictions come from and
//! which selection rules were applied, and the rows, read straight from the line
//! list, the assignments and the predictions. Then [`write_assign_table`] writes the
//! terminal table, [`write_assign_csv`] the CSV (the format of
//! [`crate::assign::ASSIGN_COLUMNS`], which [`crate::assign::read_assignments`] reads
//! back) and [`write_assign_json`] the JSON, each into any [`std::io::Write`] as the
//! rows are formatted (in parallel batches, the bytes the same on any number of
//! cores); [`assign_table`], [`assign_csv`] and [`assign_json`] return them whole.
//! Numbers carry the digits they have: see [`digits`].
//!
//! For `termsight lines`, a [`LinesReport`] holds the selected lines of a level
//! model; [`lines_table`], [`lines_csv`] and [`lines_json`] write it.
//! For `termsight levels`, [`level_rows`] turns computed levels into rows that
//! [`levels_table`], [`levels_csv`] and [`levels_json`] write.
//! For `termsight fit`, a [`FitReport`] wraps a [`crate::fit::FitResult`] with its
//! sources; [`fit_table`] and [`fit_json`] write it.
//! For `termsight radial`, a [`RadialReport`] holds the orbitals and integrals of
//! the configurations; [`radial_table`] and [`radial_json`] write it.
//! For `termsight plasma`, a [`crate::plasma::diagnose::Diagnosis`] with its
//! [`PlasmaInput`] is written by [`plasma_table`], [`plasma_csv`],
//! [`plasma_points_csv`] and [`plasma_json`].

mod assign_csv;
mod assign_json;
mod assign_rows;
mod assign_table;
mod compiled;
mod csv_document;
pub mod digits;
pub mod figures;
mod fit;
mod html;
mod level_search;
mod levels;
mod model_lines;
mod optimize;
mod plasma;
mod radial;

use serde::Serialize;

use crate::assign::{EvidenceConfig, LineAssignment, MatchConfig, SpeciesEvidence, Verdict};
use crate::levels::{Predictions, SpeciesSummary};
use crate::linelist::{GivenPosition, LineList};
use crate::units::{AirFormula, Medium};

pub use assign_csv::{assign_csv, write_assign_csv};
pub use assign_json::{assign_json, write_assign_json};
pub use assign_table::{TableOptions, assign_table, write_assign_table};
pub use compiled::{CompiledSpectrum, compiled_spectra_table};
pub use fit::{FitReport, fit_json, fit_table, fitted_model_toml};
pub use html::{AnalysisPage, MAX_TABLE_ROWS, PageFigure, PageLevelSearch, analysis_html};
pub use level_search::{
    LevelSearchReport, candidate_term, level_search_csv, level_search_json, level_search_table,
};
pub use levels::{ComponentRow, LevelRow, level_rows, levels_csv, levels_json, levels_table};
pub use model_lines::{
    DipoleValue, LINE_COLUMNS, LineRow, LineSelection, LinesReport, lines_csv, lines_json,
    lines_table,
};
pub use optimize::{
    OPTIMIZED_LEVEL_EXTRA_COLUMNS, OPTIMIZED_LINE_COLUMNS, OptimizeContext, blend_loss_text,
    optimize_description, optimize_json, optimize_table, optimized_levels_csv, optimized_lines_csv,
};
pub use plasma::{
    PLASMA_COLUMNS, PLASMA_POINT_COLUMNS, PlasmaInput, plasma_csv, plasma_json, plasma_points_csv,
    plasma_table,
};
pub use radial::{
    ConfigurationReport, NONRELATIVISTIC_LIMIT_Z, OrbitalReport, RadialReport, radial_json,
    radial_table, relativistic_note,
};

/// What the outputs say about the measured line list.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InputSummary {
    /// The source (path or `<stdin>`).
    pub source: String,
    /// Lines read.
    pub lines: usize,
    /// Rows skipped as bad (only when skipping was asked for).
    pub skipped_rows: usize,
    /// How the positions were given: `air wavelengths (nm)`, `vacuum wavenumbers
    /// (cm-1)`, … joined with `; ` when mixed.
    pub positions: String,
    /// The air formula used, when any wavelength was in air (in JSON: its command-line
    /// name and its citation).
    #[serde(serialize_with = "air_formula_json")]
    pub air_formula: Option<AirFormula>,
    /// True when the medium of some wavelength was assumed by the convention (air at
    /// and above 200 nm, vacuum below) because neither the file nor the command line
    /// gave it.
    pub medium_assumed: bool,
}

/// An air formula as `{"name": "birch-downs", "citation": "Birch & Downs (1994, …"}`.
fn air_formula_json<S: serde::Serializer>(
    formula: &Option<AirFormula>,
    serializer: S,
) -> Result<S::Ok, S::Error> {
    #[derive(Serialize)]
    struct Named {
        name: &'static str,
        citation: &'static str,
    }
    formula
        .map(|f| Named {
            name: f.name(),
            citation: f.citation(),
        })
        .serialize(serializer)
}

impl InputSummary {
    /// Describe a line list.
    pub fn from_line_list(list: &LineList) -> InputSummary {
        let mut kinds: Vec<String> = Vec::new();
        let mut any_air = false;
        for line in &list.lines {
            let kind = match line.given {
                GivenPosition::Wavelength { unit, medium, .. } => {
                    any_air |= medium == Medium::Air;
                    format!("{medium} wavelengths ({unit})")
                }
                GivenPosition::Wavenumber { .. } => "vacuum wavenumbers (cm⁻¹)".to_string(),
            };
            if !kinds.contains(&kind) {
                kinds.push(kind);
            }
        }
        InputSummary {
            source: list.source.clone(),
            lines: list.lines.len(),
            skipped_rows: list.skipped_total,
            positions: kinds.join("; "),
            air_formula: any_air.then_some(list.air_formula),
            medium_assumed: list.medium_assumed,
        }
    }

    /// One sentence on the positions, the medium and the air formula.
    pub fn sentence(&self) -> String {
        let mut text = format!(
            "{} lines from {}: {}",
            self.lines,
            self.source,
            if self.positions.is_empty() {
                "no positions"
            } else {
                &self.positions
            }
        );
        if let Some(formula) = self.air_formula {
            text.push_str(&format!(
                "; air wavelengths converted to vacuum wavenumbers with {}",
                formula.citation()
            ));
        }
        if self.medium_assumed {
            text.push_str(
                "; where neither the file nor --medium gave the medium, air was assumed at \
                 and above 200 nm and vacuum below (the usual convention)",
            );
        }
        if self.skipped_rows > 0 {
            let rows = if self.skipped_rows == 1 {
                "row"
            } else {
                "rows"
            };
            text.push_str(&format!("; {} bad {rows} skipped", self.skipped_rows));
        }
        text
    }
}

/// Everything the outputs of `termsight assign` show. The writers read the rows
/// straight from the line list, the assignments and the predictions.
#[derive(Debug, Clone, Copy)]
pub struct AssignReport<'a> {
    /// What the outputs say about the measured line list.
    pub input: &'a InputSummary,
    /// The matcher's settings.
    pub config: &'a MatchConfig,
    /// The measured lines (in input order) and their pass-through columns.
    pub list: &'a LineList,
    /// The predictions matched against: levels, lines, and per species their origin
    /// and the rules applied.
    pub predictions: &'a Predictions,
    /// The result of [`crate::assign::assign_lines`] for `list.lines` and
    /// `predictions`: one per line, in the order of the lines.
    pub assignments: &'a [LineAssignment],
    /// What the intensity-aware assignment found, `None` for the position-only
    /// ranking.
    pub evidence: Option<EvidenceView<'a>>,
}

/// The species summary and settings of an intensity-aware assignment.
#[derive(Debug, Clone, Copy)]
pub struct EvidenceView<'a> {
    /// The settings.
    pub config: &'a EvidenceConfig,
    /// One per species.
    pub species: &'a [SpeciesEvidence],
    /// Rounds run.
    pub rounds: usize,
    /// Whether the rounds reached a fixed point.
    pub converged: bool,
    /// Observed lines with a usable intensity.
    pub lines_with_intensity: usize,
}

impl EvidenceView<'_> {
    /// Species shown in the summary: those with an assigned line or not absent,
    /// then the rest counted in one line.
    pub fn summary_lines(&self) -> Vec<String> {
        let mut lines = vec![
            "Species (present / absent / undecided; lines assigned at rank 1; expected              above the detection limit: seen / missing; T_exc; fraction of the observed              intensity explained):"
                .to_string(),
        ];
        let mut absent_quiet = Vec::new();
        for s in self.species {
            if s.lines_assigned == 0 && s.verdict == Verdict::Absent {
                absent_quiet.push(s.species.to_string());
                continue;
            }
            let temperature = match s.temperature_sigma_k {
                Some(sigma) => format!(
                    "T_exc = {:.0} ± {:.0} K (Boltzmann plot, {} lines)",
                    s.temperature_k,
                    sigma,
                    s.boltzmann.as_ref().map_or(0, |b| b.used_points())
                ),
                None => format!(
                    "T_exc = {:.0} K ({}{})",
                    s.temperature_k,
                    s.temperature_source.name(),
                    s.temperature_note
                        .as_ref()
                        .map(|n| format!(": no plot, {n}"))
                        .unwrap_or_default()
                ),
            };
            let intensities = if s.with_transition_probabilities {
                String::new()
            } else {
                "; no transition probabilities: position only".to_string()
            };
            lines.push(format!(
                "  {}: {}, {} assigned, {} expected: {} seen / {} missing; {}; {:.1} % of the                  intensity{}. {}.",
                s.species,
                s.verdict,
                s.lines_assigned,
                s.lines_expected,
                s.lines_expected_seen,
                s.lines_missing,
                temperature,
                100.0 * s.intensity_fraction,
                intensities,
                s.reason
            ));
        }
        if !absent_quiet.is_empty() {
            lines.push(format!(
                "  absent, no line assigned: {} (their candidates demoted; see the JSON for                  the reasons).",
                absent_quiet.join(", ")
            ));
        }
        lines
    }
}

/// Counts for the summary line.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub struct AssignCounts {
    /// Observed lines.
    pub lines: usize,
    /// Lines with at least one candidate.
    pub assigned: usize,
    /// Lines with more than one candidate.
    pub blends: usize,
    /// Lines with none.
    pub unassigned: usize,
}

impl AssignReport<'_> {
    /// Per species: origin of the predictions and the rules applied.
    pub fn species(&self) -> &[SpeciesSummary] {
        self.predictions.species()
    }

    /// Count lines, assigned, blends and unassigned.
    pub fn counts(&self) -> AssignCounts {
        let mut counts = AssignCounts {
            lines: self.assignments.len(),
            ..AssignCounts::default()
        };
        for assignment in self.assignments {
            if assignment.is_unassigned() {
                counts.unassigned += 1;
            } else {
                counts.assigned += 1;
                if assignment.is_blend() {
                    counts.blends += 1;
                }
            }
        }
        counts
    }

    /// The description printed above the terminal table and as `#` lines at the top
    /// of the CSV: input, medium and air formula, predictions and rules per species,
    /// the matcher's settings, and the counts.
    pub fn description(&self) -> Vec<String> {
        let mut lines = vec![format!("Input: {}.", self.input.sentence())];
        for s in self.species() {
            let mut line = format!(
                "Predictions, {}: {} ({} levels, {} lines",
                s.species,
                s.origin,
                s.levels,
                s.ls_lines + s.parity_and_j_lines,
            );
            if s.lines_with_transition_probability > 0 {
                line.push_str(&format!(
                    ", {} with a published transition probability",
                    s.lines_with_transition_probability
                ));
            }
            line.push_str(&format!("); {}.", s.rules_sentence()));
            for note in &s.notes {
                let mut chars = note.chars();
                let first: String = chars
                    .next()
                    .map(|c| c.to_uppercase().collect())
                    .unwrap_or_default();
                line.push_str(&format!(" {first}{}.", chars.as_str()));
            }
            lines.push(line);
        }
        match &self.evidence {
            None => lines.push(format!(
                "Matching: candidates within {} combined standard uncertainties; ranked by \
                 deviation, a line breaking an LS or one-electron rule counted {} standard \
                 uncertainties further off; chance probability P = 1 − exp(−2ρw) from the \
                 density ρ of predicted lines within ±{} times the tolerance.",
                self.config.tolerance_sigma(),
                self.config.rule_penalty_sigma(),
                self.config.density_window_factor()
            )),
            Some(e) => lines.push(format!(
                "Matching: candidates within {} combined standard uncertainties; ranked by \
                 log-likelihood (position, intensity as {} counts against each species' \
                 Boltzmann populations, selection rules weighted {} σ for light LS spectra \
                 and half that otherwise, blend shares, species evidence), {}; {} of {} \
                 lines with an intensity; {} rounds{}; chance probability P = 1 − exp(−2ρw), \
                 w = max(|Δ|, 0.1 u_c), from the density ρ of predicted lines within ±{} times \
                 the tolerance.",
                self.config.tolerance_sigma(),
                e.config.units.name(),
                self.config.rule_penalty_sigma(),
                match e.config.resolution {
                    crate::assign::Resolution::Joint =>
                        "resolved jointly (one transition, one line; blends declared where \
                         predictions of comparable intensity coincide)",
                    crate::assign::Resolution::PerLine => "ranked per line",
                },
                e.lines_with_intensity,
                self.assignments.len(),
                e.rounds,
                if e.converged {
                    " to a fixed point"
                } else {
                    " (no fixed point reached)"
                },
                self.config.density_window_factor()
            )),
        }
        let c = self.counts();
        let blends = if self.evidence.is_some() {
            "declared blends"
        } else {
            "with more than one candidate"
        };
        lines.push(format!(
            "Result: {} lines, {} assigned ({} {blends}), {} unassigned.",
            c.lines, c.assigned, c.blends, c.unassigned
        ));
        if let Some(e) = &self.evidence {
            lines.extend(e.summary_lines());
        }
        lines
    }
}

/// A number with `significant` significant digits, in plain decimal notation for
/// magnitudes from 10⁻⁴ up, in exponent notation below.
fn significant(value: f64, significant: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    let magnitude = value.abs().log10().floor() as i32;
    if magnitude < -4 {
        return format!("{value:.prec$e}", prec = significant.saturating_sub(1));
    }
    let decimals = (significant as i32 - 1 - magnitude).max(0) as usize;
    format!("{value:.decimals$}")
}

#[cfg(test)]
mod tests;
