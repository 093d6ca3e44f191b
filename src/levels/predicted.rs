//! Predicted lines: the input of the matcher, whatever made them.
//!
//! A [`Predictions`] set holds levels and the E1 lines between them, sorted by
//! vacuum wavenumber. Lines refer to their levels by index into the set, so a
//! million lines cost tens of megabytes, not a copy of two labels each. The set
//! also records, per species, where the predictions come from, the per-species
//! model uncertainty the matcher adds in quadrature (0 for Ritz predictions from a
//! level table), and which selection rules were applied.

use serde::{Deserialize, Serialize};

pub use super::accuracy::AccuracyCode;
use super::e1::{SelectionRules, TransitionFlags};
use super::table::Level;
use crate::notation::Species;

/// One predicted line between two levels of a [`Predictions`] set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PredictedLine {
    /// The spectrum.
    pub species: Species,
    /// Index of the lower level in [`Predictions::levels`].
    pub lower: usize,
    /// Index of the upper level in [`Predictions::levels`].
    pub upper: usize,
    /// Vacuum wavenumber σ, cm⁻¹ (> 0).
    pub wavenumber_cm1: f64,
    /// Standard uncertainty of σ, cm⁻¹, without the per-species model uncertainty.
    pub uncertainty_cm1: f64,
    /// Which selection rules were applied.
    pub rules: SelectionRules,
    /// Which of those rules the line breaks.
    pub flags: TransitionFlags,
    /// Relative line strength (any scale, comparable within a species), when the
    /// source of the predictions gives one: gf for the lines of a level model, and
    /// for Ritz lines with a published A_ki ([`TransitionProbability::gf`]); `None`
    /// otherwise.
    pub relative_strength: Option<f64>,
    /// The published E1 transition probability of the line, when the compiled table
    /// gives one; `None` when none is published (or for lines of a user's table or a
    /// model).
    #[serde(default)]
    pub transition_probability: Option<TransitionProbability>,
    /// True when one of the two levels has an energy not from experiment (printed in
    /// brackets by the compilation, [`super::EnergyStatus::bracketed`]).
    #[serde(default)]
    pub bracketed_level: bool,
    /// Whether the source's line list gives this line (classified, observed or
    /// computed), with or without a transition probability.
    #[serde(default)]
    pub listing: Listing,
}

/// Whether a predicted line is in the line list of its source.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Listing {
    /// No line list was consulted (a user's level table, a level model).
    #[default]
    NotConsulted,
    /// The compiled spectrum's source lists the line.
    Listed,
    /// The compiled spectrum's source does not list the line: a Ritz combination
    /// the compilation does not report as seen.
    NotListed,
}

/// A published transition probability, with what intensity estimates need besides.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TransitionProbability {
    /// A_ki, the Einstein coefficient of spontaneous emission from the upper level k
    /// to the lower level i, s⁻¹, as published.
    pub a_ki_s1: f64,
    /// g_k = 2J_k + 1, the statistical weight of the upper level.
    pub g_upper: u32,
    /// The compilation's accuracy code, when it prints one.
    pub accuracy: Option<AccuracyCode>,
}

impl TransitionProbability {
    /// g_k·A_ki, s⁻¹ (the quantity emission intensities are proportional to, with the
    /// upper level's Boltzmann factor and 1/λ).
    pub fn ga_s1(&self) -> f64 {
        f64::from(self.g_upper) * self.a_ki_s1
    }

    /// The weighted oscillator strength g_i·f_ik of the line at vacuum wavenumber
    /// `wavenumber_cm1` (cm⁻¹): gf = g_k A_ki · (m_e c / 8π² e²) / σ² in Gaussian
    /// units, 1.4992 cm⁻²·s · g_k A_ki / σ² (Wiese & Fuhr 2009, J. Phys. Chem. Ref.
    /// Data 38, 565, eq. 3), from the constants of [`crate::transitions`].
    pub fn gf(&self, wavenumber_cm1: f64) -> f64 {
        crate::transitions::gf_from_ga(self.ga_s1(), wavenumber_cm1)
    }
}

/// Where the predictions of one species come from, and what was applied.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpeciesSummary {
    /// The spectrum.
    pub species: Species,
    /// Where the predictions come from, e.g. `Ritz wavenumbers from <embedded He I>`.
    pub origin: String,
    /// Standard uncertainty of the model, cm⁻¹, added in quadrature to the
    /// uncertainty of every line of this species when matching (0 for Ritz
    /// predictions from a level table).
    pub model_uncertainty_cm1: f64,
    /// Number of levels of the species in the set.
    pub levels: usize,
    /// Lines between two LS-labelled levels ([`SelectionRules::Ls`]).
    pub ls_lines: usize,
    /// Lines where at least one label is in another coupling
    /// ([`SelectionRules::ParityAndJ`]).
    pub parity_and_j_lines: usize,
    /// Lines with a published transition probability.
    #[serde(default)]
    pub lines_with_transition_probability: usize,
    /// Lines the source's line list gives ([`Listing::Listed`]).
    #[serde(default)]
    pub listed_lines: usize,
    /// What else the outputs should say about these predictions (levels with
    /// energies not from experiment or relative to an unknown offset, labels that
    /// were kept with warnings, a table that replaces a compiled one, …).
    #[serde(default)]
    pub notes: Vec<String>,
}

