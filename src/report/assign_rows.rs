//! The rows of the assign outputs, read straight from the line list, the
//! assignments and the predictions: no record is built per candidate, and each
//! level's label is rendered once for the whole run.

use rayon::prelude::*;

use super::AssignReport;
use super::digits::{WAVENUMBER_DECIMALS, push_wavenumber, wavelength_decimals};
use crate::assign::{Candidate, Flag, LineAssignment, predicted_in_given_unit};
use crate::levels::{Level, PredictedLine};
use crate::linelist::{GivenPosition, ObservedLine};
use crate::units::AirFormula;

/// Observed lines formatted by one task (the outputs are written in batches of
/// several tasks, so that both cores stay busy and memory stays bounded).
pub(super) const LINES_PER_TASK: usize = 2048;

/// Observed lines per batch: formatted in parallel, then written in order.
pub(super) const LINES_PER_BATCH: usize = 16 * LINES_PER_TASK;

/// The texts of one level, rendered once.
#[derive(Debug, Clone)]
pub(super) struct LevelText {
    /// The spectrum, e.g. `He I`.
    pub species: String,
    /// The configuration, e.g. `1s.2p`.
    pub configuration: String,
    /// The term, e.g. `3P°`.
    pub term: String,
    /// J, e.g. `3/2`.
    pub j: String,
    /// The energy, cm⁻¹.
    pub energy_cm1: f64,
    /// The energy as the CSV writes it (to 10⁻⁸ cm⁻¹).
    pub energy_text: Vec<u8>,
}

impl LevelText {
    fn new(level: &Level) -> LevelText {
        LevelText {
            species: level.species.to_string(),
            configuration: level.label.configuration.to_string(),
            term: level.label.term.to_string(),
            j: level.label.j.to_string(),
            energy_cm1: level.energy_cm1,
            energy_text: {
                let mut text = Vec::new();
                push_wavenumber(&mut text, level.energy_cm1);
                text
            },
        }
    }
}

/// What every row needs besides its own line and candidate: the rendered levels
/// and the per-species model uncertainties.
pub(super) struct Rendered<'a> {
    pub report: &'a AssignReport<'a>,
    levels: Vec<LevelText>,
}

impl<'a> Rendered<'a> {
    /// Render the levels of the report's predictions (in parallel: a level model
    /// may have tens of thousands).
    pub fn new(report: &'a AssignReport<'a>) -> Rendered<'a> {
        let levels = report
            .predictions
            .levels()
            .par_iter()
            .map(LevelText::new)
            .collect();
        Rendered { report, levels }
    }

    /// The rows of one observed line: one per candidate, best first, or one for an
    /// unassigned line.
    pub fn rows_of(&self, assignment: &'a LineAssignment) -> impl Iterator<Item = Row<'_>> + '_ {
        let observed = self.report.list.lines.get(assignment.observed);
        let unassigned = assignment.candidates.is_empty();
        let air_formula = self.report.list.air_formula;
        let first = observed.filter(|_| unassigned).map(|observed| Row {
            observed,
            assignment,
            rank: None,
            candidate: None,
            air_formula,
        });
        let candidates = observed.into_iter().flat_map(move |observed| {
            assignment
                .candidates
                .iter()
                .enumerate()
                .filter_map(move |(rank, candidate)| {
                    Some(Row {
                        observed,
                        assignment,
                        rank: Some(rank + 1),
                        candidate: Some(self.candidate(candidate)?),
                        air_formula,
                    })
                })
        });
        first.into_iter().chain(candidates)
    }

    fn candidate(&self, candidate: &'a Candidate) -> Option<CandidateRow<'_>> {
        let predictions = self.report.predictions;
        let line = predictions.lines().get(candidate.prediction)?;
        Some(CandidateRow {
            candidate,
            line,
            lower: self.levels.get(line.lower)?,
            upper: self.levels.get(line.upper)?,
            model_uncertainty_cm1: predictions.model_uncertainty_cm1(line.species),
        })
    }

    /// Format every observed line with `format_line` into `out`, in order: in
    /// batches of [`LINES_PER_BATCH`] lines, each batch formatted in parallel tasks
    /// and written as soon as it is done. The bytes are the same whatever the
    /// number of cores.
    pub fn write_lines<W, F>(&self, out: &mut W, format_line: F) -> std::io::Result<()>
    where
        W: std::io::Write + ?Sized,
        F: Fn(&Self, &'a LineAssignment, &mut Vec<u8>) + Sync,
    {
        for batch in self.report.assignments.chunks(LINES_PER_BATCH) {
            let parts: Vec<Vec<u8>> = batch
                .par_chunks(LINES_PER_TASK)
                .map(|task| {
                    let mut buffer = Vec::with_capacity(task.len() * 256);
                    for assignment in task {
                        format_line(self, assignment, &mut buffer);
                    }
                    buffer
                })
                .collect();
            for part in parts {
                out.write_all(&part)?;
            }
        }
        Ok(())
    }
}

/// One row: an observed line and one of its candidates (none when unassigned).
#[derive(Clone, Copy)]
pub(super) struct Row<'a> {
    pub observed: &'a ObservedLine,
    pub assignment: &'a LineAssignment,
    /// 1 = best; `None` for an unassigned line.
    pub rank: Option<usize>,
    pub candidate: Option<CandidateRow<'a>>,
    /// The air formula the line list was converted with.
    pub air_formula: AirFormula,
}

