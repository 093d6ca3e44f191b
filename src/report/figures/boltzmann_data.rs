//! The data of the Boltzmann plot: the library's Boltzmann fit
//! ([`crate::plasma::boltzmann`]) of one species, its points and its line, so that
//! the figure shows the T_exc the assignment reports.
//!
//! For a source in local thermodynamic equilibrium a line from upper level k gives
//! I ∝ g_k A_ki exp(−E_k/(k T)) photons per time, or that times 1/λ in energy
//! (the Boltzmann distribution of the upper levels; textbook, e.g. Griem, *Principles
//! of Plasma Spectroscopy*, 1997, from memory). So ln(I/(g_k A_ki)) (photon counts)
//! or ln(I λ/(g_k A_ki)) (energy) = c − E_k/(k T): with E_k in cm⁻¹ the slope is
//! −c₂/T, c₂ = hc/k the second radiation constant.
//!
//! Two sources of points and fit:
//! - [`boltzmann_from_report`] for an intensity-aware assignment: the fit the
//!   assignment made of the species (the points it used, the ones it set aside, its
//!   slope and T_exc ± σ). Where it fitted none, the rank-1 lines are drawn without a
//!   line, with the assignment's reason.
//! - [`boltzmann_from_records`] for the rows of any assignment (position-only, or the
//!   assign CSV): the rank-1 candidates with an intensity and a published gA, fitted
//!   with [`fit_boltzmann`], the same fit.

use crate::assign::evidence::DEFAULT_RELATIVE_UNCERTAINTY;
use crate::assign::{AssignmentRecord, Flag, SpeciesEvidence};
use crate::notation::Species;
use crate::plasma::{BoltzmannFit, BoltzmannPoint, IntensityUnits, fit_boltzmann};
use crate::report::AssignReport;

/// The second radiation constant c₂ = hc/k, cm·K: the project's one value
/// ([`crate::units::constants::SECOND_RADIATION_CM_K`], CODATA 2018).
pub const SECOND_RADIATION_CONSTANT_CM_K: f64 = crate::units::constants::SECOND_RADIATION_CM_K;

/// What the Boltzmann figure shows.
#[derive(Debug, Clone, PartialEq)]
pub struct BoltzmannPlot {
    /// The input, for the title.
    pub source: String,
    /// The spectrum.
    pub species: String,
    /// What the intensities measure (sets the ordinate: ln(I/gA) or ln(Iλ/gA)).
    pub units: IntensityUnits,
    /// The points (the library's type: `used` false for those the fit set aside).
    pub points: Vec<BoltzmannPoint>,
    /// Per point: whether its line is a blend.
    pub blends: Vec<bool>,
    /// The fit, when there is one.
    pub fit: Option<BoltzmannFit>,
    /// Why there is no fit, when there is none.
    pub no_fit: Option<String>,
    /// Where the points and the fit come from, for the figure's note.
    pub origin: String,
    /// Rank-1 lines of the species left out: no intensity or no published gA.
    pub left_out: usize,
}

/// Why no Boltzmann plot can be drawn.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum BoltzmannError {
    /// No line has both an intensity and a published transition probability.
    #[error(
        "no assigned line{} has both an observed intensity and a published transition probability (gA)",
        .0.as_ref().map(|s| format!(" of {s}")).unwrap_or_default()
    )]
    NoPoints(Option<String>),
}

