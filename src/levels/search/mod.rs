//! The search for new levels from unassigned lines: the step of a term analysis
//! that finds an unknown level E from the lines it makes with known levels.
//!
//! A line σ between a new level E and a known level E_k of the opposite parity puts
//! E at E_k + σ (the new level above) or E_k − σ (below). Every pair of an observed
//! line and a known level therefore gives two *candidate energies*; a real level
//! shows up as several candidate energies, from different lines, that agree within
//! their uncertainties, where chance gives few. The search:
//!
//! 1. [`candidates`]: forms the candidate energies in slabs of the energy window,
//!    sorts them and sweeps over the intervals E_c ± k·u_c (u_c the line's and the
//!    known level's uncertainties combined in quadrature), so that the window of
//!    agreement follows each pair's own uncertainty. Cost O(P log P) for the P pairs
//!    that fall in the window; no grid over E.
//! 2. [`cluster`]: at each peak of the sweep, keeps one candidate energy per line
//!    and per known level (a line cannot support a level twice, and two levels
//!    combine in one line only), the J values of the new level that the E1 rules
//!    allow with every supporting level ([`jcompat`]), and the weighted mean E.
//! 3. [`significance`]: the probability that so many lines agree by chance, from
//!    the local density of candidate energies (Poisson), with the look-elsewhere
//!    factor of the whole search.
//! 4. [`select`]: the candidates ranked by that probability, each line given to the
//!    most significant candidate it supports only; a candidate that loses lines is
//!    judged again on the lines it keeps.
//!
//! The search is repeated in a term analysis by accepting a level: write it into the
//! level table (the CSV of `termsight find-levels` has the level-table columns),
//! assign again, and search the lines that are still unassigned, now with the new
//! level among the known ones.
//!
//! ```
//! use termsight::levels::search::{SearchConfig, SearchLine, find_levels};
//! use termsight::levels::read_level_table;
//! // Three known odd levels and an even level at 30000 cm⁻¹ to be found.
//! let table = "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
//!              He I,,1000°,1,1000,0.001,demo\n\
//!              He I,,5000°,1,5000,0.001,demo\n\
//!              He I,,12000°,2,12000,0.001,demo\n";
//! let levels = read_level_table(table.as_bytes(), "demo.csv").unwrap().levels;
//! let line = |row, sigma: f64| SearchLine { row, wavenumber_cm1: sigma, uncertainty_cm1: 0.002, intensity: None };
//! let lines = [line(1, 29000.0), line(2, 25000.001), line(3, 17999.999), line(4, 21234.5)];
//! let found = find_levels(&lines, &levels, &SearchConfig::default(), &mut |_| {});
//! let best = &found.candidates[0];
//! assert!((best.energy_cm1 - 30000.0).abs() < 0.002);
//! assert_eq!(best.supports.len(), 3);
//! ```

pub mod candidates;
pub mod cluster;
pub mod jcompat;
pub mod select;
pub mod significance;

use serde::{Deserialize, Serialize};

use super::table::Level;
use crate::notation::{HalfInt, Parity};

/// One observed line offered to the search.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SearchLine {
    /// 1-based row of the line in its input (the `line` column of outputs).
    pub row: usize,
    /// Vacuum wavenumber σ, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// Its standard uncertainty, cm⁻¹ (> 0).
    pub uncertainty_cm1: f64,
    /// Intensity as given, if any (arbitrary units).
    pub intensity: Option<f64>,
}

/// Settings of the search.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SearchConfig {
    min_lines: usize,
    tolerance_sigma: f64,
    energy_range_cm1: Option<(f64, f64)>,
    max_chance_probability: f64,
    density_window_factor: f64,
}

impl Default for SearchConfig {
    fn default() -> Self {
        SearchConfig {
            min_lines: Self::DEFAULT_MIN_LINES,
            tolerance_sigma: Self::DEFAULT_TOLERANCE_SIGMA,
            energy_range_cm1: None,
            max_chance_probability: Self::DEFAULT_MAX_CHANCE_PROBABILITY,
            density_window_factor: Self::DEFAULT_DENSITY_WINDOW_FACTOR,
        }
    }
}

/// A setting out of its range.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SearchConfigError {
    /// The value is outside the allowed range.
    #[error("give {allowed}, not {value}")]
    OutOfRange {
        /// What is allowed.
        allowed: &'static str,
        /// What was given.
        value: String,
    },
}

fn out_of_range(allowed: &'static str, value: impl ToString) -> SearchConfigError {
    SearchConfigError::OutOfRange {
        allowed,
        value: value.to_string(),
    }
}

