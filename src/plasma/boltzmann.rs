//! The Boltzmann plot: the excitation temperature from the intensities of lines of
//! one species.
//!
//! With I ∝ g_k A_ki exp(−E_k/kT) (photon counts; see [`super::intensity`]),
//!
//! y = ln(I / (g_k A_ki)) = a − (c₂/T)·E_k,
//!
//! a straight line in E_k (cm⁻¹) with slope b = −c₂/T, c₂ = hc/k (in energy units,
//! y = ln(Iλ/(g_k A_ki)) instead). This is the Boltzmann plot of plasma
//! spectroscopy (Griem 1997, *Principles of Plasma Spectroscopy*, §6.1; Thorne,
//! Litzén & Johansson 1999, *Spectrophysics*, ch. 9; from memory).
//!
//! [`fit_boltzmann`] fits it by weighted least squares (the project's one
//! straight-line fit, [`super::straight_line`]), weights 1/σ_y², with
//! σ_y the relative uncertainty of I combined with that of A (the straight-line fit
//! of Press et al. 2007, *Numerical Recipes*, 3rd ed., §15.2). Real intensities
//! scatter more than their stated uncertainties (self-absorption, calibration), so
//! the parameter uncertainties are scaled by the Birge ratio √(χ²/(n−2)) when it
//! exceeds 1 (Birge 1932, Phys. Rev. 40, 207), and points more than 3 robust
//! standard deviations (1.4826 × the median absolute residual, at least σ_y) off
//! the line are set aside and the fit repeated (at most
//! three times). T = −c₂/b, σ_T = c₂ σ_b / b² (first-order propagation).

use serde::{Deserialize, Serialize};

use super::straight_line::{LineFitError, Scale, WeightedPoint, fit_parallel_lines};
use crate::units::constants::SECOND_RADIATION_CM_K;

/// One point of a Boltzmann plot.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BoltzmannPoint {
    /// Energy of the upper level E_k, cm⁻¹.
    pub upper_energy_cm1: f64,
    /// y = ln(I/(g_k A_ki)) (photon units) or ln(Iλ/(g_k A_ki)) (energy units).
    pub y: f64,
    /// Standard uncertainty of y (the relative uncertainty of I/(g_k A_ki)).
    pub y_sigma: f64,
    /// Index of the observed line it comes from, in the caller's list.
    pub observed: usize,
    /// Whether the fit used it (false: set aside as more than 3σ off the line).
    pub used: bool,
}

/// A fitted Boltzmann plot.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoltzmannFit {
    /// Excitation temperature T, K.
    pub temperature_k: f64,
    /// Its standard uncertainty, K.
    pub temperature_sigma_k: f64,
    /// Intercept a (y at E_k = 0).
    pub intercept: f64,
    /// Slope b = −c₂/T, per cm⁻¹.
    pub slope_per_cm1: f64,
    /// Standard uncertainty of the slope (Birge-scaled), per cm⁻¹.
    pub slope_sigma_per_cm1: f64,
    /// Covariance of intercept and slope (Birge-scaled).
    pub intercept_slope_covariance: f64,
    /// Standard uncertainty of the intercept (Birge-scaled).
    pub intercept_sigma: f64,
    /// √(χ²/(n−2)) of the used points (before the floor at 1).
    pub birge_ratio: f64,
    /// Highest minus lowest E_k of the used points, cm⁻¹.
    pub energy_span_cm1: f64,
    /// Every point given, used or set aside.
    pub points: Vec<BoltzmannPoint>,
}

impl BoltzmannFit {
    /// y predicted by the fitted line at `upper_energy_cm1`.
    pub fn y_at(&self, upper_energy_cm1: f64) -> f64 {
        self.intercept + self.slope_per_cm1 * upper_energy_cm1
    }

    /// Points used by the fit.
    pub fn used_points(&self) -> usize {
        self.points.iter().filter(|p| p.used).count()
    }
}

/// Why no temperature could be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum BoltzmannProblem {
    /// Fewer than [`MIN_POINTS`] usable points.
    #[error(
        "{points} lines with intensities and transition probabilities (at least {MIN_POINTS} needed)"
    )]
    TooFewPoints {
        /// Usable points.
        points: usize,
    },
    /// The upper levels span too narrow a range of energy.
    #[error("upper levels span only {span_cm1:.0} cm⁻¹ (at least {MIN_SPAN_CM1:.0} cm⁻¹ needed)")]
    NarrowEnergySpan {
        /// The span, cm⁻¹.
        span_cm1: f64,
    },
    /// The slope is not negative enough to give a temperature known to 50 %.
    #[error(
        "the plot gives no temperature known to 50 % (slope {slope:.3e} ± {sigma:.1e} per cm⁻¹)"
    )]
    Undetermined {
        /// Fitted slope, per cm⁻¹.
        slope: f64,
        /// Its uncertainty.
        sigma: f64,
    },
}

