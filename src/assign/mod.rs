//! Assigning observed lines: candidates within tolerance, ranked, with the
//! probability that each is a chance coincidence, and flags.
//!
//! [`assign_lines`] takes measured lines ([`ObservedLine`]) and a [`Predictions`] set
//! (Ritz lines from level tables, or lines of a level model: the matcher does not
//! care which) and returns, per observed line, a [`LineAssignment`] with its ranked
//! [`Candidate`]s. [`records`] flattens the result into [`AssignmentRecord`]s, one per
//! candidate (or one for an unassigned line): the rows of the assign CSV, which
//! [`read_assignments`] reads back.
//!
//! # How candidates are found and ranked
//!
//! - A predicted line is a candidate for an observed line when
//!   |σ_obs − σ_pred| ≤ k·u_c, with u_c = √(u_obs² + u_pred² + u_model²): the
//!   observed line's uncertainty, the prediction's, and the per-species model
//!   uncertainty of the set (0 for level tables). k is
//!   [`MatchConfig::tolerance_sigma`] (default 3).
//! - Candidates are found by binary search in the sorted predictions (see
//!   `search.rs`): never by scanning every pair.
//! - They are ranked by their deviation in combined standard uncertainties, |Δ|/u_c,
//!   where a line that breaks a non-rigorous selection rule (intercombination,
//!   L-forbidden, jump-forbidden, two-electron-jump) counts as if it lay further off:
//!   √((Δ/u_c)² + n·p²) for n broken rules, p = [`MatchConfig::rule_penalty_sigma`]
//!   (default 2; 0 ranks by deviation alone). For the compiled spectra the line
//!   lists of their sources count too ([`PredictedLine::listing`]): a listed line is
//!   known to be seen and gets no penalty (its flags are still shown); a Ritz
//!   combination the source does not list counts as breaking one rule more. Ties: lower chance probability
//!   first, then prediction order.
//! - Each gets a chance-coincidence probability from the local density of predicted
//!   lines (see [`chance`]).
//! - Flags ([`Flag`]): those of the predicted line (`intercombination`,
//!   `L-forbidden`, `jump-forbidden`, `two-electron-jump`), `blend` when more than
//!   one candidate lies within tolerance, `unassigned` when none does.
//!
//! ```
//! use termsight::assign::{assign_lines, MatchConfig};
//! use termsight::levels::{EMBEDDED_TABLES, predict_from_table};
//! use termsight::linelist::{GivenPosition, ObservedLine};
//! let helium = EMBEDDED_TABLES.iter().find(|t| t.species == "He I").unwrap();
//! let predictions = predict_from_table(&helium.load().unwrap()).unwrap();
//! // A line at 14970.1 cm⁻¹ ± 0.05 (He I 667.8 nm in air).
//! let line = ObservedLine {
//!     row: 1,
//!     source_line: 2,
//!     given: GivenPosition::Wavenumber { value: 14970.1 },
//!     wavenumber_cm1: 14970.1,
//!     uncertainty_cm1: 0.05,
//!     intensity: None,
//!     extra: vec![],
//! };
//! let result = assign_lines(&[line], &predictions, &MatchConfig::default());
//! let best = &result[0].candidates[0];
//! let predicted = &predictions.lines()[best.prediction];
//! let (lower, upper) = predictions.levels_of(predicted).unwrap();
//! assert_eq!(format!("{} – {}", lower.label, upper.label), "1s.2p 1P° 1 – 1s.3d 1D 2");
//! ```

pub mod chance;
pub mod evidence;
mod joint;
pub mod likelihood;
mod record;
mod search;
pub mod verdict;

use std::fmt;

use serde::{Deserialize, Serialize};

use crate::levels::{PredictedLine, Predictions};
use crate::linelist::ObservedLine;
pub use evidence::{
    EvidenceConfig, EvidenceError, EvidenceResult, LineIntensity, Resolution, SpeciesEvidence,
    TemperatureSource, assign_with_evidence,
};
pub use record::{
    ASSIGN_COLUMNS, AssignmentFile, AssignmentReadError, AssignmentRecord, CandidateRecord,
    predicted_in_given_unit, read_assignments, records,
};
use search::{CandidateIndex, Cursor, Hit};
pub use verdict::Verdict;

/// Settings of the matcher.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct MatchConfig {
    tolerance_sigma: f64,
    density_window_factor: f64,
    rule_penalty_sigma: f64,
    #[serde(default = "default_chance_floor")]
    chance_floor_fraction: f64,
}

fn default_chance_floor() -> f64 {
    1.0
}

