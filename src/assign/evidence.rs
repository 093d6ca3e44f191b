//! The intensity-aware assignment: candidates ranked by a log-likelihood that
//! weighs position, intensity, selection rules and the evidence on each species,
//! resolved jointly over the whole list, with excitation temperatures and species
//! verdicts iterated to a fixed point.
//!
//! [`assign_with_evidence`] works in rounds:
//!
//! 1. The candidates within tolerance are found as by [`super::assign_lines`]
//!    (with the chance distance floored at [`CHANCE_FLOOR_FRACTION`] · u_c; see
//!    [`super::chance::chance_probability_with_floor`]).
//! 2. Each candidate is scored by the log-likelihood of [`super::likelihood`] with
//!    the current state of its species: excitation temperature T, intensity
//!    scale S, scatter σ, and the likelihood ratio of present against absent.
//!    In the first round no scale is known: position, rules and blend shares only.
//! 3. The list is resolved jointly ([`super::joint`]): each prediction is the
//!    primary of one observed line at most. A line's declared blend is its primary
//!    with the other candidates of the same species within tolerance whose
//!    predicted intensity is at least [`super::likelihood::BLEND_RATIO`] of the
//!    strongest (with transition probabilities; without, the components of one LS
//!    multiplet by their LS strengths), unless they are another line's primary.
//! 4. Per species, from its primaries: the Boltzmann plot
//!    ([`crate::plasma::boltzmann`]) gives T ± σ when it can (else T stays at its
//!    start value, [`DEFAULT_TEMPERATURE_K`] or the one given, and the reason is
//!    kept); S is the median of ln I − ln I_pred; σ the robust scatter
//!    (1.4826 × MAD, within 0.3–1.5; 0.7, a factor 2, with fewer than 5 lines).
//!    Then the verdict ([`super::verdict`]): lines expected above the detection
//!    limit (the 5th percentile of the observed intensities, plus σ) against the
//!    observed coincidences.
//! 5. Repeat from 2 until the primaries no longer change, at most [`ROUNDS`] rounds.
//!
//! The input intensities are photon counts unless [`EvidenceConfig::units`] says
//! energy ([`crate::plasma::IntensityUnits`]); their relative uncertainty is the
//! `uncertainty_intensity` column over the intensity, or
//! [`DEFAULT_RELATIVE_UNCERTAINTY`].

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::likelihood::{
    BLEND_RATIO, IntensityReference, intensity_term, ls_multiplet_strength, median, position_term,
    rules_term, species_term,
};
use super::verdict::{self, Verdict, ln_likelihood_ratio, ln_poisson_tail};
use super::{
    CandidateEvidence, LineAssignment, MatchConfig, MatchProgress, assign_lines_with_progress,
};
use crate::levels::Predictions;
use crate::linelist::ObservedLine;
use crate::notation::Species;
use crate::plasma::{BoltzmannFit, BoltzmannPoint, IntensityUnits, fit_boltzmann};
use crate::units::constants::SECOND_RADIATION_CM_K;

/// Floor of the chance distance in the intensity-aware assignment, as a fraction of
/// u_c: 0.1.
pub const CHANCE_FLOOR_FRACTION: f64 = 0.1;

/// Starting excitation temperature, K: 8000 (a usual excitation temperature of
/// glow and arc discharges; common practice, no source).
pub const DEFAULT_TEMPERATURE_K: f64 = 8000.0;

/// Relative standard uncertainty of an intensity that gives none: 0.2 (20 %, what
/// relative line intensities from a calibrated grating spectrometer usually carry;
/// common practice, no source). It weights the Boltzmann plot; the scatter of the
/// plot itself sets the uncertainty of T (Birge ratio).
pub const DEFAULT_RELATIVE_UNCERTAINTY: f64 = 0.2;

/// Most rounds of scoring, resolution and fitting: 6.
pub const ROUNDS: usize = 6;

/// A declared blend enters the Boltzmann plot when its components' upper levels lie
/// within this many cm⁻¹ (a multiplet's fine structure), at their intensity-weighted
/// mean.
const BLEND_ENERGY_SPREAD_CM1: f64 = 100.0;

/// How the lines are resolved.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum Resolution {
    /// Jointly over the list: one transition, one line.
    #[default]
    Joint,
    /// Each line on its own, by log-likelihood.
    PerLine,
}

/// Settings of the intensity-aware assignment.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EvidenceConfig {
    /// Starting T for species not in `temperatures`, K.
    pub default_temperature_k: f64,
    /// Starting T per species, K.
    pub temperatures: Vec<(Species, f64)>,
    /// What the intensities measure.
    pub units: IntensityUnits,
    /// Joint or per-line resolution.
    pub resolution: Resolution,
}

impl Default for EvidenceConfig {
    fn default() -> Self {
        EvidenceConfig {
            default_temperature_k: DEFAULT_TEMPERATURE_K,
            temperatures: Vec::new(),
            units: IntensityUnits::Photon,
            resolution: Resolution::Joint,
        }
    }
}

/// A setting out of range.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum EvidenceError {
    /// A temperature that is not a finite number of K above 0.
    #[error("the temperature of {species} must be a number of kelvin above 0, got {value}")]
    Temperature {
        /// The species, or `every species` for the default.
        species: String,
        /// The value.
        value: f64,
    },
}