/// Fewest points for a Boltzmann plot (two parameters and one degree of freedom).
pub const MIN_POINTS: usize = 3;

/// Narrowest span of upper-level energies for a Boltzmann plot, cm⁻¹ (0.25 eV):
/// below it the slope is a difference of nearly equal numbers and T is ill
/// determined whatever the scatter (common practice, no source: spreads of 1 eV
/// or more are sought).
pub const MIN_SPAN_CM1: f64 = 2000.0;

/// Largest relative uncertainty of T for a fit to count, 0.5.
pub const MAX_RELATIVE_SIGMA: f64 = 0.5;

/// Fit the Boltzmann plot of `points` (see the module documentation). Points with a
/// non-finite value or a σ_y not greater than 0 (or so small that 1/σ_y² overflows)
/// are set aside.
pub fn fit_boltzmann(mut points: Vec<BoltzmannPoint>) -> Result<BoltzmannFit, BoltzmannProblem> {
    for p in &mut points {
        // A weight 1/σ_y² that overflows counts as no σ.
        p.used = p.y.is_finite()
            && p.upper_energy_cm1.is_finite()
            && p.y_sigma > 0.0
            && p.y_sigma.is_finite()
            && (1.0 / (p.y_sigma * p.y_sigma)).is_finite();
    }
    let mut fit = None;
    for _ in 0..4 {
        let line = straight_line(&points)?;
        let residual =
            |p: &BoltzmannPoint| (p.y - line.a - line.b * p.upper_energy_cm1) / p.y_sigma;
        // The scale from the median absolute residual (× 1.4826, the MAD of a
        // normal distribution): an outlier does not widen its own threshold.
        let mut absolute: Vec<f64> = points
            .iter()
            .filter(|p| p.used)
            .map(|p| residual(p).abs())
            .collect();
        absolute.sort_by(f64::total_cmp);
        let median = absolute.get(absolute.len() / 2).copied().unwrap_or(0.0);
        let threshold = 3.0 * (1.4826 * median).max(1.0);
        let mut changed = false;
        for p in points.iter_mut().filter(|p| p.used) {
            if residual(p).abs() > threshold {
                p.used = false;
                changed = true;
            }
        }
        if !changed {
            fit = Some(line);
            break;
        }
        fit = Some(line);
    }
    let line = straight_line(&points).or_else(|e| fit.ok_or(e))?;
    let scale = line.birge.max(1.0);
    let slope_sigma = line.b_var.sqrt() * scale;
    let slope = line.b;
    if !(slope < 0.0 && slope_sigma <= MAX_RELATIVE_SIGMA * -slope) {
        return Err(BoltzmannProblem::Undetermined {
            slope,
            sigma: slope_sigma,
        });
    }
    let c2 = SECOND_RADIATION_CM_K;
    Ok(BoltzmannFit {
        temperature_k: -c2 / slope,
        temperature_sigma_k: c2 * slope_sigma / (slope * slope),
        intercept: line.a,
        slope_per_cm1: slope,
        slope_sigma_per_cm1: slope_sigma,
        intercept_slope_covariance: line.ab_cov * scale * scale,
        intercept_sigma: line.a_var.sqrt() * scale,
        birge_ratio: line.birge,
        energy_span_cm1: line.span,
        points,
    })
}

/// A weighted straight line y = a + bE over the used points.
struct Line {
    a: f64,
    b: f64,
    a_var: f64,
    b_var: f64,
    ab_cov: f64,
    birge: f64,
    span: f64,
}