/// The Boltzmann plot of an assignment. With the intensity-aware assignment
/// (`report.evidence`), the plot of `species` (`None`: the species whose fit used
/// most points, else the one with most usable rank-1 lines) is the assignment's own
/// fit; with the position-only ranking, [`boltzmann_from_records`] of its rows
/// (photon counts).
pub fn boltzmann_from_report(
    report: &AssignReport<'_>,
    species: Option<Species>,
) -> Result<BoltzmannPlot, BoltzmannError> {
    let records = crate::assign::records(report.list, report.predictions, report.assignments);
    let source = &report.input.source;
    let Some(evidence) = &report.evidence else {
        return boltzmann_from_records(source, &records, species, IntensityUnits::Photon);
    };
    let units = evidence.config.units;
    let fitted = |s: &&SpeciesEvidence| s.boltzmann.is_some();
    let chosen: Option<&SpeciesEvidence> = match species {
        Some(wanted) => evidence.species.iter().find(|s| s.species == wanted),
        None => evidence
            .species
            .iter()
            .filter(fitted)
            .rev()
            .max_by_key(|s| s.boltzmann.as_ref().map_or(0, |f| f.used_points())),
    };
    let Some(fit) = chosen.and_then(|s| s.boltzmann.clone()) else {
        // No fit: the rank-1 lines, drawn without a line, and the assignment's reason.
        let mut plot = boltzmann_from_records(source, &records, species, units)?;
        let reason = evidence
            .species
            .iter()
            .find(|s| s.species.to_string() == plot.species)
            .and_then(|s| s.temperature_note.clone())
            .unwrap_or_else(|| "no Boltzmann plot".to_string());
        plot.fit = None;
        plot.no_fit = Some(reason);
        plot.origin = format!(
            "the rank-1 lines ({} units, σ_y {} %); the assignment fitted no temperature",
            units.name(),
            DEFAULT_RELATIVE_UNCERTAINTY * 100.0
        );
        return Ok(plot);
    };
    let species = chosen
        .map(|s| s.species)
        .ok_or(BoltzmannError::NoPoints(None))?;
    let blend_of = |observed: usize| {
        report
            .assignments
            .iter()
            .find(|a| a.observed == observed)
            .is_some_and(|a| a.declared_blend.unwrap_or(a.candidates.len() > 1))
    };
    let rank_one = records
        .iter()
        .filter(|r| r.rank == Some(1) && r.candidate.as_ref().is_some_and(|c| c.species == species))
        .count();
    Ok(BoltzmannPlot {
        source: source.clone(),
        species: species.to_string(),
        units,
        blends: fit.points.iter().map(|p| blend_of(p.observed)).collect(),
        points: fit.points.clone(),
        left_out: rank_one.saturating_sub(fit.points.len()),
        origin: "the assignment's Boltzmann fit (its points, its T_exc)".to_string(),
        no_fit: None,
        fit: Some(fit),
    })
}