impl EvidenceConfig {
    /// Check the temperatures.
    pub fn validate(&self) -> Result<(), EvidenceError> {
        let bad = |v: f64| !(v.is_finite() && v > 0.0);
        if bad(self.default_temperature_k) {
            return Err(EvidenceError::Temperature {
                species: "every species".into(),
                value: self.default_temperature_k,
            });
        }
        for (species, t) in &self.temperatures {
            if bad(*t) {
                return Err(EvidenceError::Temperature {
                    species: species.to_string(),
                    value: *t,
                });
            }
        }
        Ok(())
    }

    fn start_temperature(&self, species: Species) -> (f64, TemperatureSource) {
        match self.temperatures.iter().find(|(s, _)| *s == species) {
            Some((_, t)) => (*t, TemperatureSource::Given),
            None => (self.default_temperature_k, TemperatureSource::Default),
        }
    }
}

/// The intensity of one observed line as the likelihood needs it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LineIntensity {
    /// ln I (I > 0, any unit).
    pub ln_intensity: f64,
    /// Relative standard uncertainty of I (σ of ln I).
    pub relative_uncertainty: f64,
}

impl LineIntensity {
    /// From an intensity and its optional absolute uncertainty; `None` for an
    /// intensity that is not above 0 (no logarithm).
    pub fn new(intensity: f64, uncertainty: Option<f64>) -> Option<LineIntensity> {
        if !(intensity.is_finite() && intensity > 0.0) {
            return None;
        }
        let relative = uncertainty
            .filter(|u| u.is_finite() && *u > 0.0)
            .map_or(DEFAULT_RELATIVE_UNCERTAINTY, |u| u / intensity);
        Some(LineIntensity {
            ln_intensity: intensity.ln(),
            relative_uncertainty: relative.clamp(1e-3, 3.0),
        })
    }
}

/// Where a species' temperature comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum TemperatureSource {
    /// Its Boltzmann plot.
    Fitted,
    /// Given for it (`--temperature`), no plot possible.
    Given,
    /// The default, no plot possible.
    Default,
}

impl TemperatureSource {
    /// The name written in outputs.
    pub fn name(self) -> &'static str {
        match self {
            TemperatureSource::Fitted => "Boltzmann plot",
            TemperatureSource::Given => "given",
            TemperatureSource::Default => "default",
        }
    }
}

/// What the assignment concluded about one species.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpeciesEvidence {
    /// The spectrum.
    pub species: Species,
    /// Present, absent or undecided.
    pub verdict: Verdict,
    /// Why, in a sentence.
    pub reason: String,
    /// ln Λ, present against absent (0 when undecided without evidence).
    pub ln_likelihood_ratio: f64,
    /// Observed lines whose first candidate is of this species.
    pub lines_assigned: usize,
    /// Its lines expected above the detection limit in the range of the list.
    pub lines_expected: usize,
    /// Of those, the ones with an observed line within tolerance.
    pub lines_expected_seen: usize,
    /// Expected but missing.
    pub lines_missing: usize,
    /// Coincidences chance alone would give among the expected lines (or among the
    /// observed lines, without transition probabilities).
    pub chance_coincidences: f64,
    /// Excitation temperature, K.
    pub temperature_k: f64,
    /// Its standard uncertainty, K, when fitted.
    pub temperature_sigma_k: Option<f64>,
    /// Where T comes from.
    pub temperature_source: TemperatureSource,
    /// Why no Boltzmann plot was possible, when none was.
    pub temperature_note: Option<String>,
    /// The Boltzmann plot, when one was fitted (with its points).
    pub boltzmann: Option<BoltzmannFit>,
    /// Fraction of the summed observed intensity in lines assigned to it.
    pub intensity_fraction: f64,
    /// Scatter σ of ln(I_obs/I_pred) used in the intensity term.
    pub intensity_scatter: f64,
    /// Whether any of its lines in range has a transition probability (else
    /// position only).
    pub with_transition_probabilities: bool,
}

/// The result: assignments (ranked after the joint resolution) and the species.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EvidenceResult {
    /// One per observed line, in input order.
    pub assignments: Vec<LineAssignment>,
    /// One per species of the predictions, in their order.
    pub species: Vec<SpeciesEvidence>,
    /// Rounds run.
    pub rounds: usize,
    /// Whether the primaries stopped changing before the last round.
    pub converged: bool,
}

/// What each prediction brings, computed once.
#[derive(Clone, Copy)]
struct PredictionInfo {
    species: usize,
    /// ln(g_k A_ki), NaN when unknown.
    ln_ga: f64,
    /// Relative uncertainty of A.
    sigma_a: f64,
    upper_energy_cm1: f64,
    wavenumber_cm1: f64,
}

/// The state of one species during the rounds.
#[derive(Clone)]
struct SpeciesState {
    temperature_k: f64,
    start_temperature_k: f64,
    start_source: TemperatureSource,
    fit: Option<BoltzmannFit>,
    note: Option<String>,
    /// ln of the strongest predicted intensity in range at T.
    ln_norm: f64,
    ln_scale: Option<f64>,
    scatter: f64,
    ln_ratio: f64,
    use_species_term: bool,
    verdict: Verdict,
    reason: String,
    expected: usize,
    seen: usize,
    chance: f64,
    /// Its predictions with a transition probability in range.
    in_range: Vec<usize>,
    /// Its predictions in range (for densities).
    all_in_range: usize,
}