impl SpeciesSummary {
    /// One sentence on the rules applied, for output headers, e.g. `LS rules for all
    /// 1234 lines` or `parity and J only for 5678 lines (labels in pair coupling), LS
    /// rules for 12`.
    pub fn rules_sentence(&self) -> String {
        match (self.ls_lines, self.parity_and_j_lines) {
            (0, 0) => "no lines".into(),
            (ls, 0) => format!("LS rules (ΔS = 0, ΔL = 0, ±1) examined for all {ls} lines"),
            (0, other) => {
                format!("parity and J rules only for all {other} lines (labels not in LS coupling)")
            }
            (ls, other) => format!(
                "LS rules examined for {ls} lines between LS labels; parity and J rules only \
                 for {other} lines with labels in another coupling"
            ),
        }
    }
}

/// A set of levels and the lines predicted between them, sorted by wavenumber.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Predictions {
    levels: Vec<Level>,
    lines: Vec<PredictedLine>,
    species: Vec<SpeciesSummary>,
    /// Lowest and highest wavenumber of every line predicted, cm⁻¹, including those
    /// not kept because no observed line can reach them ([`Predictions::span_cm1`]).
    #[serde(default)]
    span_cm1: Option<(f64, f64)>,
}

/// Lines predicted but not kept in a [`Predictions`] set, per species: they lie
/// beyond the reach of every observed line (no line can have them as candidates
/// nor count them in its density window), so the matcher would never look at them.
/// They still count in the species' summary, so the outputs describe the whole
/// prediction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct UnkeptLines {
    /// Lines between two LS-labelled levels.
    pub ls_lines: usize,
    /// Lines with a label in another coupling.
    pub parity_and_j_lines: usize,
    /// Lines with a published transition probability.
    pub with_transition_probability: usize,
    /// Lines the source's line list gives.
    pub listed: usize,
}

impl UnkeptLines {
    /// Count one line that is not kept.
    pub fn count(&mut self, line: &PredictedLine) {
        self.count_parts(
            line.rules,
            line.transition_probability.is_some(),
            line.listing == Listing::Listed,
        );
    }

    /// Count one line from what the summary needs of it: its rules, whether it has a
    /// published transition probability, whether its source lists it.
    pub fn count_parts(&mut self, rules: SelectionRules, with_probability: bool, listed: bool) {
        match rules {
            SelectionRules::Ls => self.ls_lines += 1,
            SelectionRules::ParityAndJ => self.parity_and_j_lines += 1,
        }
        self.with_transition_probability += usize::from(with_probability);
        self.listed += usize::from(listed);
    }
}

/// Lines and levels that do not make a valid [`Predictions`] set.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum PredictionError {
    /// A line refers to a level that is not in the set, or of another species.
    #[error("predicted line {line}: level index {index} is not a level of {species}")]
    BadLevel {
        /// Index of the line as given.
        line: usize,
        /// The level index.
        index: usize,
        /// The line's species.
        species: Species,
    },
    /// A wavenumber that is not finite and positive, or an uncertainty that is not
    /// finite and ≥ 0.
    #[error("predicted line {line}: {problem}")]
    BadNumber {
        /// Index of the line as given.
        line: usize,
        /// What is wrong.
        problem: String,
    },
    /// A species whose origin is not described, or described twice, or a bad
    /// model uncertainty.
    #[error("species {species}: {problem}")]
    BadSpecies {
        /// The species.
        species: Species,
        /// What is wrong.
        problem: String,
    },
}

/// Where the predictions of one species come from: the input to
/// [`Predictions::new`] from which [`SpeciesSummary`] is computed.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesOrigin {
    /// The spectrum.
    pub species: Species,
    /// Where its predictions come from.
    pub origin: String,
    /// Model uncertainty, cm⁻¹ (finite, ≥ 0); 0 for a level table.
    pub model_uncertainty_cm1: f64,
}