/// The weighted least-squares line through the used points: the project's one
/// straight-line fit, [`fit_parallel_lines`] with one group and weights 1/σ_y²
/// (Press et al. 2007, §15.2), its covariance unscaled here (the Birge scaling is
/// applied by [`fit_boltzmann`], which also reports the ratio below 1).
fn straight_line(points: &[BoltzmannPoint]) -> Result<Line, BoltzmannProblem> {
    let used: Vec<WeightedPoint> = points
        .iter()
        .filter(|p| p.used)
        .map(|p| WeightedPoint {
            x: p.upper_energy_cm1,
            y: p.y,
            weight: 1.0 / (p.y_sigma * p.y_sigma),
        })
        .collect();
    let n = used.len();
    if n < MIN_POINTS {
        return Err(BoltzmannProblem::TooFewPoints { points: n });
    }
    let (low, high) = used.iter().fold((f64::MAX, f64::MIN), |(lo, hi), p| {
        (lo.min(p.x), hi.max(p.x))
    });
    let span = high - low;
    if span < MIN_SPAN_CM1 {
        return Err(BoltzmannProblem::NarrowEnergySpan { span_cm1: span });
    }
    // Stated weights: the covariance comes scaled by max(1, χ²/ν); divided back
    // out, so that the Birge ratio below 1 is kept for the report.
    let fit = fit_parallel_lines(&[&used], Scale::Stated).map_err(|e| match e {
        LineFitError::NoSpread => BoltzmannProblem::NarrowEnergySpan { span_cm1: span },
        _ => BoltzmannProblem::TooFewPoints { points: n },
    })?;
    let unscale = 1.0 / fit.covariance_scale;
    let birge = fit.reduced_chi_square().sqrt();
    Ok(Line {
        a: fit.intercepts.first().copied().unwrap_or(f64::NAN),
        b: fit.slope,
        a_var: fit.variance(0, 0) * unscale,
        b_var: fit.variance(1, 1) * unscale,
        ab_cov: fit.variance(0, 1) * unscale,
        birge,
        span,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(e: f64, y: f64, sigma: f64) -> BoltzmannPoint {
        BoltzmannPoint {
            upper_energy_cm1: e,
            y,
            y_sigma: sigma,
            observed: 0,
            used: true,
        }
    }

    #[test]
    fn exact_line_gives_its_temperature() {
        // y = 3 − (c₂/T) E at T = 9000 K (the Boltzmann relation, Griem 1997).
        let t = 9000.0;
        let b = -SECOND_RADIATION_CM_K / t;
        let points = (0..6)
            .map(|i| {
                let e = 160_000.0 + 2000.0 * f64::from(i);
                point(e, 3.0 + b * e, 0.1)
            })
            .collect();
        let fit = fit_boltzmann(points).unwrap();
        assert!(
            (fit.temperature_k - t).abs() < 1e-6 * t,
            "{}",
            fit.temperature_k
        );
        assert!(fit.birge_ratio < 1e-6);
    }

    #[test]
    fn weighted_slope_agrees_with_the_normal_equations() {
        let x = [20_000.0, 22_000.0, 25_000.0, 27_000.0, 30_000.0];
        let y = [0.4, 0.05, -0.5, -0.86, -1.4];
        let s = [0.1, 0.2, 0.1, 0.3, 0.1];
        let points: Vec<BoltzmannPoint> = (0..5).map(|i| point(x[i], y[i], s[i])).collect();
        let line = straight_line(&points).unwrap();
        // The weighted normal equations in their uncentred form (Press et al.
        // 2007, eqs. 15.2.4–15.2.9), against the centred form of the code.
        let w: Vec<f64> = s.iter().map(|s| 1.0 / (s * s)).collect();
        let sw: f64 = w.iter().sum();
        let sx: f64 = (0..5).map(|i| w[i] * x[i]).sum();
        let sy: f64 = (0..5).map(|i| w[i] * y[i]).sum();
        let sxx: f64 = (0..5).map(|i| w[i] * x[i] * x[i]).sum();
        let sxy: f64 = (0..5).map(|i| w[i] * x[i] * y[i]).sum();
        let delta = sw * sxx - sx * sx;
        let b = (sw * sxy - sx * sy) / delta;
        let a = (sxx * sy - sx * sxy) / delta;
        assert!((line.b - b).abs() < 1e-12 * b.abs());
        assert!((line.a - a).abs() < 1e-9 * a.abs());
        assert!((line.b_var - sw / delta).abs() < 1e-9 * line.b_var);
        assert!((line.a_var - sxx / delta).abs() < 1e-9 * line.a_var);
    }

    #[test]
    fn an_outlier_is_set_aside() {
        let b = -SECOND_RADIATION_CM_K / 7000.0;
        let mut points: Vec<BoltzmannPoint> = (0..8)
            .map(|i| {
                let e = 20_000.0 + 1500.0 * f64::from(i);
                // ±0.05 alternating scatter.
                let noise = if i % 2 == 0 { 0.05 } else { -0.05 };
                point(e, 1.0 + b * e + noise, 0.1)
            })
            .collect();
        points[3].y -= 3.0; // a self-absorbed line, 20 times too weak
        let fit = fit_boltzmann(points).unwrap();
        assert!(!fit.points[3].used);
        assert_eq!(fit.used_points(), 7);
        assert!((fit.temperature_k - 7000.0).abs() < 3.0 * fit.temperature_sigma_k);
    }

    #[test]
    fn too_few_or_too_close_says_why() {
        let p = vec![point(20_000.0, 1.0, 0.1), point(30_000.0, 0.0, 0.1)];
        assert_eq!(
            fit_boltzmann(p),
            Err(BoltzmannProblem::TooFewPoints { points: 2 })
        );
        let p = vec![
            point(20_000.0, 1.0, 0.1),
            point(20_100.0, 0.9, 0.1),
            point(20_300.0, 0.8, 0.1),
        ];
        assert!(matches!(
            fit_boltzmann(p),
            Err(BoltzmannProblem::NarrowEnergySpan { .. })
        ));
        // A rising plot gives no temperature.
        let p = vec![
            point(20_000.0, 0.0, 0.1),
            point(25_000.0, 1.0, 0.1),
            point(30_000.0, 2.0, 0.1),
        ];
        assert!(matches!(
            fit_boltzmann(p),
            Err(BoltzmannProblem::Undetermined { .. })
        ));
    }
}