/// A setting out of its range.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MatchConfigError {
    /// The tolerance must be a finite number greater than zero.
    #[error("the tolerance must be a number of standard uncertainties greater than 0, got {0}")]
    Tolerance(f64),
    /// The density window factor must be finite and at least 1.
    #[error("the density window factor must be at least 1, got {0}")]
    WindowFactor(f64),
    /// The rule penalty must be finite and at least 0.
    #[error("the selection-rule penalty must be a number of standard uncertainties ≥ 0, got {0}")]
    RulePenalty(f64),
    /// The chance floor must lie in (0, 1].
    #[error("the floor of the chance distance must be a fraction of u_c in (0, 1], got {0}")]
    ChanceFloor(f64),
}

impl Default for MatchConfig {
    fn default() -> Self {
        MatchConfig {
            tolerance_sigma: MatchConfig::DEFAULT_TOLERANCE_SIGMA,
            density_window_factor: MatchConfig::DEFAULT_DENSITY_WINDOW_FACTOR,
            rule_penalty_sigma: MatchConfig::DEFAULT_RULE_PENALTY_SIGMA,
            chance_floor_fraction: 1.0,
        }
    }
}

impl MatchConfig {
    /// Default tolerance, in combined standard uncertainties: 3.
    pub const DEFAULT_TOLERANCE_SIGMA: f64 = 3.0;
    /// Default ratio of the density-counting half-window to the tolerance: 300.
    pub const DEFAULT_DENSITY_WINDOW_FACTOR: f64 = 300.0;
    /// Default selection-rule penalty in ranking, in standard uncertainties: 2.
    pub const DEFAULT_RULE_PENALTY_SIGMA: f64 = 2.0;

    /// Candidates lie within `k` combined standard uncertainties; `k` > 0.
    /// Default: 3.
    pub fn with_tolerance_sigma(mut self, k: f64) -> Result<Self, MatchConfigError> {
        if !(k.is_finite() && k > 0.0) {
            return Err(MatchConfigError::Tolerance(k));
        }
        self.tolerance_sigma = k;
        Ok(self)
    }

    /// The line density for chance probabilities is counted within ±`factor`·k·u_c
    /// of the observed line; `factor` ≥ 1. Default: 300.
    pub fn with_density_window_factor(mut self, factor: f64) -> Result<Self, MatchConfigError> {
        if !(factor.is_finite() && factor >= 1.0) {
            return Err(MatchConfigError::WindowFactor(factor));
        }
        self.density_window_factor = factor;
        Ok(self)
    }

    /// In ranking, a candidate that breaks `n` of the non-rigorous selection rules
    /// (flags `intercombination`, `L-forbidden`, `jump-forbidden`,
    /// `two-electron-jump`) counts as if its
    /// deviation were √((Δ/u_c)² + n·p²) standard uncertainties, with p this
    /// penalty; p ≥ 0, and 0 ranks by deviation alone. Default: 2.
    ///
    /// Why: when two candidates lie within the measurement's uncertainty of each
    /// other, their deviations cannot tell them apart, and the selection rules are
    /// the better guide (He I 3d ¹D – 8f ¹F° and 3d ¹D – 8f ³F° lie 0.003 cm⁻¹
    /// apart). In likelihood terms p = 2 gives a line that breaks a rule prior odds
    /// of e^(−p²/2) ≈ 1/7.4 against an allowed one: a clear preference that still
    /// lets a rule-breaking line win when it is two standard uncertainties closer,
    /// as the strong intercombination lines of heavy atoms (Hg I 253.7 nm) need.
    /// Candidates are still found, and flagged, by the tolerance alone.
    pub fn with_rule_penalty_sigma(mut self, penalty: f64) -> Result<Self, MatchConfigError> {
        if !(penalty.is_finite() && penalty >= 0.0) {
            return Err(MatchConfigError::RulePenalty(penalty));
        }
        self.rule_penalty_sigma = penalty;
        Ok(self)
    }

    /// The chance probability counts an unrelated line as "at least as close" within
    /// w = max(|Δ|, f·u_c) (see [`chance`]); f in (0, 1]. Default 1 (the position-only
    /// ranking); the intensity-aware assignment uses
    /// [`evidence::CHANCE_FLOOR_FRACTION`] (0.1), which keeps P a valid p-value and
    /// makes it sharper at small α.
    pub fn with_chance_floor_fraction(mut self, f: f64) -> Result<Self, MatchConfigError> {
        if !(f.is_finite() && f > 0.0 && f <= 1.0) {
            return Err(MatchConfigError::ChanceFloor(f));
        }
        self.chance_floor_fraction = f;
        Ok(self)
    }

