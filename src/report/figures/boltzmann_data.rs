//! The data of the Boltzmann plot: per line, ln(I·λ/(g_k·A_ki)) against the upper
//! level's energy E_k, and the straight line fitted to them, whose slope −1/(k T)
//! gives the excitation temperature.
//!
//! For a source in local thermodynamic equilibrium the intensity (energy per time) of
//! a line of wavelength λ from upper level k is I ∝ (g_k A_ki / λ) exp(−E_k/(k T))
//! (the Boltzmann distribution of the upper levels; textbook, e.g. Griem, *Principles
//! of Plasma Spectroscopy*, 1997, from memory), so ln(I λ/(g_k A_ki)) = c − E_k/(k T):
//! with E_k in cm⁻¹ the slope is −c₂/T, c₂ = hc/k the second radiation constant.
//!
//! The fit is [`fit_boltzmann`], the one function to replace when the library gives
//! its own fit of the same points.

use crate::assign::{AssignmentRecord, Flag};
use crate::notation::Species;

/// The second radiation constant c₂ = hc/k, cm·K: the project's one value
/// ([`crate::units::constants::SECOND_RADIATION_CM_K`], CODATA 2018).
pub const SECOND_RADIATION_CONSTANT_CM_K: f64 = crate::units::constants::SECOND_RADIATION_CM_K;

/// One line of the Boltzmann plot.
#[derive(Debug, Clone, PartialEq)]
pub struct BoltzmannPoint {
    /// Energy of the upper level E_k, cm⁻¹.
    pub upper_energy_cm1: f64,
    /// ln(I·λ/(g_k·A_ki)), I as given, λ in nm, g_k·A_ki in s⁻¹.
    pub ordinate: f64,
    /// Standard uncertainty of the ordinate, when known (σ of ln I = σ_I/I).
    pub sigma: Option<f64>,
    /// The observed line has more than one candidate (its intensity may be shared).
    pub blend: bool,
}

/// The straight line fitted to the points, and the temperature of its slope.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoltzmannFit {
    /// Slope, per cm⁻¹.
    pub slope_per_cm1: f64,
    /// Its standard uncertainty.
    pub slope_sigma: f64,
    /// Intercept (the ordinate at E_k = 0).
    pub intercept: f64,
    /// Its standard uncertainty.
    pub intercept_sigma: f64,
    /// Root-mean-square scatter of the points about the line (weighted), ordinate units.
    pub scatter: f64,
    /// Points fitted.
    pub points: usize,
    /// T_exc = −c₂/slope, K; `None` when the slope is not negative.
    pub temperature_k: Option<f64>,
    /// Its standard uncertainty c₂·σ_slope/slope², K.
    pub temperature_sigma_k: Option<f64>,
}