impl SpeciesState {
    fn ln_relative(&self, info: &PredictionInfo, units: IntensityUnits) -> f64 {
        ln_intensity_at(info, self.temperature_k, units) - self.ln_norm
    }
}

fn ln_intensity_at(info: &PredictionInfo, t: f64, units: IntensityUnits) -> f64 {
    info.ln_ga - SECOND_RADIATION_CM_K * info.upper_energy_cm1 / t
        + units.ln_factor(info.wavenumber_cm1)
}

/// One candidate after scoring.
#[derive(Clone, Copy)]
struct Scored {
    ll: f64,
    /// ln of the predicted relative intensity, NaN when none.
    ln_relative: f64,
    /// Residual r, NaN when none.
    residual: f64,
    /// Blend group on this line (index of its strongest member), or usize::MAX.
    group: usize,
}

/// Assign with intensities, temperatures and species verdicts; see the module
/// documentation. `intensities` has one entry per observed line (`None`: no usable
/// intensity). `progress` is called as by [`assign_lines_with_progress`].
pub fn assign_with_evidence(
    observed: &[ObservedLine],
    intensities: &[Option<LineIntensity>],
    predictions: &Predictions,
    match_config: &MatchConfig,
    config: &EvidenceConfig,
    progress: &mut dyn FnMut(MatchProgress),
) -> EvidenceResult {
    let match_config = match_config
        .with_chance_floor_fraction(CHANCE_FLOOR_FRACTION)
        .unwrap_or(*match_config);
    let mut assignments =
        assign_lines_with_progress(observed, predictions, &match_config, progress);
    let lines = predictions.lines();
    let levels = predictions.levels();
    let species_list: Vec<Species> = predictions.species().iter().map(|s| s.species).collect();
    let info: Vec<PredictionInfo> = lines
        .par_iter()
        .map(|line| {
            let upper = levels.get(line.upper).map_or(0.0, |l| l.energy_cm1);
            let (ln_ga, sigma_a) = match (line.transition_probability, line.relative_strength) {
                (Some(tp), _) if tp.ga_s1() > 0.0 => (
                    tp.ga_s1().ln(),
                    tp.accuracy
                        .map_or(0.5, |a| a.relative_uncertainty().min(1.0)),
                ),
                (None, Some(gf)) if gf > 0.0 => {
                    // gA = gf / (gf per unit gA at σ).
                    let per = crate::transitions::gf_from_ga(1.0, line.wavenumber_cm1);
                    ((gf / per).ln(), 0.5)
                }
                _ => (f64::NAN, 0.0),
            };
            PredictionInfo {
                species: species_list
                    .iter()
                    .position(|s| *s == line.species)
                    .unwrap_or(0),
                ln_ga,
                sigma_a,
                upper_energy_cm1: upper,
                wavenumber_cm1: line.wavenumber_cm1,
            }
        })
        .collect();

    // The range of the list, its density and its typical uncertainty.
    let (low, high) = observed.iter().fold((f64::MAX, f64::MIN), |(lo, hi), l| {
        (lo.min(l.wavenumber_cm1), hi.max(l.wavenumber_cm1))
    });
    let span = (high - low).max(1.0);
    let observed_density = observed.len() as f64 / span;
    let typical_u = median(
        &mut observed
            .iter()
            .map(|l| l.uncertainty_cm1)
            .collect::<Vec<_>>(),
    );
    let k = match_config.tolerance_sigma();
    let ln_null = -span.ln();
    let reference = IntensityReference::from_ln_intensities(
        intensities
            .iter()
            .flatten()
            .map(|i| i.ln_intensity)
            .collect(),
    );
    let ln_detection = {
        let mut values: Vec<f64> = intensities
            .iter()
            .flatten()
            .map(|i| i.ln_intensity)
            .collect();
        values.sort_by(f64::total_cmp);
        values.get(values.len() / 20).copied()
    };
    // Which predictions lie within tolerance of some observed line.
    let mut is_candidate = vec![false; lines.len()];
    for a in &assignments {
        for c in &a.candidates {
            if let Some(slot) = is_candidate.get_mut(c.prediction) {
                *slot = true;
            }
        }
    }
    let mut states: Vec<SpeciesState> = species_list
        .iter()
        .map(|&s| {
            let (t, source) = config.start_temperature(s);
            SpeciesState {
                temperature_k: t,
                start_temperature_k: t,
                start_source: source,
                fit: None,
                note: None,
                ln_norm: 0.0,
                ln_scale: None,
                scatter: 0.7,
                ln_ratio: 0.0,
                use_species_term: false,
                verdict: Verdict::Undecided,
                reason: String::new(),
                expected: 0,
                seen: 0,
                chance: 0.0,
                in_range: Vec::new(),
                all_in_range: 0,
            }
        })
        .collect();
    for (p, i) in info.iter().enumerate() {
        if i.wavenumber_cm1 >= low
            && i.wavenumber_cm1 <= high
            && let Some(state) = states.get_mut(i.species)
        {
            state.all_in_range += 1;
            if i.ln_ga.is_finite() {
                state.in_range.push(p);
            }
        }
    }
    // LS strengths of candidates without transition probabilities, once.
    let ls: Vec<Vec<Option<(f64, u64)>>> = assignments
        .par_iter()
        .map(|a| {
            a.candidates
                .iter()
                .map(|c| {
                    let line = lines.get(c.prediction)?;
                    let i = info.get(c.prediction)?;
                    if i.ln_ga.is_finite() {
                        return None;
                    }
                    let shared = a.candidates.iter().any(|o| {
                        o.prediction != c.prediction
                            && lines
                                .get(o.prediction)
                                .is_some_and(|l| l.species == line.species)
                    });
                    if !shared {
                        return None;
                    }
                    ls_multiplet_strength(levels.get(line.lower)?, levels.get(line.upper)?)
                })
                .collect()
        })
        .collect();

    let penalty = match_config.rule_penalty_sigma();
    let units = config.units;
    let mut previous: Option<Vec<Option<usize>>> = None;
    let mut rounds = 0;
    let mut converged;
    let (scored, primaries) = loop {
        rounds += 1;
        for state in &mut states {
            state.ln_norm = state
                .in_range
                .iter()
                .filter_map(|&p| info.get(p))
                .map(|i| ln_intensity_at(i, state.temperature_k, units))
                .fold(f64::NEG_INFINITY, f64::max);
        }
        let scored: Vec<Vec<Scored>> = assignments
            .par_iter()
            .zip(&ls)
            .map(|(a, ls)| {
                let intensity = intensities.get(a.observed).copied().flatten();
                score_line(
                    a, ls, intensity, &info, lines, &states, units, penalty, &reference,
                )
            })
            .collect();
        let primaries = match config.resolution {
            Resolution::PerLine => scored
                .iter()
                .map(|s| {
                    s.iter()
                        .enumerate()
                        .max_by(|a, b| a.1.ll.total_cmp(&b.1.ll).then(b.0.cmp(&a.0)))
                        .map(|(k, _)| k)
                })
                .collect(),
            Resolution::Joint => {
                let weights: Vec<Vec<(usize, f64)>> = assignments
                    .iter()
                    .zip(&scored)
                    .map(|(a, s)| {
                        a.candidates
                            .iter()
                            .zip(s)
                            .map(|(c, s)| (c.prediction, s.ll - ln_null))
                            .collect()
                    })
                    .collect();
                super::joint::resolve(&weights, lines.len())
            }
        };
        let chosen: Vec<Option<usize>> = assignments
            .iter()
            .zip(&primaries)
            .map(|(a, p)| p.and_then(|k| a.candidates.get(k)).map(|c| c.prediction))
            .collect();
        converged = rounds > 1 && previous.as_ref() == Some(&chosen);
        if converged || rounds >= ROUNDS {
            break (scored, primaries);
        }
        previous = Some(chosen);
        update_states(
            &mut states,
            &assignments,
            &scored,
            &primaries,
            intensities,
            &info,
            &is_candidate,
            units,
            ln_detection,
            observed_density,
            typical_u,
            k,
        );
    };

    // Order the candidates, attach blends, write the evidence.
    let mut owner: Vec<u32> = vec![u32::MAX; lines.len()];
    for (i, (a, p)) in assignments.iter().zip(&primaries).enumerate() {
        if let Some(c) = p.and_then(|k| a.candidates.get(k))
            && let Some(slot) = owner.get_mut(c.prediction)
        {
            *slot = i as u32;
        }
    }
    let mut attached: Vec<Vec<usize>> = vec![Vec::new(); assignments.len()];
    for (i, (a, p)) in assignments.iter().zip(&primaries).enumerate() {
        let (Some(k), Some(s)) = (*p, scored.get(i)) else {
            continue;
        };
        let Some(group) = s.get(k).map(|x| x.group).filter(|&g| g != usize::MAX) else {
            continue;
        };
        for (m, (c, x)) in a.candidates.iter().zip(s).enumerate() {
            if m != k
                && x.group == group
                && let Some(slot) = owner.get_mut(c.prediction)
                && *slot == u32::MAX
            {
                *slot = i as u32;
                if let Some(list) = attached.get_mut(i) {
                    list.push(m);
                }
            }
        }
    }
    let verdicts: Vec<Verdict> = states.iter().map(|s| s.verdict).collect();
    for (i, a) in assignments.iter_mut().enumerate() {
        let Some(s) = scored.get(i) else { continue };
        let primary = primaries.get(i).copied().flatten();
        let members = attached.get(i).cloned().unwrap_or_default();
        let mut by_ll: Vec<usize> = (0..a.candidates.len()).collect();
        by_ll.sort_by(|&x, &y| {
            let (lx, ly) = (
                s.get(x).map_or(f64::MIN, |v| v.ll),
                s.get(y).map_or(f64::MIN, |v| v.ll),
            );
            ly.total_cmp(&lx).then(x.cmp(&y))
        });
        let per_line_rank: Vec<usize> = {
            let mut r = vec![0; a.candidates.len()];
            for (rank, &x) in by_ll.iter().enumerate() {
                if let Some(slot) = r.get_mut(x) {
                    *slot = rank + 1;
                }
            }
            r
        };
        // primary, its blend, free candidates, candidates that are another line's.
        let class = |x: usize| -> u8 {
            if Some(x) == primary {
                0
            } else if members.contains(&x) {
                1
            } else {
                let taken = a
                    .candidates
                    .get(x)
                    .and_then(|c| owner.get(c.prediction))
                    .is_some_and(|&o| o != u32::MAX && o as usize != i);
                if taken { 3 } else { 2 }
            }
        };
        let mut order = by_ll.clone();
        order.sort_by_key(|&x| class(x));
        let mut candidates = Vec::with_capacity(order.len());
        for x in order {
            let (Some(c), Some(v)) = (a.candidates.get(x), s.get(x)) else {
                continue;
            };
            let mut c = c.clone();
            let species = info.get(c.prediction).map_or(0, |i| i.species);
            c.evidence = Some(CandidateEvidence {
                log_likelihood: v.ll,
                predicted_relative_intensity: v
                    .ln_relative
                    .is_finite()
                    .then(|| v.ln_relative.exp()),
                observed_to_predicted_intensity: v.residual.is_finite().then(|| v.residual.exp()),
                species_verdict: verdicts.get(species).copied().unwrap_or_default(),
                per_line_rank: per_line_rank.get(x).copied().unwrap_or(0),
            });
            candidates.push(c);
        }
        a.candidates = candidates;
        a.declared_blend = Some(!members.is_empty());
    }

    // The summary, counted on the final assignments.
    let mut assigned = vec![0usize; states.len()];
    let mut intensity_of = vec![0.0f64; states.len()];
    let mut total_intensity = 0.0;
    for a in &assignments {
        let intensity = observed
            .get(a.observed)
            .and_then(|o| o.intensity)
            .filter(|i| *i > 0.0);
        total_intensity += intensity.unwrap_or(0.0);
        if let Some(first) = a.candidates.first() {
            let s = info.get(first.prediction).map_or(0, |i| i.species);
            if let Some(n) = assigned.get_mut(s) {
                *n += 1;
            }
            if let Some(v) = intensity_of.get_mut(s) {
                *v += intensity.unwrap_or(0.0);
            }
        }
    }
    let species = states
        .iter()
        .zip(&species_list)
        .enumerate()
        .map(|(n, (state, &species))| SpeciesEvidence {
            species,
            verdict: state.verdict,
            reason: if state.reason.is_empty() {
                "no evidence yet".to_string()
            } else {
                state.reason.clone()
            },
            ln_likelihood_ratio: state.ln_ratio,
            lines_assigned: assigned.get(n).copied().unwrap_or(0),
            lines_expected: state.expected,
            lines_expected_seen: state.seen,
            lines_missing: state.expected.saturating_sub(state.seen),
            chance_coincidences: state.chance,
            temperature_k: state.temperature_k,
            temperature_sigma_k: state.fit.as_ref().map(|f| f.temperature_sigma_k),
            temperature_source: if state.fit.is_some() {
                TemperatureSource::Fitted
            } else {
                state.start_source
            },
            temperature_note: state.note.clone(),
            boltzmann: state.fit.clone(),
            intensity_fraction: if total_intensity > 0.0 {
                intensity_of.get(n).copied().unwrap_or(0.0) / total_intensity
            } else {
                0.0
            },
            intensity_scatter: state.scatter,
            with_transition_probabilities: !state.in_range.is_empty(),
        })
        .collect();
    EvidenceResult {
        assignments,
        species,
        rounds,
        converged,
    }
}