    /// The floor f of the chance distance, as a fraction of u_c.
    pub fn chance_floor_fraction(&self) -> f64 {
        self.chance_floor_fraction
    }

    /// The selection-rule penalty p, in standard uncertainties.
    pub fn rule_penalty_sigma(&self) -> f64 {
        self.rule_penalty_sigma
    }

    /// The tolerance k, in combined standard uncertainties.
    pub fn tolerance_sigma(&self) -> f64 {
        self.tolerance_sigma
    }

    /// The density window factor F.
    pub fn density_window_factor(&self) -> f64 {
        self.density_window_factor
    }

    /// What the observed lines can reach: every predicted line the matcher would
    /// look at for them lies within σ ± F·k·√(u² + U²) of one of them (a candidate
    /// within k·u_c, the density count within F·k·u_max, F ≥ 1), U bounding the
    /// predictions' uncertainty. Predictions outside it can be left out without
    /// changing any result ([`crate::levels::ListReach`]).
    pub fn reach_of(&self, observed: &[ObservedLine]) -> crate::levels::ListReach {
        crate::levels::ListReach::new(
            observed
                .iter()
                .map(|l| (l.wavenumber_cm1, l.uncertainty_cm1)),
            self.density_window_factor * self.tolerance_sigma,
        )
    }
}

/// A flag on a candidate or on an observed line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Flag {
    /// The predicted line changes the total spin (ΔS ≠ 0, LS labels).
    Intercombination,
    /// The predicted line breaks ΔL = 0, ±1 (not 0 ↔ 0) in LS coupling.
    LForbidden,
    /// One electron moves between the configurations, with Δl ≠ ±1.
    JumpForbidden,
    /// More than one electron changes subshell between the configurations.
    TwoElectronJump,
    /// More than one candidate lies within tolerance of the observed line.
    Blend,
    /// No candidate lies within tolerance.
    Unassigned,
}

impl Flag {
    /// Every flag, in output order.
    pub const ALL: [Flag; 6] = [
        Flag::Intercombination,
        Flag::LForbidden,
        Flag::JumpForbidden,
        Flag::TwoElectronJump,
        Flag::Blend,
        Flag::Unassigned,
    ];

    /// The name written in outputs.
    pub fn name(self) -> &'static str {
        match self {
            Flag::Intercombination => "intercombination",
            Flag::LForbidden => "L-forbidden",
            Flag::JumpForbidden => "jump-forbidden",
            Flag::TwoElectronJump => "two-electron-jump",
            Flag::Blend => "blend",
            Flag::Unassigned => "unassigned",
        }
    }

    /// Parse a name printed by [`Flag::name`].
    pub fn from_name(name: &str) -> Option<Flag> {
        Flag::ALL.into_iter().find(|f| f.name() == name.trim())
    }
}

impl fmt::Display for Flag {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// One candidate assignment of an observed line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Candidate {
    /// Index of the predicted line in [`Predictions::lines`].
    pub prediction: usize,
    /// Δ = σ_obs − σ_pred, cm⁻¹.
    pub deviation_cm1: f64,
    /// u_c = √(u_obs² + u_pred² + u_model²), cm⁻¹.
    pub combined_uncertainty_cm1: f64,
    /// Δ / u_c (signed).
    pub deviation_sigma: f64,
    /// The number ranked on: √((Δ/u_c)² + n·p²) for a line breaking n selection
    /// rules, with p the rule penalty (see [`MatchConfig::with_rule_penalty_sigma`]);
    /// |Δ/u_c| for a line breaking none.
    pub ranking_sigma: f64,
    /// Probability that a line this close is a chance coincidence (see [`chance`]).
    pub chance_probability: f64,
    /// What the intensity-aware assignment found ([`evidence`]); `None` in the
    /// position-only ranking.
    #[serde(default)]
    pub evidence: Option<CandidateEvidence>,
}

/// The intensity-aware assignment's view of one candidate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct CandidateEvidence {
    /// The log-likelihood ranked on (natural log; see [`likelihood`]).
    pub log_likelihood: f64,
    /// Predicted intensity relative to the strongest line of its species in the
    /// range of the list (= 1), at the species' excitation temperature; `None`
    /// without a transition probability.
    pub predicted_relative_intensity: Option<f64>,
    /// Observed intensity over the predicted one on the species' fitted scale (for
    /// a member of a declared blend, over the blend's summed prediction); `None`
    /// without an intensity, a transition probability or a scale.
    pub observed_to_predicted_intensity: Option<f64>,
    /// The verdict on the candidate's species.
    pub species_verdict: Verdict,
    /// Rank by log-likelihood on this line alone, before the joint resolution.
    pub per_line_rank: usize,
}