/// What the Boltzmann figure shows.
#[derive(Debug, Clone, PartialEq)]
pub struct BoltzmannPlot {
    /// The input, for the title.
    pub source: String,
    /// The spectrum.
    pub species: String,
    /// The points.
    pub points: Vec<BoltzmannPoint>,
    /// The fit, `None` with fewer than three points or a single upper energy.
    pub fit: Option<BoltzmannFit>,
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

/// The points of one species from the rows of an assignment (the assign CSV, or
/// [`crate::assign::records`]): every rank-1 candidate with a positive intensity and
/// a published g_k·A_ki (blends too, marked: with many spectra nearly every line has
/// more than one candidate), and the straight line fitted to them.
/// `species`: the spectrum to plot; `None`: the one with most such lines (the first
/// in the rows on a tie).
pub fn boltzmann_from_records(
    source: &str,
    records: &[AssignmentRecord],
    species: Option<Species>,
) -> Result<BoltzmannPlot, BoltzmannError> {
    let usable = |r: &AssignmentRecord| -> Option<(Species, BoltzmannPoint)> {
        let c = r.candidate.as_ref()?;
        let intensity = r.observed_intensity.filter(|i| *i > 0.0)?;
        let ga = c.ga_s1.filter(|g| *g > 0.0)?;
        if r.observed_wavenumber_cm1 <= 0.0 {
            return None;
        }
        let lambda_nm = 1e7 / r.observed_wavenumber_cm1;
        Some((
            c.species,
            BoltzmannPoint {
                upper_energy_cm1: c.upper_energy_cm1.max(c.lower_energy_cm1),
                ordinate: (intensity * lambda_nm / ga).ln(),
                sigma: None,
                blend: r.flags.contains(&Flag::Blend),
            },
        ))
    };
    let best: Vec<&AssignmentRecord> = records.iter().filter(|r| r.rank == Some(1)).collect();
    let chosen = match species {
        Some(s) => s,
        None => {
            let mut counts: Vec<(Species, usize)> = Vec::new();
            for (s, _) in best.iter().filter_map(|r| usable(r)) {
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
    let points: Vec<BoltzmannPoint> = of_species
        .iter()
        .filter_map(|r| usable(r))
        .map(|(_, p)| p)
        .collect();
    if points.is_empty() {
        return Err(BoltzmannError::NoPoints(Some(chosen.to_string())));
    }
    Ok(BoltzmannPlot {
        source: source.to_string(),
        species: chosen.to_string(),
        left_out: of_species.len() - points.len(),
        fit: fit_boltzmann(&points),
        points,
    })
}

/// The weighted least-squares straight line through the points (weights 1/σ² when
/// every point has a σ, else equal weights with the uncertainties scaled by the
/// scatter about the line, s² = Σr²/(n − 2)); Bevington & Robinson, *Data
/// Reduction and Error Analysis*, 3rd ed. (2003), eqs. 6.12 and 6.21–6.22 (from
/// memory). `None` with fewer than three points or a single upper energy.
pub fn fit_boltzmann(points: &[BoltzmannPoint]) -> Option<BoltzmannFit> {
    let n = points.len();
    if n < 3 {
        return None;
    }
    let weighted = points.iter().all(|p| p.sigma.is_some_and(|s| s > 0.0));
    let weight = |p: &BoltzmannPoint| match p.sigma {
        Some(s) if weighted => 1.0 / (s * s),
        _ => 1.0,
    };
    // Centre the energies so that the sums do not lose digits (E_k ~ 10⁵ cm⁻¹).
    let x0 = points.iter().map(|p| p.upper_energy_cm1).sum::<f64>() / n as f64;
    let (mut s, mut sx, mut sy, mut sxx, mut sxy) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for p in points {
        let (w, x, y) = (weight(p), p.upper_energy_cm1 - x0, p.ordinate);
        s += w;
        sx += w * x;
        sy += w * y;
        sxx += w * x * x;
        sxy += w * x * y;
    }
    let delta = s * sxx - sx * sx;
    if delta.is_nan() || delta <= 0.0 || sxx.is_nan() || sxx <= 0.0 {
        return None;
    }
    let slope = (s * sxy - sx * sy) / delta;
    let intercept_c = (sxx * sy - sx * sxy) / delta;
    let chi2: f64 = points
        .iter()
        .map(|p| {
            let r = p.ordinate - (intercept_c + slope * (p.upper_energy_cm1 - x0));
            weight(p) * r * r
        })
        .sum();
    let dof = (n - 2) as f64;
    let scale = if weighted { 1.0 } else { chi2 / dof };
    let slope_var = scale * s / delta;
    let intercept_c_var = scale * sxx / delta;
    let covariance = -scale * sx / delta;
    // Back to the intercept at E_k = 0: a = a_c − b·x0.
    let intercept = intercept_c - slope * x0;
    let intercept_var = intercept_c_var + x0 * x0 * slope_var - 2.0 * x0 * covariance;
    let slope_sigma = slope_var.max(0.0).sqrt();
    let (temperature_k, temperature_sigma_k) = if slope < 0.0 {
        (
            Some(-SECOND_RADIATION_CONSTANT_CM_K / slope),
            Some(SECOND_RADIATION_CONSTANT_CM_K * slope_sigma / (slope * slope)),
        )
    } else {
        (None, None)
    };
    Some(BoltzmannFit {
        slope_per_cm1: slope,
        slope_sigma,
        intercept,
        intercept_sigma: intercept_var.max(0.0).sqrt(),
        scatter: (chi2 / s * n as f64 / dof).sqrt(),
        points: n,
        temperature_k,
        temperature_sigma_k,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(e: f64, y: f64) -> BoltzmannPoint {
        BoltzmannPoint {
            upper_energy_cm1: e,
            ordinate: y,
            sigma: None,
            blend: false,
        }
    }

    #[test]
    fn points_on_a_line_give_back_its_temperature() {
        // ln(Iλ/gA) = 3 − E_k c₂/T with T = 6000 K (the Boltzmann factor; c₂ from
        // CODATA 2018): the fit recovers T exactly and σ_T = 0.
        let t = 6000.0;
        let points: Vec<_> = [150_000.0, 151_500.0, 153_000.0, 160_000.0]
            .iter()
            .map(|&e| point(e, 3.0 - e * SECOND_RADIATION_CONSTANT_CM_K / t))
            .collect();
        let fit = fit_boltzmann(&points).unwrap();
        assert!((fit.temperature_k.unwrap() - t).abs() < 1e-6 * t, "{fit:?}");
        assert!(fit.temperature_sigma_k.unwrap() < 1e-6, "{fit:?}");
        assert!((fit.intercept - 3.0).abs() < 1e-6, "{fit:?}");
    }

    #[test]
    fn equal_weights_match_scipy_linregress() {
        // scipy.stats.linregress([1,2,3,4,5], [-1.1,-2.3,-2.9,-4.2,-4.8]) (scipy 1.x):
        // slope −0.93, intercept −0.27, stderr 0.06403124237432756,
        // intercept_stderr 0.21236760581594993 (computed for this test).
        let points: Vec<_> = [
            (1.0, -1.1),
            (2.0, -2.3),
            (3.0, -2.9),
            (4.0, -4.2),
            (5.0, -4.8),
        ]
        .iter()
        .map(|&(x, y)| point(x, y))
        .collect();
        let fit = fit_boltzmann(&points).unwrap();
        assert!((fit.slope_per_cm1 + 0.93).abs() < 1e-12, "{fit:?}");
        assert!((fit.intercept + 0.27).abs() < 1e-12, "{fit:?}");
        assert!(
            (fit.slope_sigma - 0.06403124237432756).abs() < 1e-12,
            "{fit:?}"
        );
        assert!(
            (fit.intercept_sigma - 0.21236760581594993).abs() < 1e-12,
            "{fit:?}"
        );
        // T = −c₂/slope and σ_T = c₂σ_b/b² (propagation of the slope's σ).
        let t = fit.temperature_k.unwrap();
        assert!((t - SECOND_RADIATION_CONSTANT_CM_K / 0.93).abs() < 1e-12);
        assert!((fit.temperature_sigma_k.unwrap() - t * 0.06403124237432756 / 0.93).abs() < 1e-12);
    }

    #[test]
    fn too_few_points_or_one_energy_give_no_fit() {
        // Common practice, no source: two points leave no degree of freedom for σ.
        assert!(fit_boltzmann(&[point(1.0, 1.0), point(2.0, 0.0)]).is_none());
        assert!(fit_boltzmann(&[point(1.0, 1.0), point(1.0, 0.0), point(1.0, 2.0)]).is_none());
        // A rising line has no temperature.
        let up: Vec<_> = (0..4)
            .map(|i| point(i as f64, i as f64 * 0.5 + (i % 2) as f64 * 0.1))
            .collect();
        assert_eq!(fit_boltzmann(&up).unwrap().temperature_k, None);
    }
}