/// Score the candidates of one line (see [`super::likelihood`]).
#[allow(clippy::too_many_arguments)]
fn score_line(
    a: &LineAssignment,
    ls: &[Option<(f64, u64)>],
    intensity: Option<LineIntensity>,
    info: &[PredictionInfo],
    lines: &[crate::levels::PredictedLine],
    states: &[SpeciesState],
    units: IntensityUnits,
    penalty: f64,
    reference: &IntensityReference,
) -> Vec<Scored> {
    let n = a.candidates.len();
    let none = PredictionInfo {
        species: 0,
        ln_ga: f64::NAN,
        sigma_a: 0.0,
        upper_energy_cm1: 0.0,
        wavenumber_cm1: 1.0,
    };
    let infos: Vec<PredictionInfo> = a
        .candidates
        .iter()
        .map(|c| info.get(c.prediction).copied().unwrap_or(none))
        .collect();
    let ln_rel: Vec<f64> = infos
        .iter()
        .map(|i| match states.get(i.species) {
            Some(s) if i.ln_ga.is_finite() && s.ln_norm.is_finite() => s.ln_relative(i, units),
            _ => f64::NAN,
        })
        .collect();
    // Blend groups: with intensities, per species; without, per LS multiplet.
    let mut group = vec![usize::MAX; n];
    let mut ln_model: Vec<f64> = ln_rel.clone();
    let mut share = vec![0.0; n];
    let ln_ratio = BLEND_RATIO.ln();
    for j in 0..n {
        let (Some(ij), Some(&lj)) = (infos.get(j), ln_rel.get(j)) else {
            continue;
        };
        if lj.is_finite() {
            let same: Vec<usize> = (0..n)
                .filter(|&m| {
                    infos.get(m).is_some_and(|im| im.species == ij.species)
                        && ln_rel.get(m).is_some_and(|l| l.is_finite())
                })
                .collect();
            let strongest = same
                .iter()
                .filter_map(|&m| ln_rel.get(m).copied())
                .fold(f64::NEG_INFINITY, f64::max);
            let members: Vec<usize> = same
                .iter()
                .copied()
                .filter(|&m| ln_rel.get(m).is_some_and(|&l| l >= strongest + ln_ratio))
                .collect();
            if members.len() > 1 && members.contains(&j) {
                let sum = log_sum_exp(members.iter().filter_map(|&m| ln_rel.get(m).copied()));
                if let Some(slot) = ln_model.get_mut(j) {
                    *slot = sum;
                }
                if let Some(slot) = share.get_mut(j) {
                    *slot = lj - sum;
                }
                if let Some(slot) = group.get_mut(j) {
                    *slot = members.first().copied().unwrap_or(j);
                }
            }
        } else if let Some(Some((strength, key))) = ls.get(j) {
            let members: Vec<(usize, f64)> = (0..n)
                .filter_map(|m| match ls.get(m) {
                    Some(Some((s, k))) if k == key => Some((m, *s)),
                    _ => None,
                })
                .collect();
            let strongest = members.iter().map(|m| m.1).fold(0.0, f64::max);
            let members: Vec<(usize, f64)> = members
                .into_iter()
                .filter(|m| m.1 >= BLEND_RATIO * strongest)
                .collect();
            if members.len() > 1 && *strength >= BLEND_RATIO * strongest {
                let sum: f64 = members.iter().map(|m| m.1).sum();
                if let Some(slot) = share.get_mut(j) {
                    *slot = (strength / sum).ln();
                }
                if let Some(slot) = group.get_mut(j) {
                    *slot = members.first().map_or(j, |m| m.0);
                }
            }
        }
    }
    a.candidates
        .iter()
        .enumerate()
        .map(|(j, c)| {
            let i = infos.get(j).copied().unwrap_or(none);
            let state = states.get(i.species);
            let lm = ln_model.get(j).copied().unwrap_or(f64::NAN);
            let mut ll = position_term(c.deviation_sigma, c.combined_uncertainty_cm1)
                + share.get(j).copied().unwrap_or(0.0);
            let mut residual = f64::NAN;
            match (intensity, state.and_then(|s| s.ln_scale)) {
                (Some(obs), Some(ln_scale)) if lm.is_finite() => {
                    let r = obs.ln_intensity - ln_scale - lm;
                    let scatter = state.map_or(0.7, |s| s.scatter);
                    let sigma = scatter.max(obs.relative_uncertainty.hypot(i.sigma_a));
                    ll += intensity_term(r, sigma, obs.ln_intensity, reference);
                    residual = r;
                }
                _ => {
                    if let Some(line) = lines.get(c.prediction) {
                        ll += rules_term(line, penalty);
                    }
                }
            }
            if let Some(s) = state.filter(|s| s.use_species_term) {
                ll += species_term(s.ln_ratio);
            }
            Scored {
                ll,
                ln_relative: ln_rel.get(j).copied().unwrap_or(f64::NAN),
                residual,
                group: group.get(j).copied().unwrap_or(usize::MAX),
            }
        })
        .collect()
}