impl Predictions {
    /// A checked set: every line's levels exist and belong to its species, numbers
    /// are finite (σ > 0, uncertainties ≥ 0), every species of a level has exactly
    /// one origin. The lines are sorted by wavenumber (stable, so equal wavenumbers
    /// keep the given order).
    pub fn new(
        levels: Vec<Level>,
        mut lines: Vec<PredictedLine>,
        origins: Vec<SpeciesOrigin>,
    ) -> Result<Predictions, PredictionError> {
        for (i, line) in lines.iter().enumerate() {
            for index in [line.lower, line.upper] {
                if levels.get(index).is_none_or(|l| l.species != line.species) {
                    return Err(PredictionError::BadLevel {
                        line: i,
                        index,
                        species: line.species,
                    });
                }
            }
            if !(line.wavenumber_cm1.is_finite() && line.wavenumber_cm1 > 0.0) {
                return Err(PredictionError::BadNumber {
                    line: i,
                    problem: format!("wavenumber {} cm-1 is not positive", line.wavenumber_cm1),
                });
            }
            if !(line.uncertainty_cm1.is_finite() && line.uncertainty_cm1 >= 0.0) {
                return Err(PredictionError::BadNumber {
                    line: i,
                    problem: format!("uncertainty {} cm-1 is not ≥ 0", line.uncertainty_cm1),
                });
            }
        }
        let mut species: Vec<SpeciesSummary> = Vec::new();
        for origin in origins {
            if species.iter().any(|s| s.species == origin.species) {
                return Err(PredictionError::BadSpecies {
                    species: origin.species,
                    problem: "its origin is given twice".into(),
                });
            }
            if !(origin.model_uncertainty_cm1.is_finite() && origin.model_uncertainty_cm1 >= 0.0) {
                return Err(PredictionError::BadSpecies {
                    species: origin.species,
                    problem: format!(
                        "model uncertainty {} cm-1 is not ≥ 0",
                        origin.model_uncertainty_cm1
                    ),
                });
            }
            species.push(SpeciesSummary {
                species: origin.species,
                origin: origin.origin,
                model_uncertainty_cm1: origin.model_uncertainty_cm1,
                levels: 0,
                ls_lines: 0,
                parity_and_j_lines: 0,
                lines_with_transition_probability: 0,
                listed_lines: 0,
                notes: Vec::new(),
            });
        }
        // Which summary each level's species has: a short linear search per distinct
        // species run (levels of one species are usually contiguous), not a hash per
        // level and line.
        let mut level_summary: Vec<usize> = Vec::with_capacity(levels.len());
        let mut last: Option<(Species, usize)> = None;
        for level in &levels {
            let index = match last {
                Some((s, i)) if s == level.species => i,
                _ => species
                    .iter()
                    .position(|s| s.species == level.species)
                    .ok_or_else(|| PredictionError::BadSpecies {
                        species: level.species,
                        problem: "it has levels but no origin".into(),
                    })?,
            };
            last = Some((level.species, index));
            level_summary.push(index);
            if let Some(summary) = species.get_mut(index) {
                summary.levels += 1;
            }
        }
        for line in &lines {
            // The line's lower level is of its species (checked above).
            if let Some(summary) = level_summary
                .get(line.lower)
                .and_then(|&i| species.get_mut(i))
            {
                match line.rules {
                    SelectionRules::Ls => summary.ls_lines += 1,
                    SelectionRules::ParityAndJ => summary.parity_and_j_lines += 1,
                }
                if line.transition_probability.is_some() {
                    summary.lines_with_transition_probability += 1;
                }
                summary.listed_lines += usize::from(line.listing == Listing::Listed);
            }
        }
        if !lines.is_sorted_by(|a, b| a.wavenumber_cm1 <= b.wavenumber_cm1) {
            lines = sorted_by_wavenumber(lines);
        }
        let span_cm1 = match (lines.first(), lines.last()) {
            (Some(first), Some(last)) => Some((first.wavenumber_cm1, last.wavenumber_cm1)),
            _ => None,
        };
        Ok(Predictions {
            levels,
            lines,
            species,
            span_cm1,
        })
    }

    /// Join sets of different species into one (levels renumbered, lines merged in
    /// wavenumber order). A species in two sets is an error.
    pub fn combine(
        sets: impl IntoIterator<Item = Predictions>,
    ) -> Result<Predictions, PredictionError> {
        let mut levels = Vec::new();
        let mut lines = Vec::new();
        let mut origins = Vec::new();
        let mut notes = Vec::new();
        let mut unkept = Vec::new();
        let mut span: Option<(f64, f64)> = None;
        for set in sets {
            span = widest(span, set.span_cm1);
            for s in &set.species {
                let kept = set.lines.iter().filter(|l| l.species == s.species);
                let mut in_set = UnkeptLines::default();
                for line in kept {
                    in_set.count(line);
                }
                unkept.push((
                    s.species,
                    UnkeptLines {
                        ls_lines: s.ls_lines.saturating_sub(in_set.ls_lines),
                        parity_and_j_lines: s
                            .parity_and_j_lines
                            .saturating_sub(in_set.parity_and_j_lines),
                        with_transition_probability: s
                            .lines_with_transition_probability
                            .saturating_sub(in_set.with_transition_probability),
                        listed: s.listed_lines.saturating_sub(in_set.listed),
                    },
                ));
            }
            let offset = levels.len();
            levels.extend(set.levels);
            lines.extend(set.lines.into_iter().map(|line| PredictedLine {
                lower: line.lower + offset,
                upper: line.upper + offset,
                ..line
            }));
            for s in set.species {
                notes.push((s.species, s.notes));
                origins.push(SpeciesOrigin {
                    species: s.species,
                    origin: s.origin,
                    model_uncertainty_cm1: s.model_uncertainty_cm1,
                });
            }
        }
        let mut combined = Predictions::new(levels, lines, origins)?;
        combined.span_cm1 = widest(combined.span_cm1, span);
        for (species, notes) in notes {
            for note in notes {
                combined.add_note(species, note);
            }
        }
        for (species, counts) in unkept {
            combined.add_unkept(species, counts);
        }
        Ok(combined)
    }