/// The candidate of a row with its predicted line and levels.
#[derive(Clone, Copy)]
pub(super) struct CandidateRow<'a> {
    pub candidate: &'a Candidate,
    pub line: &'a PredictedLine,
    pub lower: &'a LevelText,
    pub upper: &'a LevelText,
    /// The model uncertainty of the line's species, cm⁻¹.
    pub model_uncertainty_cm1: f64,
}

impl CandidateRow<'_> {
    /// The prediction's uncertainty with the model uncertainty, cm⁻¹.
    pub fn predicted_uncertainty_cm1(&self) -> f64 {
        let (a, b) = (self.line.uncertainty_cm1, self.model_uncertainty_cm1);
        // √(a² + b²) directly where it cannot overflow (hypot costs several times
        // more in this loop).
        if a.max(b) < 1e150 {
            (a * a + b * b).sqrt()
        } else {
            a.hypot(b)
        }
    }
}

impl Row<'_> {
    /// The flags of the row, in output order.
    pub fn flags(&self) -> impl Iterator<Item = Flag> + '_ {
        let blend = self.assignment.is_blend();
        let (line_flags, unassigned) = match &self.candidate {
            Some(c) => (Some(&c.line.flags), false),
            None => (None, true),
        };
        let line_flag = move |flag: Flag| match flag {
            Flag::Intercombination => line_flags.is_some_and(|f| f.intercombination),
            Flag::LForbidden => line_flags.is_some_and(|f| f.l_forbidden),
            Flag::JumpForbidden => line_flags.is_some_and(|f| f.jump_forbidden),
            Flag::TwoElectronJump => line_flags.is_some_and(|f| f.two_electron_jump),
            Flag::Blend => !unassigned && blend,
            Flag::Unassigned => unassigned,
        };
        Flag::ALL.into_iter().filter(move |&f| line_flag(f))
    }

    /// The prediction in the unit and medium the line was given in, with the
    /// decimals of that unit's fixed resolution.
    pub fn predicted_in_given_unit(&self) -> Option<(f64, u32)> {
        let c = self.candidate.as_ref()?;
        let value = predicted_in_given_unit(
            c.line.wavenumber_cm1,
            &self.observed.given,
            self.air_formula,
        )?;
        Some((value, given_unit_decimals(&self.observed.given)))
    }
}

/// Decimals of the fixed resolution in the unit of `given`.
pub(super) fn given_unit_decimals(given: &GivenPosition) -> u32 {
    match given {
        GivenPosition::Wavenumber { .. } => WAVENUMBER_DECIMALS,
        GivenPosition::Wavelength { unit, .. } => wavelength_decimals(unit.nanometres()),
    }
}

/// The position as given: number, unit suffix and medium name (blank for a
/// wavenumber).
pub(super) fn given_parts(given: &GivenPosition) -> (f64, &'static str, Option<&'static str>) {
    match *given {
        GivenPosition::Wavelength {
            value,
            unit,
            medium,
        } => (value, unit.suffix(), Some(medium.name())),
        GivenPosition::Wavenumber { value } => (value, "cm1", None),
    }
}