fn log_sum_exp(values: impl Iterator<Item = f64> + Clone) -> f64 {
    let max = values.clone().fold(f64::NEG_INFINITY, f64::max);
    if !max.is_finite() {
        return max;
    }
    max + values.map(|v| (v - max).exp()).sum::<f64>().ln()
}

/// Refit every species from the primaries of the last resolution.
#[allow(clippy::too_many_arguments)]
fn update_states(
    states: &mut [SpeciesState],
    assignments: &[LineAssignment],
    scored: &[Vec<Scored>],
    primaries: &[Option<usize>],
    intensities: &[Option<LineIntensity>],
    info: &[PredictionInfo],
    is_candidate: &[bool],
    units: IntensityUnits,
    ln_detection: Option<f64>,
    observed_density: f64,
    typical_u: f64,
    k: f64,
) {
    // Boltzmann points and, for species without them, residuals of their best
    // candidates.
    let mut points: Vec<Vec<BoltzmannPoint>> = vec![Vec::new(); states.len()];
    let mut fallback: Vec<Vec<f64>> = vec![Vec::new(); states.len()];
    let mut lines_with_candidate = vec![0usize; states.len()];
    for (i, (a, s)) in assignments.iter().zip(scored).enumerate() {
        let intensity = intensities.get(a.observed).copied().flatten();
        let mut seen_species: Vec<usize> = Vec::new();
        for c in &a.candidates {
            let sp = info.get(c.prediction).map_or(0, |x| x.species);
            if !seen_species.contains(&sp) {
                seen_species.push(sp);
            }
        }
        for sp in &seen_species {
            if let Some(n) = lines_with_candidate.get_mut(*sp) {
                *n += 1;
            }
        }
        let Some(obs) = intensity else { continue };
        // Best candidate of each species with an intensity prediction.
        for &sp in &seen_species {
            let best = a
                .candidates
                .iter()
                .zip(s)
                .filter(|(c, x)| {
                    x.ln_relative.is_finite()
                        && info.get(c.prediction).is_some_and(|p| p.species == sp)
                })
                .max_by(|x, y| x.1.ll.total_cmp(&y.1.ll));
            if let Some((_, x)) = best
                && let Some(list) = fallback.get_mut(sp)
            {
                // ln I − ln I_pred: an estimate of ln S.
                let lm = if x.group != usize::MAX {
                    group_ln(s, x.group)
                } else {
                    x.ln_relative
                };
                list.push(obs.ln_intensity - lm);
            }
        }
        let Some(k_primary) = primaries.get(i).copied().flatten() else {
            continue;
        };
        let (Some(c), Some(x)) = (a.candidates.get(k_primary), s.get(k_primary)) else {
            continue;
        };
        let Some(p) = info.get(c.prediction) else {
            continue;
        };
        if !p.ln_ga.is_finite() {
            continue;
        }
        // The blend members of the primary (same group on this line).
        let members: Vec<&PredictionInfo> = if x.group == usize::MAX {
            vec![p]
        } else {
            a.candidates
                .iter()
                .zip(s)
                .filter(|(_, y)| y.group == x.group)
                .filter_map(|(c, _)| info.get(c.prediction))
                .collect()
        };
        let (e_low, e_high) = members.iter().fold((f64::MAX, f64::MIN), |(lo, hi), m| {
            (lo.min(m.upper_energy_cm1), hi.max(m.upper_energy_cm1))
        });
        if e_high - e_low > BLEND_ENERGY_SPREAD_CM1 {
            continue;
        }
        let ln_weight = log_sum_exp(
            members
                .iter()
                .map(|m| m.ln_ga + units.ln_factor(m.wavenumber_cm1)),
        );
        let weights: Vec<f64> = members
            .iter()
            .map(|m| (m.ln_ga + units.ln_factor(m.wavenumber_cm1) - ln_weight).exp())
            .collect();
        let energy: f64 = members
            .iter()
            .zip(&weights)
            .map(|(m, w)| m.upper_energy_cm1 * w)
            .sum();
        if let Some(list) = points.get_mut(p.species) {
            list.push(BoltzmannPoint {
                upper_energy_cm1: energy,
                y: obs.ln_intensity - ln_weight,
                y_sigma: obs.relative_uncertainty.hypot(p.sigma_a),
                observed: a.observed,
                used: true,
            });
        }
    }
    for (n, state) in states.iter_mut().enumerate() {
        let pts = points.get(n).cloned().unwrap_or_default();
        // Temperature.
        match fit_boltzmann(pts.clone()) {
            Ok(fit)
                if fit.temperature_k.is_finite() && (300.0..=1e6).contains(&fit.temperature_k) =>
            {
                state.temperature_k = fit.temperature_k;
                state.note = None;
                state.fit = Some(fit);
            }
            Ok(fit) => {
                state.temperature_k = state.start_temperature_k;
                state.note = Some(format!(
                    "the Boltzmann plot gives {:.0} K, outside 300 K – 10⁶ K",
                    fit.temperature_k
                ));
                state.fit = None;
            }
            Err(problem) => {
                state.temperature_k = state.start_temperature_k;
                state.note = Some(problem.to_string());
                state.fit = None;
            }
        }
        let t = state.temperature_k;
        state.ln_norm = state
            .in_range
            .iter()
            .filter_map(|&p| info.get(p))
            .map(|i| ln_intensity_at(i, t, units))
            .fold(f64::NEG_INFINITY, f64::max);
        // Scale and scatter.
        let used: Vec<&BoltzmannPoint> = match &state.fit {
            Some(fit) => fit.points.iter().filter(|p| p.used).collect(),
            None => pts.iter().collect(),
        };
        let mut residuals: Vec<f64> = used
            .iter()
            .map(|p| p.y + SECOND_RADIATION_CM_K * p.upper_energy_cm1 / t + state.ln_norm)
            .collect();
        if residuals.is_empty() {
            residuals = fallback.get(n).cloned().unwrap_or_default();
        }
        state.ln_scale = (!residuals.is_empty()).then(|| median(&mut residuals.clone()));
        state.scatter = if residuals.len() >= 5 {
            let center = state.ln_scale.unwrap_or(0.0);
            let mut dev: Vec<f64> = residuals.iter().map(|r| (r - center).abs()).collect();
            (1.4826 * median(&mut dev)).clamp(0.3, 1.5)
        } else {
            0.7
        };
        judge(
            state,
            info,
            is_candidate,
            ln_detection,
            observed_density,
            typical_u,
            k,
            lines_with_candidate.get(n).copied().unwrap_or(0),
            units,
            assignments.len(),
        );
    }
}