impl SearchConfig {
    /// Default of [`SearchConfig::with_min_lines`].
    pub const DEFAULT_MIN_LINES: usize = 3;
    /// Default of [`SearchConfig::with_tolerance_sigma`] (as for line assignment).
    pub const DEFAULT_TOLERANCE_SIGMA: f64 = 3.0;
    /// Default of [`SearchConfig::with_max_chance_probability`].
    pub const DEFAULT_MAX_CHANCE_PROBABILITY: f64 = 0.01;
    /// Default of [`SearchConfig::with_density_window_factor`] (as for line
    /// assignment).
    pub const DEFAULT_DENSITY_WINDOW_FACTOR: f64 = 300.0;

    /// The fewest lines a candidate needs, 2 to 1000. Default: 3.
    pub fn with_min_lines(mut self, m: usize) -> Result<Self, SearchConfigError> {
        if !(2..=1000).contains(&m) {
            return Err(out_of_range("a number of lines from 2 to 1000", m));
        }
        self.min_lines = m;
        Ok(self)
    }

    /// A line supports a trial energy E when |σ_obs − |E − E_k|| ≤ k·u_c, u_c the
    /// line's and the known level's standard uncertainties in quadrature; k from
    /// 0.1 to 100. Default: 3.
    pub fn with_tolerance_sigma(mut self, k: f64) -> Result<Self, SearchConfigError> {
        if !(0.1..=100.0).contains(&k) {
            return Err(out_of_range("a number from 0.1 to 100", k));
        }
        self.tolerance_sigma = k;
        Ok(self)
    }

    /// Search only for levels with energies in [low, high], cm⁻¹ (0 ≤ low < high,
    /// finite). Default: from 0 to the highest known level plus the largest
    /// wavenumber.
    pub fn with_energy_range_cm1(mut self, low: f64, high: f64) -> Result<Self, SearchConfigError> {
        if !(low.is_finite() && high.is_finite() && low >= 0.0 && low < high) {
            return Err(out_of_range(
                "two finite energies 0 ≤ low < high in cm⁻¹",
                format!("{low} to {high}"),
            ));
        }
        self.energy_range_cm1 = Some((low, high));
        Ok(self)
    }

    /// Report only candidates whose chance probability (look-elsewhere included) is
    /// at most P, from 0 to 1. Default: 0.01.
    pub fn with_max_chance_probability(mut self, p: f64) -> Result<Self, SearchConfigError> {
        if !(0.0..=1.0).contains(&p) {
            return Err(out_of_range("a probability from 0 to 1", p));
        }
        self.max_chance_probability = p;
        Ok(self)
    }

    /// The density of candidate energies around a candidate is counted within
    /// ±FACTOR times the largest tolerance k·u_c of the search, FACTOR from 10 to
    /// 100000. Default: 300.
    pub fn with_density_window_factor(mut self, factor: f64) -> Result<Self, SearchConfigError> {
        if !(10.0..=1e5).contains(&factor) {
            return Err(out_of_range("a factor from 10 to 100000", factor));
        }
        self.density_window_factor = factor;
        Ok(self)
    }

    /// The fewest lines of a candidate.
    pub fn min_lines(&self) -> usize {
        self.min_lines
    }

    /// The tolerance k in combined standard uncertainties.
    pub fn tolerance_sigma(&self) -> f64 {
        self.tolerance_sigma
    }

    /// The energy window asked for, if any.
    pub fn energy_range_cm1(&self) -> Option<(f64, f64)> {
        self.energy_range_cm1
    }

    /// The largest chance probability reported.
    pub fn max_chance_probability(&self) -> f64 {
        self.max_chance_probability
    }

    /// The density window factor.
    pub fn density_window_factor(&self) -> f64 {
        self.density_window_factor
    }
}

/// One line that supports a candidate level.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Support {
    /// Index of the line in the lines given to [`find_levels`].
    pub line: usize,
    /// Index of the known level in the levels given to [`find_levels`].
    pub level: usize,
    /// True when the new level is the upper level of the line.
    pub new_level_is_upper: bool,
    /// σ_obs − |E − E_k| at the candidate's energy E, cm⁻¹.
    pub residual_cm1: f64,
    /// The line's and the known level's standard uncertainties in quadrature, cm⁻¹.
    pub combined_uncertainty_cm1: f64,
}

/// What the LS labels of the supporting levels say about the new level's spin.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SpinCheck {
    /// The multiplicities 2S + 1 of the new level that make the fewest supporting
    /// lines intercombination lines (ΔS ≠ 0), ascending.
    pub best_multiplicities: Vec<u32>,
    /// How many supporting lines are intercombination lines even with the best
    /// multiplicity: 0 when one spin makes every line spin-allowed.
    pub intercombination_lines: usize,
}