impl Candidate {
    /// The flags of this candidate: those of its predicted `line`, then `blend` when
    /// `blend` is true (the observed line has more than one candidate, see
    /// [`LineAssignment::is_blend`]).
    pub fn flags(&self, line: &PredictedLine, blend: bool) -> Vec<Flag> {
        let mut flags = Vec::new();
        if line.flags.intercombination {
            flags.push(Flag::Intercombination);
        }
        if line.flags.l_forbidden {
            flags.push(Flag::LForbidden);
        }
        if line.flags.jump_forbidden {
            flags.push(Flag::JumpForbidden);
        }
        if line.flags.two_electron_jump {
            flags.push(Flag::TwoElectronJump);
        }
        if blend {
            flags.push(Flag::Blend);
        }
        flags
    }
}

/// The candidates of one observed line, best first (empty: unassigned).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LineAssignment {
    /// Index of the observed line in the slice given to [`assign_lines`].
    pub observed: usize,
    /// Candidates, ranked.
    pub candidates: Vec<Candidate>,
    /// Set by the intensity-aware assignment: whether the line is a declared blend
    /// (its first candidates are predictions of comparable intensity that it
    /// explains together). `None`: a blend is any line with more than one
    /// candidate.
    #[serde(default)]
    pub declared_blend: Option<bool>,
}

impl LineAssignment {
    /// True when no candidate lies within tolerance.
    pub fn is_unassigned(&self) -> bool {
        self.candidates.is_empty()
    }

    /// The flag `blend`: in the position-only ranking, more than one candidate lies
    /// within tolerance; in the intensity-aware one, the line is a declared blend.
    pub fn is_blend(&self) -> bool {
        self.declared_blend.unwrap_or(self.candidates.len() > 1)
    }
}

/// How far the matcher has come: `done` of `total` observed lines.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MatchProgress {
    /// Lines matched so far.
    pub done: usize,
    /// Lines in all.
    pub total: usize,
}

/// Lines between two progress reports.
const PROGRESS_EVERY: usize = 1 << 16;

/// Lines matched by one task: several tasks per progress batch, so that both cores
/// stay busy, each long enough for its searches to start from where the previous
/// line's ended.
const LINES_PER_TASK: usize = 1 << 13;

/// Assign every observed line; see the module documentation. The result has one
/// [`LineAssignment`] per observed line, in the order given.
pub fn assign_lines(
    observed: &[ObservedLine],
    predictions: &Predictions,
    config: &MatchConfig,
) -> Vec<LineAssignment> {
    assign_lines_with_progress(observed, predictions, config, &mut |_| {})
}

/// [`assign_lines`], calling `progress` every 65 536 lines and at the end.
///
/// The lines may come in any order (a line list keeps its input order). They are
/// matched in order of wavenumber, through a sorted index, so that each search
/// starts near where the previous one ended, in tasks spread over every core; the
/// result is the same whatever the number of cores.
pub fn assign_lines_with_progress(
    observed: &[ObservedLine],
    predictions: &Predictions,
    config: &MatchConfig,
    progress: &mut dyn FnMut(MatchProgress),
) -> Vec<LineAssignment> {
    use rayon::prelude::*;

    let index = CandidateIndex::new(predictions);
    let order = wavenumber_order(observed);
    let mut result: Vec<LineAssignment> = (0..observed.len())
        .map(|observed| LineAssignment {
            observed,
            candidates: Vec::new(),
            declared_blend: None,
        })
        .collect();
    let mut done = 0;
    for batch in order.chunks(PROGRESS_EVERY) {
        let matched: Vec<Vec<(usize, Vec<Candidate>)>> = batch
            .par_chunks(LINES_PER_TASK)
            .map(|task| {
                let mut cursor = index.cursor();
                let mut hits = Vec::new();
                task.iter()
                    .filter_map(|&i| {
                        let line = observed.get(i)?;
                        index.search(
                            &mut cursor,
                            line.wavenumber_cm1,
                            line.uncertainty_cm1,
                            config.tolerance_sigma,
                            &mut hits,
                        );
                        let candidates =
                            rank(line.wavenumber_cm1, &hits, &index, &mut cursor, config);
                        Some((i, candidates))
                    })
                    .collect()
            })
            .collect();
        for (i, candidates) in matched.into_iter().flatten() {
            if let Some(slot) = result.get_mut(i) {
                slot.candidates = candidates;
            }
        }
        done += batch.len();
        if done < observed.len() {
            progress(MatchProgress {
                done,
                total: observed.len(),
            });
        }
    }
    progress(MatchProgress {
        done: observed.len(),
        total: observed.len(),
    });
    result
}