/// The points of one species from the rows of an assignment (the assign CSV, or
/// [`crate::assign::records`]): every rank-1 candidate with a positive intensity and
/// a published g_k·A_ki (blends too, marked), y = ln(I/(g_k A_ki)) for photon counts
/// or ln(I λ/(g_k A_ki)) (λ in cm) for energy, σ_y = the relative uncertainty
/// [`DEFAULT_RELATIVE_UNCERTAINTY`] (the rows carry none), fitted with
/// [`fit_boltzmann`]. `species`: the spectrum to plot; `None`: the one with most
/// such lines (the first in the rows on a tie). A point's `observed` is its line's
/// number in the rows.
pub fn boltzmann_from_records(
    source: &str,
    records: &[AssignmentRecord],
    species: Option<Species>,
    units: IntensityUnits,
) -> Result<BoltzmannPlot, BoltzmannError> {
    let usable = |r: &AssignmentRecord| -> Option<(Species, BoltzmannPoint, bool)> {
        let c = r.candidate.as_ref()?;
        let intensity = r.observed_intensity.filter(|i| *i > 0.0)?;
        let ga = c.ga_s1.filter(|g| *g > 0.0)?;
        let sigma = c.predicted_wavenumber_cm1;
        if sigma.is_nan() || sigma <= 0.0 {
            return None;
        }
        Some((
            c.species,
            BoltzmannPoint {
                upper_energy_cm1: c.upper_energy_cm1.max(c.lower_energy_cm1),
                y: intensity.ln() - ga.ln() - units.ln_factor(sigma),
                y_sigma: DEFAULT_RELATIVE_UNCERTAINTY,
                observed: r.line,
                used: true,
            },
            r.flags.contains(&Flag::Blend),
        ))
    };
    let best: Vec<&AssignmentRecord> = records.iter().filter(|r| r.rank == Some(1)).collect();
    let chosen = match species {
        Some(s) => s,
        None => {
            let mut counts: Vec<(Species, usize)> = Vec::new();
            for (s, _, _) in best.iter().filter_map(|r| usable(r)) {
                match counts.iter_mut().find(|(t, _)| *t == s) {
                    Some((_, n)) => *n += 1,
                    None => counts.push((s, 1)),
                }
            }
            let most = counts.iter().map(|(_, n)| *n).max().unwrap_or(0);
            counts
                .into_iter()
                .find(|(_, n)| *n == most)
                .map(|(s, _)| s)
                .ok_or(BoltzmannError::NoPoints(None))?
        }
    };
    let of_species: Vec<&&AssignmentRecord> = best
        .iter()
        .filter(|r| r.candidate.as_ref().is_some_and(|c| c.species == chosen))
        .collect();
    let (points, blends): (Vec<BoltzmannPoint>, Vec<bool>) = of_species
        .iter()
        .filter_map(|r| usable(r))
        .map(|(_, p, b)| (p, b))
        .unzip();
    if points.is_empty() {
        return Err(BoltzmannError::NoPoints(Some(chosen.to_string())));
    }
    let left_out = of_species.len() - points.len();
    let (fit, no_fit, points) = match fit_boltzmann(points.clone()) {
        Ok(fit) => {
            let points = fit.points.clone();
            (Some(fit), None, points)
        }
        Err(problem) => (None, Some(problem.to_string()), points),
    };
    Ok(BoltzmannPlot {
        source: source.to_string(),
        species: chosen.to_string(),
        units,
        points,
        blends,
        fit,
        no_fit,
        origin: format!(
            "the rank-1 lines ({} units, σ_y {} %), fitted here",
            units.name(),
            DEFAULT_RELATIVE_UNCERTAINTY * 100.0
        ),
        left_out,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assign::CandidateRecord;
    use crate::linelist::GivenPosition;

    fn record(line: usize, upper: f64, sigma: f64, intensity: f64, ga: f64) -> AssignmentRecord {
        let label: crate::levels::LevelLabel = "1s.2s 3S 1".parse().unwrap();
        AssignmentRecord {
            line,
            given: GivenPosition::Wavenumber { value: sigma },
            observed_wavenumber_cm1: sigma,
            observed_uncertainty_cm1: 0.01,
            observed_intensity: Some(intensity),
            rank: Some(1),
            candidate: Some(CandidateRecord {
                species: "He I".parse().unwrap(),
                lower: label.clone(),
                lower_energy_cm1: upper - sigma,
                upper: label,
                upper_energy_cm1: upper,
                predicted_wavenumber_cm1: sigma,
                predicted_uncertainty_cm1: 0.01,
                predicted_in_given_unit: None,
                predicted_strength: None,
                ga_s1: Some(ga),
                deviation_cm1: 0.0,
                combined_uncertainty_cm1: 0.01,
                deviation_sigma: 0.0,
                chance_probability: 0.0,
                selection_rules: crate::levels::e1::SelectionRules::Ls,
            }),
            flags: Vec::new(),
            extra: Vec::new(),
        }
    }

    #[test]
    fn rows_on_a_boltzmann_line_give_back_its_temperature() {
        // I = gA exp(−c₂E/T) (photon counts) and I = gA σ exp(−c₂E/T) (energy), at
        // T = 6000 K (the Boltzmann relation; c₂ from CODATA 2018): the library's fit
        // of the rows recovers T.
        let t = 6000.0;
        for units in [IntensityUnits::Photon, IntensityUnits::Energy] {
            let rows: Vec<AssignmentRecord> = (0..5)
                .map(|i| {
                    let e = 185_000.0 + 2500.0 * f64::from(i);
                    let sigma = 15_000.0 + 1000.0 * f64::from(i);
                    let ga = 1e7 * f64::from(i + 1);
                    let i_photon = ga * (-SECOND_RADIATION_CONSTANT_CM_K * e / t).exp();
                    let intensity = match units {
                        IntensityUnits::Photon => i_photon,
                        IntensityUnits::Energy => i_photon * sigma,
                    };
                    record(i as usize + 1, e, sigma, intensity * 1e90, ga)
                })
                .collect();
            let plot = boltzmann_from_records("demo", &rows, None, units).unwrap();
            let fit = plot.fit.unwrap();
            assert!(
                (fit.temperature_k - t).abs() < 1e-6 * t,
                "{units:?} {fit:?}"
            );
            assert_eq!(plot.species, "He I");
            assert_eq!(plot.points.len(), 5);
        }
    }
}