/// ln of the summed predicted intensity of a blend group on one line.
fn group_ln(s: &[Scored], group: usize) -> f64 {
    log_sum_exp(s.iter().filter(|x| x.group == group).map(|x| x.ln_relative))
}

/// The verdict on one species (see [`super::verdict`]).
#[allow(clippy::too_many_arguments)]
fn judge(
    state: &mut SpeciesState,
    info: &[PredictionInfo],
    is_candidate: &[bool],
    ln_detection: Option<f64>,
    observed_density: f64,
    typical_u: f64,
    k: f64,
    lines_with_candidate: usize,
    units: IntensityUnits,
    observed_lines: usize,
) {
    state.use_species_term = true;
    let chance_of = |u_pred: f64| {
        let u = typical_u.hypot(u_pred);
        -(-2.0 * observed_density * k * u).exp_m1()
    };
    if let (Some(ln_scale), Some(ln_d)) = (state.ln_scale, ln_detection)
        && !state.in_range.is_empty()
    {
        let threshold = ln_d + state.scatter;
        let mut expected: Vec<(f64, usize)> = state
            .in_range
            .iter()
            .filter_map(|&p| {
                let i = info.get(p)?;
                let l = ln_scale + state.ln_relative(i, units);
                (l >= threshold).then_some((l, p))
            })
            .collect();
        expected.sort_by(|a, b| b.0.total_cmp(&a.0));
        let n_expected = expected.len();
        let seen = expected
            .iter()
            .filter(|(_, p)| is_candidate.get(*p).copied().unwrap_or(false))
            .count();
        let chance: f64 = expected.iter().map(|_| chance_of(0.0)).sum();
        let ln_ratio = ln_likelihood_ratio(seen, n_expected, chance);
        let strongest_missing = n_expected >= 3
            && expected
                .iter()
                .take(3)
                .all(|(_, p)| !is_candidate.get(*p).copied().unwrap_or(false))
            && 2 * seen < n_expected;
        let v = verdict::verdict(ln_ratio, strongest_missing);
        state.expected = n_expected;
        state.seen = seen;
        state.chance = chance;
        state.ln_ratio = if strongest_missing {
            ln_ratio.min(-verdict::DECISIVE_LN_ODDS)
        } else {
            ln_ratio
        };
        state.verdict = v;
        state.reason = match v {
            Verdict::Present => format!(
                "{seen} of {n_expected} lines expected above the detection limit seen \
                 (chance alone: {chance:.2})"
            ),
            Verdict::Absent if strongest_missing => {
                let missing: Vec<String> = expected
                    .iter()
                    .take(3)
                    .filter_map(|(_, p)| info.get(*p))
                    .map(|i| format!("{:.2} nm", 1e7 / i.wavenumber_cm1))
                    .collect();
                format!(
                    "its strongest expected lines are missing (vacuum λ {}); {seen} of \
                     {n_expected} expected lines seen",
                    missing.join(", ")
                )
            }
            Verdict::Absent => format!(
                "only {seen} of {n_expected} lines expected above the detection limit seen \
                 (chance alone: {chance:.2})"
            ),
            Verdict::Undecided => format!(
                "{seen} of {n_expected} lines expected above the detection limit seen \
                 (chance alone: {chance:.2}): not decisive"
            ),
        };
        return;
    }
    let prominent_seen = state
        .in_range
        .iter()
        .filter(|&&p| is_candidate.get(p).copied().unwrap_or(false))
        .count();
    if state.in_range.len() >= 3 && prominent_seen == 0 {
        // The compilations give transition probabilities for a spectrum's
        // prominent lines: none of them seen, the species is not in the source.
        state.expected = state.in_range.len();
        state.seen = 0;
        state.chance = state.in_range.len() as f64 * chance_of(0.0);
        state.verdict = Verdict::Absent;
        state.ln_ratio = ln_likelihood_ratio(0, state.in_range.len(), state.chance)
            .min(-verdict::DECISIVE_LN_ODDS);
        state.reason = format!(
            "none of its {} lines with published transition probabilities in the range of \
             the list (its prominent lines) is within tolerance of an observed line",
            state.in_range.len()
        );
        return;
    }
    if lines_with_candidate == 0 {
        state.expected = 0;
        state.seen = 0;
        state.chance = 0.0;
        state.verdict = Verdict::Undecided;
        state.ln_ratio = 0.0;
        state.reason = "no line within tolerance of an observed line".into();
        return;
    }
    // Coincidences alone: observed lines with a candidate of the species against
    // chance, from its density of predictions in the range.
    let span = 1.0 / observed_density.max(1e-300) * observed_lines as f64;
    let predicted_density = state.all_in_range as f64 / span.max(1e-300);
    let per_line = -(-2.0 * predicted_density * k * typical_u).exp_m1();
    let chance = per_line * observed_lines as f64;
    let n = lines_with_candidate;
    let tail = ln_poisson_tail(n, chance);
    state.expected = 0;
    state.seen = n;
    state.chance = chance;
    if tail < (1e-3f64).ln() {
        state.verdict = Verdict::Present;
        state.ln_ratio = n as f64 * (n as f64 / chance.max(1e-300)).ln() - (n as f64 - chance);
        state.reason = format!(
            "{n} observed lines have a candidate of it, chance alone {chance:.1} \
             (no transition probabilities: coincidences only)"
        );
    } else {
        state.verdict = Verdict::Undecided;
        state.ln_ratio = 0.0;
        state.reason = format!(
            "{n} observed lines have a candidate of it, chance alone {chance:.1} \
             (no candidate with both an intensity and a transition probability: \
             coincidences only)"
        );
    }
}