/// Indices of `lines` in order of increasing wavenumber (input order among equal
/// ones; non-finite wavenumbers in the total order of `f64::total_cmp`).
///
/// A list already in order, or in reverse order (a list by increasing
/// wavelength), takes one pass; else (wavenumber, index) keys are sorted, the
/// index making every key distinct, so the order is the one a stable sort gives.
fn wavenumber_order(lines: &[ObservedLine]) -> Vec<usize> {
    use rayon::prelude::*;

    let increasing = |pair: &[ObservedLine]| {
        pair[0].wavenumber_cm1.total_cmp(&pair[1].wavenumber_cm1) != std::cmp::Ordering::Greater
    };
    if lines.windows(2).all(increasing) {
        return (0..lines.len()).collect();
    }
    let strictly_decreasing = |pair: &[ObservedLine]| {
        pair[0].wavenumber_cm1.total_cmp(&pair[1].wavenumber_cm1) == std::cmp::Ordering::Greater
    };
    if lines.windows(2).all(strictly_decreasing) {
        return (0..lines.len()).rev().collect();
    }
    // The bits of a double, flipped so that unsigned order is f64::total_cmp's.
    let key = |x: f64| {
        let bits = x.to_bits();
        if bits >> 63 == 1 {
            !bits
        } else {
            bits | 1 << 63
        }
    };
    let mut keys: Vec<(u64, usize)> = lines
        .iter()
        .enumerate()
        .map(|(i, line)| (key(line.wavenumber_cm1), i))
        .collect();
    keys.par_sort_unstable();
    keys.into_iter().map(|(_, i)| i).collect()
}

/// Candidates from the hits of one observed line, with chance probabilities, ranked.
///
/// The density is counted once per observed line, within ±W of σ_obs with
/// W = F·k·max(u_c) over the line's candidates, so the window is at least F times
/// every candidate's tolerance (see [`chance`]).
fn rank(
    sigma_obs: f64,
    hits: &[Hit],
    index: &CandidateIndex,
    cursor: &mut Cursor,
    config: &MatchConfig,
) -> Vec<Candidate> {
    let Some(span) = index.span() else {
        return Vec::new();
    };
    let widest = hits
        .iter()
        .map(|h| h.combined_uncertainty_cm1)
        .fold(0.0, f64::max);
    let half_window = config.density_window_factor * config.tolerance_sigma * widest;
    let in_window = index.count_between(cursor, sigma_obs - half_window, sigma_obs + half_window);
    let length = chance::window_length(sigma_obs, half_window, span);
    let penalty = config.rule_penalty_sigma;
    let mut candidates: Vec<Candidate> = hits
        .iter()
        .map(|hit| {
            let u_c = hit.combined_uncertainty_cm1;
            let deviation_sigma = deviation_in_sigma(hit.deviation_cm1, u_c);
            let broken = hit.broken_rules;
            Candidate {
                prediction: hit.line,
                deviation_cm1: hit.deviation_cm1,
                combined_uncertainty_cm1: u_c,
                deviation_sigma,
                ranking_sigma: if broken == 0 {
                    deviation_sigma.abs()
                } else {
                    (deviation_sigma * deviation_sigma + f64::from(broken) * penalty * penalty)
                        .sqrt()
                },
                chance_probability: chance::chance_probability_with_floor(
                    hit.deviation_cm1,
                    u_c,
                    in_window.saturating_sub(1),
                    length,
                    config.chance_floor_fraction,
                ),
                evidence: None,
            }
        })
        .collect();
    // Unstable sort: the prediction index makes every key distinct, so the order
    // is fully determined.
    candidates.sort_unstable_by(|a, b| {
        a.ranking_sigma
            .total_cmp(&b.ranking_sigma)
            .then(a.chance_probability.total_cmp(&b.chance_probability))
            .then(a.prediction.cmp(&b.prediction))
    });
    candidates
}

/// Δ/u_c; 0 for an exact match with no uncertainty (never NaN).
fn deviation_in_sigma(deviation: f64, u_c: f64) -> f64 {
    if u_c > 0.0 {
        deviation / u_c
    } else if deviation == 0.0 {
        0.0
    } else {
        f64::INFINITY.copysign(deviation)
    }
}

#[cfg(test)]
mod tests;