/// A candidate new level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CandidateLevel {
    /// Weighted mean energy, cm⁻¹: Σ(E_i/u_i²)/Σ(1/u_i²) over the supports'
    /// candidate energies E_i with their combined uncertainties u_i.
    pub energy_cm1: f64,
    /// Its standard uncertainty, (Σ 1/u_i²)^(−1/2), cm⁻¹, times the Birge ratio
    /// √(χ²/(n − 1)) of the supports about the mean where that exceeds 1 (the
    /// supports taken as independent: the uncertainty of a known level shared by
    /// no two of them).
    pub uncertainty_cm1: f64,
    /// Parity: the opposite of the supporting levels'.
    pub parity: Parity,
    /// The J values the E1 rules (ΔJ = 0, ±1, not 0–0) allow with every supporting
    /// level, ascending.
    pub allowed_j: Vec<HalfInt>,
    /// The supporting lines, by increasing |residual|/u.
    pub supports: Vec<Support>,
    /// Expected number of other candidate energies within the candidate's spread
    /// by chance, λ = ρ·2t (ρ the local density, t the largest tolerance k·u_c).
    pub expected_by_chance: f64,
    /// Probability that a candidate energy starts, by chance, a cluster as extreme:
    /// n or more lines within 2t, or n lines within the candidate's span s,
    /// P(X ≥ n; λ) + P(X = n − 1; λ)·(s/2t)^(n−1) (see [`significance`]).
    pub local_probability: f64,
    /// The chance probability with the look-elsewhere factor: 1 − (1 − p)^N, p the
    /// local probability and N the number of candidate energies in the search.
    pub chance_probability: f64,
    /// What the supports' LS terms say about the new level's spin; `None` when a
    /// supporting level has no LS term (pair or jj coupling, or no term).
    pub spin: Option<SpinCheck>,
    /// A known level of the same parity whose energy lies within k combined
    /// uncertainties of the candidate's (index in the levels given): the candidate
    /// may be that level, seen in lines the predictions lack.
    pub coincides_with: Option<usize>,
}

impl CandidateLevel {
    /// True when no spin of the new level makes every supporting line spin-allowed
    /// (flag `intercombination`).
    pub fn is_intercombination(&self) -> bool {
        self.spin
            .as_ref()
            .is_some_and(|s| s.intercombination_lines > 0)
    }
}

/// Progress of a long search: slabs of the energy window done of the total.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SearchProgress {
    /// Slabs searched.
    pub done: usize,
    /// Slabs in all.
    pub total: usize,
}

/// The outcome of a search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelSearch {
    /// The candidates, most significant first; no line supports two of them.
    pub candidates: Vec<CandidateLevel>,
    /// The energy window searched, cm⁻¹.
    pub energy_range_cm1: (f64, f64),
    /// Candidate energies (line–level pairs) in the window, both parities: the
    /// look-elsewhere factor N.
    pub candidate_energies: usize,
    /// Known levels used.
    pub known_levels_used: usize,
    /// Known levels left out because their energy is relative to an unknown offset
    /// (`+x`): a line to them does not place a level on the absolute scale.
    pub known_levels_offset: usize,
    /// Lines searched.
    pub lines: usize,
    /// The settings.
    pub config: SearchConfig,
}

/// Search for new levels supported by `lines` against the known `levels` (of one
/// species; levels relative to an unknown offset are left out). `progress` is
/// called after each group of slabs of the energy window.
///
/// Lines with a non-finite or non-positive wavenumber or uncertainty are ignored.
pub fn find_levels(
    lines: &[SearchLine],
    levels: &[Level],
    config: &SearchConfig,
    progress: &mut dyn FnMut(SearchProgress),
) -> LevelSearch {
    search(candidates::Problem::new(lines, levels, config), progress)
}

/// The search of a prepared problem.
fn search(problem: candidates::Problem, progress: &mut dyn FnMut(SearchProgress)) -> LevelSearch {
    let clusters = candidates::sweep_all(&problem, progress);
    let chosen = select::select(&problem, clusters);
    LevelSearch {
        candidates: chosen,
        energy_range_cm1: problem.range,
        candidate_energies: problem.total_points,
        known_levels_used: problem.known.len(),
        known_levels_offset: problem.offset_levels,
        lines: problem.lines.len(),
        config: problem.config,
    }
}

#[cfg(test)]
mod tests;