    /// Count lines that were predicted for `species` but not kept (see
    /// [`UnkeptLines`]) in its summary.
    pub fn add_unkept(&mut self, species: Species, counts: UnkeptLines) {
        if let Some(summary) = self.species.iter_mut().find(|s| s.species == species) {
            summary.ls_lines += counts.ls_lines;
            summary.parity_and_j_lines += counts.parity_and_j_lines;
            summary.lines_with_transition_probability += counts.with_transition_probability;
            summary.listed_lines += counts.listed;
        }
    }

    /// Widen the recorded span of predicted wavenumbers to include `low..=high`
    /// (cm⁻¹), for lines predicted but not kept.
    pub fn widen_span(&mut self, low_cm1: f64, high_cm1: f64) {
        self.span_cm1 = widest(self.span_cm1, Some((low_cm1, high_cm1)));
    }

    /// Lowest and highest wavenumber of every line predicted, cm⁻¹, those not kept
    /// included (`None` for a set without lines). The chance probabilities cut their
    /// counting windows at this span (see [`crate::assign`]), so keeping only the
    /// lines within reach of a list changes no result.
    pub fn span_cm1(&self) -> Option<(f64, f64)> {
        self.span_cm1
    }

    /// Add a note for the outputs to the summary of `species` (nothing when the set
    /// does not have it).
    pub fn add_note(&mut self, species: Species, note: String) {
        if let Some(summary) = self.species.iter_mut().find(|s| s.species == species) {
            summary.notes.push(note);
        }
    }

    /// The lines, sorted by increasing wavenumber.
    pub fn lines(&self) -> &[PredictedLine] {
        &self.lines
    }

    /// The levels the lines refer to.
    pub fn levels(&self) -> &[Level] {
        &self.levels
    }

    /// One summary per species, in the order the origins were given.
    pub fn species(&self) -> &[SpeciesSummary] {
        &self.species
    }

    /// The summary of `species`, if the set has it.
    pub fn summary(&self, species: Species) -> Option<&SpeciesSummary> {
        self.species.iter().find(|s| s.species == species)
    }

    /// The model uncertainty of `species`, cm⁻¹ (0 if the set does not have it).
    pub fn model_uncertainty_cm1(&self, species: Species) -> f64 {
        self.summary(species)
            .map_or(0.0, |s| s.model_uncertainty_cm1)
    }

    /// The lower and upper levels of a line of this set (`None` for a line of
    /// another set with indices out of range).
    pub fn levels_of(&self, line: &PredictedLine) -> Option<(&Level, &Level)> {
        Some((self.levels.get(line.lower)?, self.levels.get(line.upper)?))
    }
}

/// `lines` in increasing wavenumber, equal wavenumbers in the given order (a stable
/// sort). The sort moves 16-byte keys and then gathers the lines once, rather than
/// moving the ~100-byte lines through every pass of a merge sort.
fn sorted_by_wavenumber(lines: Vec<PredictedLine>) -> Vec<PredictedLine> {
    let mut order: Vec<(f64, usize)> = lines
        .iter()
        .enumerate()
        .map(|(i, line)| (line.wavenumber_cm1, i))
        .collect();
    // Stable, and quick on the sorted runs that joined sets are made of.
    order.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut slots: Vec<Option<PredictedLine>> = lines.into_iter().map(Some).collect();
    order
        .into_iter()
        .filter_map(|(_, i)| slots.get_mut(i).and_then(Option::take))
        .collect()
}

/// The smallest range holding both spans.
fn widest(a: Option<(f64, f64)>, b: Option<(f64, f64)>) -> Option<(f64, f64)> {
    match (a, b) {
        (Some(a), Some(b)) => Some((a.0.min(b.0), a.1.max(b.1))),
        (a, None) => a,
        (None, b) => b,
    }
}
