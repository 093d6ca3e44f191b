//! Boltzmann and Saha–Boltzmann plots: excitation temperature of one stage, and
//! temperature and electron density from two successive stages of one element.
//!
//! Assumptions: local thermodynamic equilibrium (one T for excitation and
//! ionisation, Maxwellian electrons) and optically thin lines; intensities are
//! energy (not photon-count) intensities on a relative scale that is the same for
//! every line (one spectral response).
//!
//! Boltzmann plot (e.g. Griem 1997, *Principles of Plasma Spectroscopy*, §6.2):
//! an optically thin line k → i of intensity I = (hc/4πλ) A_ki g_k (N/U) e^(−E_k/kT),
//! so y = ln(I λ / (g_k A_ki)) = ln(hcN/4πU) − E_k/kT: a line of slope −1/kT against
//! the upper-level energy E_k. Here λ is in nm and energies in cm⁻¹, so the slope
//! is −c₂/T (c₂ = hc/k, [`SECOND_RADIATION_CM_K`]).
//!
//! Saha–Boltzmann plot (Aragón & Aguilera 2008, Spectrochim. Acta B 63, 893,
//! eqs. 13–15; Yalçin et al. 1999, Appl. Phys. B 68, 121): with the Saha equation
//! N⁺n_e/N⁰ = 2 (U⁺/U⁰) (2π m_e kT/h²)^{3/2} e^(−(χ − Δχ)/kT), the ion's points
//! moved to x* = E_k + χ − Δχ and y* = y − ln(2 (2π m_e kT)^{3/2} / (h³ n_e)) fall
//! on the neutral's line. Written with ln(N⁰/U⁰) in the common intercept, the
//! partition-function ratio U⁺/U⁰ cancels from the plot; it enters the ionisation
//! ratio N⁺/N⁰ reported beside it and, through the cut of the sums, the lowering.
//! Δχ is the Debye–Hückel lowering of the neutral's limit ([`debye_lowering_cm1`]).
//!
//! Three fits: T and n_e jointly (one slope, one intercept per stage: the offset
//! of the ion's line gives n_e), T given n_e (the corrected points of both stages
//! on one line, iterated in T), and n_e given T (slope held at −c₂/T).

use serde::Serialize;

use super::partition::{PartitionFunction, SpeciesLevels};
use super::straight_line::{
    LineFit, LineFitError, Scale, WeightedPoint, fit_intercepts, fit_parallel_lines,
};
use crate::notation::Species;
use crate::units::constants::{
    BOLTZMANN_J_K, ELECTRON_MASS_KG, ELEMENTARY_CHARGE_C, EV_CM1, PLANCK_CONSTANT_J_S,
    SECOND_RADIATION_CM_K, VACUUM_PERMITTIVITY_F_M,
};

/// ln of the Saha factor S(T) = 2 (2π m_e k T / h²)^{3/2}, with S in cm⁻³
/// (= 4.829×10¹⁵ T^{3/2} cm⁻³; the 2 is the electron's spin weight).
pub fn ln_saha_factor_cm3(temperature_k: f64) -> f64 {
    let per_m3 = 2.0
        * (2.0 * std::f64::consts::PI * ELECTRON_MASS_KG * BOLTZMANN_J_K * temperature_k
            / (PLANCK_CONSTANT_J_S * PLANCK_CONSTANT_J_S))
            .powf(1.5);
    (per_m3 * 1e-6).ln()
}

/// Debye–Hückel lowering of the ionisation limit of a neutral atom, cm⁻¹:
/// Δχ = e²/(4πε₀ λ_D) with the electron Debye length λ_D = (ε₀kT/(n_e e²))^{1/2}
/// (Griem 1964, *Plasma Spectroscopy*, eq. 5-19 with z = 0; ≈ 2.09×10⁻⁸ eV
/// (n_e[cm⁻³]/T[K])^{1/2}). The limit of the singly charged ion is lowered by twice
/// this.
pub fn debye_lowering_cm1(density_cm3: f64, temperature_k: f64) -> f64 {
    if !(density_cm3 > 0.0 && temperature_k > 0.0) {
        return 0.0;
    }
    let e2 = ELEMENTARY_CHARGE_C * ELEMENTARY_CHARGE_C;
    let debye_m =
        (VACUUM_PERMITTIVITY_F_M * BOLTZMANN_J_K * temperature_k / (density_cm3 * 1e6 * e2)).sqrt();
    let joule = e2 / (4.0 * std::f64::consts::PI * VACUUM_PERMITTIVITY_F_M * debye_m);
    joule / ELEMENTARY_CHARGE_C * EV_CM1
}

/// Serialise a species as its name (`Ar II`), as every output prints it.
pub fn species_name<S: serde::Serializer>(species: &Species, s: S) -> Result<S::Ok, S::Error> {
    s.collect_str(species)
}

/// One assigned line of a plot: what the input gives.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LineData {
    /// 1-based data row of the line in the input.
    pub line: usize,
    /// The spectrum.
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub species: Species,
    /// Upper-level energy E_k, cm⁻¹.
    pub upper_energy_cm1: f64,
    /// Vacuum wavenumber of the line, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// Intensity (relative, energy units), > 0.
    pub intensity: f64,
    /// Standard uncertainty of the intensity, same units, when given.
    pub intensity_sigma: Option<f64>,
    /// g_k A_ki, s⁻¹.
    pub ga_s1: f64,
}

impl LineData {
    /// y = ln(I λ / (g_k A_ki)), λ in nm.
    pub fn ordinate(&self) -> f64 {
        (self.intensity * 1e7 / self.wavenumber_cm1 / self.ga_s1).ln()
    }

    /// Standard uncertainty of y from that of I (σ_I / I), when given.
    pub fn ordinate_sigma(&self) -> Option<f64> {
        self.intensity_sigma.map(|s| s / self.intensity)
    }
}

/// One point of a plot, as drawn.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlotPoint {
    /// 1-based data row of the line in the input.
    pub line: usize,
    /// The spectrum.
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub species: Species,
    /// Abscissa, cm⁻¹: E_k (Boltzmann), E_k + χ − Δχ for the ion (Saha–Boltzmann).
    pub x_cm1: f64,
    /// Ordinate: ln(I λ/(g A)), corrected for the ion in a Saha–Boltzmann plot.
    pub y: f64,
    /// Standard uncertainty of y used as weight, when given.
    pub y_sigma: Option<f64>,
    /// y minus the fitted line.
    pub residual: f64,
}

/// A quantity with its standard uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Measured {
    /// The value.
    pub value: f64,
    /// Its standard uncertainty.
    pub sigma: f64,
}

/// A Boltzmann plot of one stage.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BoltzmannFit {
    /// The spectrum.
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub species: Species,
    /// Excitation temperature, K.
    pub temperature_k: Measured,
    /// The intercept ln(hcN/4πU) (relative units).
    pub intercept: f64,
    /// χ²/ν of the fit.
    pub reduced_chi_square: f64,
    /// Whether the weights came from intensity uncertainties (else the scatter).
    pub stated_weights: bool,
    /// The points.
    pub points: Vec<PlotPoint>,
}

/// Why a plot could not give a result.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum PlotError {
    /// The straight line cannot be fitted.
    #[error("{0}")]
    Line(#[from] LineFitError),
    /// The fitted slope is not negative: no positive temperature.
    #[error(
        "the fitted slope is {slope:.3e} per cm-1, not negative: the upper levels are not populated as at any positive temperature (self-absorption, wrong assignments, or too small an energy spread)"
    )]
    NoTemperature {
        /// The slope, per cm⁻¹.
        slope: f64,
    },
    /// Only one stage of the element.
    #[error(
        "lines of {species} only: a Saha–Boltzmann fit needs lines of two successive stages ({species} and {next})"
    )]
    OneStage {
        /// The stage present.
        species: Species,
        /// The stage missing.
        next: Species,
    },
    /// The iteration in T or n_e did not settle.
    #[error("the iteration of the Saha–Boltzmann fit did not converge in {iterations} steps")]
    NoConvergence {
        /// Steps made.
        iterations: usize,
    },
    /// Too few lines for a Boltzmann plot with an uncertainty from its scatter.
    #[error(
        "{lines} usable line(s) of {species}: a Boltzmann plot needs at least {needed} (a slope, an intercept and their scatter)"
    )]
    TooFewLines {
        /// The spectrum.
        species: Species,
        /// Lines given.
        lines: usize,
        /// Lines needed.
        needed: usize,
    },
    /// The upper levels span less than kT: the slope says little about T.
    #[error(
        "the upper levels of {species} span {spread_cm1:.0} cm-1, less than kT = {kt_cm1:.0} cm-1 at the fitted {temperature_k:.0} K: too small an energy spread for a temperature (lines from levels further apart are needed)"
    )]
    SmallSpread {
        /// The spectrum.
        species: Species,
        /// Highest minus lowest upper-level energy, cm⁻¹.
        spread_cm1: f64,
        /// kT at the fitted temperature, cm⁻¹.
        kt_cm1: f64,
        /// The fitted temperature, K.
        temperature_k: f64,
    },
    /// A given value that is not a positive number.
    #[error("{name} = {value} is not a positive number")]
    BadGiven {
        /// Which.
        name: &'static str,
        /// The value.
        value: f64,
    },
}

fn weighted(lines: &[LineData], x: impl Fn(&LineData) -> f64) -> (Vec<WeightedPoint>, bool) {
    let stated = !lines.is_empty()
        && lines
            .iter()
            .all(|l| l.ordinate_sigma().is_some_and(|s| s > 0.0));
    let points = lines
        .iter()
        .map(|l| WeightedPoint {
            x: x(l),
            y: l.ordinate(),
            weight: match l.ordinate_sigma() {
                Some(s) if stated => 1.0 / (s * s),
                _ => 1.0,
            },
        })
        .collect();
    (points, stated)
}

fn scale(stated: bool) -> Scale {
    if stated {
        Scale::Stated
    } else {
        Scale::Residual
    }
}

fn temperature(slope: f64, slope_sigma: f64) -> Result<Measured, PlotError> {
    if slope.is_nan() || slope >= 0.0 {
        return Err(PlotError::NoTemperature { slope });
    }
    // y = a − E c₂/T: T = −c₂/b, σ_T = c₂ σ_b / b².
    Ok(Measured {
        value: -SECOND_RADIATION_CM_K / slope,
        sigma: SECOND_RADIATION_CM_K * slope_sigma / (slope * slope),
    })
}

/// Fewest lines of a Boltzmann plot: two parameters and one degree of freedom for
/// the scatter.
pub const MIN_BOLTZMANN_LINES: usize = 3;

/// Fit the Boltzmann plot of one stage. Weights 1/σ_y² when every line has an
/// intensity uncertainty (covariance scaled by the Birge ratio when larger than 1),
/// else equal weights with the scatter setting the uncertainty. At least
/// [`MIN_BOLTZMANN_LINES`] lines with two upper levels, spanning at least kT at the
/// fitted temperature (common practice, no source: a plot over less than kT has a
/// slope dominated by the scatter; texts ask for "a wide range of upper-level
/// energies", e.g. Aragón & Aguilera 2008, §3, from memory).
pub fn boltzmann_fit(species: Species, lines: &[LineData]) -> Result<BoltzmannFit, PlotError> {
    if lines.len() < MIN_BOLTZMANN_LINES {
        return Err(PlotError::TooFewLines {
            species,
            lines: lines.len(),
            needed: MIN_BOLTZMANN_LINES,
        });
    }
    let (points, stated) = weighted(lines, |l| l.upper_energy_cm1);
    let fit = fit_parallel_lines(&[&points], scale(stated))?;
    let temperature_k = temperature(fit.slope, fit.slope_sigma())?;
    let (low, high) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.x), b.max(p.x))
        });
    let kt_cm1 = temperature_k.value / SECOND_RADIATION_CM_K;
    if high - low < kt_cm1 {
        return Err(PlotError::SmallSpread {
            species,
            spread_cm1: high - low,
            kt_cm1,
            temperature_k: temperature_k.value,
        });
    }
    let intercept = fit.intercepts.first().copied().unwrap_or(0.0);
    let plot = lines
        .iter()
        .zip(&points)
        .map(|(l, p)| PlotPoint {
            line: l.line,
            species: l.species,
            x_cm1: p.x,
            y: p.y,
            y_sigma: l.ordinate_sigma().filter(|_| stated),
            residual: p.y - intercept - fit.slope * p.x,
        })
        .collect();
    Ok(BoltzmannFit {
        species,
        temperature_k,
        intercept,
        reduced_chi_square: fit.reduced_chi_square(),
        stated_weights: stated,
        points: plot,
    })
}

/// What the Saha–Boltzmann fit determines.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "mode", rename_all = "kebab-case")]
pub enum SahaMode {
    /// T and n_e together.
    Joint,
    /// T, with n_e given (cm⁻³, standard uncertainty).
    GivenDensity {
        /// n_e, cm⁻³.
        density_cm3: f64,
        /// Its standard uncertainty, cm⁻³ (0 if exact).
        sigma_cm3: f64,
    },
    /// n_e, with T given (K, standard uncertainty).
    GivenTemperature {
        /// T, K.
        temperature_k: f64,
        /// Its standard uncertainty, K.
        sigma_k: f64,
    },
}

/// A Saha–Boltzmann plot of two successive stages.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SahaBoltzmannFit {
    /// The lower stage (`Ar I`).
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub neutral: Species,
    /// The next stage (`Ar II`).
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub ion: Species,
    /// What was fitted and what was given.
    pub mode: SahaMode,
    /// Temperature, K (given or fitted).
    pub temperature_k: Measured,
    /// Electron density, cm⁻³ (given or fitted).
    pub density_cm3: Measured,
    /// Ionisation energy χ of the lower stage, cm⁻¹.
    pub ionization_cm1: f64,
    /// Debye–Hückel lowering Δχ at the result, cm⁻¹.
    pub lowering_cm1: f64,
    /// Partition functions of the two stages at T, cut at the lowered limits.
    pub partition: [PartitionFunction; 2],
    /// N⁺/N⁰ from the Saha equation at the result.
    pub ionization_ratio: f64,
    /// Lines of the lower and the upper stage.
    pub lines: [usize; 2],
    /// χ²/ν of the final line.
    pub reduced_chi_square: f64,
    /// Whether the weights came from intensity uncertainties.
    pub stated_weights: bool,
    /// The points, the ion's moved onto the neutral's line.
    pub points: Vec<PlotPoint>,
}

/// The two stages of a Saha–Boltzmann plot: their levels (for χ, U and the
/// lowering) and their lines.
#[derive(Debug, Clone, Copy)]
pub struct StagePair<'a> {
    /// Levels of the lower stage.
    pub neutral: &'a SpeciesLevels,
    /// Levels of the next stage.
    pub ion: &'a SpeciesLevels,
    /// Lines of the lower stage.
    pub neutral_lines: &'a [LineData],
    /// Lines of the next stage.
    pub ion_lines: &'a [LineData],
}

const MAX_ITERATIONS: usize = 100;

/// Fit a Saha–Boltzmann plot (see the module documentation). The lowering is
/// iterated with n_e and T to a fixed point; its own uncertainty is not propagated
/// (a change of n_e by its σ moves Δχ by σ/(2n_e)·Δχ, far below kT).
pub fn saha_boltzmann_fit(
    pair: StagePair<'_>,
    mode: SahaMode,
) -> Result<SahaBoltzmannFit, PlotError> {
    if pair.ion_lines.is_empty() || pair.neutral_lines.is_empty() {
        let (species, next) = if pair.neutral_lines.is_empty() {
            (pair.ion.species, pair.neutral.species)
        } else {
            (pair.neutral.species, pair.ion.species)
        };
        return Err(PlotError::OneStage { species, next });
    }
    match mode {
        SahaMode::Joint => joint(pair),
        SahaMode::GivenTemperature {
            temperature_k,
            sigma_k,
        } => {
            check_given("T", temperature_k)?;
            let central = given_temperature(pair, temperature_k)?;
            let shifted =
                |dt: f64| given_temperature(pair, temperature_k + dt).map(|f| f.density_cm3.value);
            let spread = if sigma_k > 0.0 {
                (shifted(sigma_k)? - shifted(-sigma_k.min(0.5 * temperature_k))?).abs() / 2.0
            } else {
                0.0
            };
            let mut fit = central;
            fit.temperature_k.sigma = sigma_k.max(0.0);
            fit.density_cm3.sigma = fit.density_cm3.sigma.hypot(spread);
            fit.mode = mode;
            Ok(fit)
        }
        SahaMode::GivenDensity {
            density_cm3,
            sigma_cm3,
        } => {
            check_given("n_e", density_cm3)?;
            let central = given_density(pair, density_cm3)?;
            let shifted =
                |dn: f64| given_density(pair, density_cm3 + dn).map(|f| f.temperature_k.value);
            let spread = if sigma_cm3 > 0.0 {
                (shifted(sigma_cm3)? - shifted(-sigma_cm3.min(0.5 * density_cm3))?).abs() / 2.0
            } else {
                0.0
            };
            let mut fit = central;
            fit.density_cm3.sigma = sigma_cm3.max(0.0);
            fit.temperature_k.sigma = fit.temperature_k.sigma.hypot(spread);
            fit.mode = mode;
            Ok(fit)
        }
    }
}

fn check_given(name: &'static str, value: f64) -> Result<(), PlotError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(PlotError::BadGiven { name, value })
    }
}

/// Both fitted: y = a₀ − b x for the neutral, y = a₁ − b (E + χ − Δχ) for the ion,
/// ln n_e = ln S(T) − (a₁ − a₀).
fn joint(pair: StagePair<'_>) -> Result<SahaBoltzmannFit, PlotError> {
    let chi = pair.neutral.ionization_cm1;
    let (neutral, stated_n) = weighted(pair.neutral_lines, |l| l.upper_energy_cm1);
    let mut lowering = 0.0;
    let mut last_ln_ne = f64::NAN;
    for _ in 0..MAX_ITERATIONS {
        let (ion, stated_i) = weighted(pair.ion_lines, |l| l.upper_energy_cm1 + chi - lowering);
        let stated = stated_n && stated_i;
        let fit = fit_parallel_lines(&[&neutral, &ion], scale(stated))?;
        let t = temperature(fit.slope, fit.slope_sigma())?;
        let (a0, a1) = match fit.intercepts.as_slice() {
            [a0, a1] => (*a0, *a1),
            _ => return Err(PlotError::NoConvergence { iterations: 0 }),
        };
        let ln_ne = ln_saha_factor_cm3(t.value) - (a1 - a0);
        // Gradient of ln n_e in (a₀, a₁, b): ∂/∂a₀ = 1, ∂/∂a₁ = −1, and
        // ∂ ln S/∂b = (3/2)(∂ ln T/∂b) = −(3/2)/b.
        let gradient = [1.0, -1.0, -1.5 / fit.slope];
        let variance: f64 = (0..3)
            .flat_map(|i| (0..3).map(move |j| (i, j)))
            .map(|(i, j)| gradient[i] * fit.variance(i, j) * gradient[j])
            .sum();
        let ne = ln_ne.exp();
        let new_lowering = debye_lowering_cm1(ne, t.value);
        let settled = (ln_ne - last_ln_ne).abs() < 1e-9;
        last_ln_ne = ln_ne;
        if settled {
            let density = Measured {
                value: ne,
                sigma: ne * variance.max(0.0).sqrt(),
            };
            let points = plot_points(
                pair,
                &fit,
                chi,
                lowering,
                |_| 0.0,
                |g| {
                    fit.intercepts.get(g).copied().unwrap_or(0.0)
                        - fit.intercepts.first().copied().unwrap_or(0.0)
                },
            );
            return Ok(finish(
                pair,
                SahaMode::Joint,
                t,
                density,
                lowering,
                &fit,
                stated,
                points,
            ));
        }
        lowering = new_lowering;
    }
    Err(PlotError::NoConvergence {
        iterations: MAX_ITERATIONS,
    })
}

/// n_e given: the ion's points corrected by ln(S(T)/n_e), one line through both
/// stages, iterated in T.
fn given_density(pair: StagePair<'_>, density_cm3: f64) -> Result<SahaBoltzmannFit, PlotError> {
    let chi = pair.neutral.ionization_cm1;
    // Start from the neutral's own slope when it has one, else 10 000 K.
    let mut t_k = boltzmann_fit(pair.neutral.species, pair.neutral_lines)
        .map(|f| f.temperature_k.value)
        .unwrap_or(10_000.0);
    for _ in 0..MAX_ITERATIONS {
        let lowering = debye_lowering_cm1(density_cm3, t_k);
        let correction = ln_saha_factor_cm3(t_k) - density_cm3.ln();
        let (mut points, stated_n) = weighted(pair.neutral_lines, |l| l.upper_energy_cm1);
        let (ion, stated_i) = weighted(pair.ion_lines, |l| l.upper_energy_cm1 + chi - lowering);
        points.extend(ion.into_iter().map(|p| WeightedPoint {
            y: p.y - correction,
            ..p
        }));
        let stated = stated_n && stated_i;
        let fit = fit_parallel_lines(&[&points], scale(stated))?;
        let t = temperature(fit.slope, fit.slope_sigma())?;
        if (t.value - t_k).abs() < 1e-9 * t_k {
            let density = Measured {
                value: density_cm3,
                sigma: 0.0,
            };
            let plot = plot_points(pair, &fit, chi, lowering, |_| correction, |_| 0.0);
            return Ok(finish(
                pair,
                SahaMode::GivenDensity {
                    density_cm3,
                    sigma_cm3: 0.0,
                },
                t,
                density,
                lowering,
                &fit,
                stated,
                plot,
            ));
        }
        // Damped step: the T^{3/2} of the correction makes the plain iteration
        // overshoot when the stages span little energy.
        t_k = 0.5 * (t_k + t.value.clamp(0.5 * t_k, 2.0 * t_k));
    }
    Err(PlotError::NoConvergence {
        iterations: MAX_ITERATIONS,
    })
}

/// T given: slope held at −c₂/T, one intercept per stage; ln n_e = ln S(T) − (a₁ − a₀).
fn given_temperature(
    pair: StagePair<'_>,
    temperature_k: f64,
) -> Result<SahaBoltzmannFit, PlotError> {
    let chi = pair.neutral.ionization_cm1;
    let slope = -SECOND_RADIATION_CM_K / temperature_k;
    let (neutral, stated_n) = weighted(pair.neutral_lines, |l| l.upper_energy_cm1);
    let mut lowering = 0.0;
    let mut last_ln_ne = f64::NAN;
    for _ in 0..MAX_ITERATIONS {
        let (ion, stated_i) = weighted(pair.ion_lines, |l| l.upper_energy_cm1 + chi - lowering);
        let stated = stated_n && stated_i;
        let fit = fit_intercepts(&[&neutral, &ion], slope, scale(stated))?;
        let (a0, a1) = match fit.intercepts.as_slice() {
            [a0, a1] => (*a0, *a1),
            _ => return Err(PlotError::NoConvergence { iterations: 0 }),
        };
        let ln_ne = ln_saha_factor_cm3(temperature_k) - (a1 - a0);
        let ne = ln_ne.exp();
        if (ln_ne - last_ln_ne).abs() < 1e-9 {
            let sigma = ne * (fit.variance(0, 0) + fit.variance(1, 1)).sqrt();
            let t = Measured {
                value: temperature_k,
                sigma: 0.0,
            };
            let density = Measured { value: ne, sigma };
            let plot = plot_points(
                pair,
                &fit,
                chi,
                lowering,
                |_| 0.0,
                |g| fit.intercepts.get(g).copied().unwrap_or(0.0) - a0,
            );
            return Ok(finish(
                pair,
                SahaMode::GivenTemperature {
                    temperature_k,
                    sigma_k: 0.0,
                },
                t,
                density,
                lowering,
                &fit,
                stated,
                plot,
            ));
        }
        last_ln_ne = ln_ne;
        lowering = debye_lowering_cm1(ne, temperature_k);
    }
    Err(PlotError::NoConvergence {
        iterations: MAX_ITERATIONS,
    })
}

/// The points as drawn: the ion's at x* = E + χ − Δχ, y* = y − `ion_correction`
/// − `offset(1)` (so that they fall on the neutral's line); residuals from it.
fn plot_points(
    pair: StagePair<'_>,
    fit: &LineFit,
    chi: f64,
    lowering: f64,
    ion_correction: impl Fn(usize) -> f64,
    offset: impl Fn(usize) -> f64,
) -> Vec<PlotPoint> {
    let a0 = fit.intercepts.first().copied().unwrap_or(0.0);
    let stage = |lines: &[LineData], group: usize| -> Vec<PlotPoint> {
        lines
            .iter()
            .map(|l| {
                let x = if group == 0 {
                    l.upper_energy_cm1
                } else {
                    l.upper_energy_cm1 + chi - lowering
                };
                let shift = if group == 0 {
                    0.0
                } else {
                    ion_correction(group) + offset(group)
                };
                let y = l.ordinate() - shift;
                PlotPoint {
                    line: l.line,
                    species: l.species,
                    x_cm1: x,
                    y,
                    y_sigma: l.ordinate_sigma(),
                    residual: y - a0 - fit.slope * x,
                }
            })
            .collect()
    };
    let mut points = stage(pair.neutral_lines, 0);
    points.extend(stage(pair.ion_lines, 1));
    points
}

#[allow(clippy::too_many_arguments)]
fn finish(
    pair: StagePair<'_>,
    mode: SahaMode,
    temperature_k: Measured,
    density_cm3: Measured,
    lowering_cm1: f64,
    fit: &LineFit,
    stated: bool,
    points: Vec<PlotPoint>,
) -> SahaBoltzmannFit {
    let t = temperature_k.value;
    let u0 = pair.neutral.partition_function(t, lowering_cm1);
    let u1 = pair.ion.partition_function(t, 2.0 * lowering_cm1);
    let kt_cm1 = t / SECOND_RADIATION_CM_K;
    let ionization_ratio = (ln_saha_factor_cm3(t) - density_cm3.value.ln()
        + (u1.value / u0.value).ln()
        - (pair.neutral.ionization_cm1 - lowering_cm1) / kt_cm1)
        .exp();
    SahaBoltzmannFit {
        neutral: pair.neutral.species,
        ion: pair.ion.species,
        mode,
        temperature_k,
        density_cm3,
        ionization_cm1: pair.neutral.ionization_cm1,
        lowering_cm1,
        partition: [u0, u1],
        ionization_ratio,
        lines: [pair.neutral_lines.len(), pair.ion_lines.len()],
        reduced_chi_square: fit.reduced_chi_square(),
        stated_weights: stated,
        points,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn saha_factor_is_the_textbook_constant() {
        // Griem 1997 (Principles of Plasma Spectroscopy, eq. 6.14) and every plasma
        // text: 2(2π m_e kT/h²)^{3/2} = 4.83×10¹⁵ T^{3/2} cm⁻³ (T in K).
        let at_one_kelvin = ln_saha_factor_cm3(1.0).exp();
        assert!((at_one_kelvin / 4.829e15 - 1.0).abs() < 1e-3);
        let ratio = (ln_saha_factor_cm3(10_000.0) - ln_saha_factor_cm3(1.0)).exp();
        assert!((ratio - 1e6).abs() < 1e-3);
    }

    #[test]
    fn debye_lowering_is_the_textbook_value() {
        // Griem 1964 eq. 5-19 / common practice: Δχ ≈ 2.09×10⁻⁸ (n_e/T)^{1/2} eV,
        // so 1e17 cm⁻³ at 10 000 K lowers the limit by 0.066 eV (532 cm⁻¹).
        let lowering_ev = debye_lowering_cm1(1e17, 1e4) / EV_CM1;
        assert!(
            (lowering_ev - 2.0866e-8 * (1e13f64).sqrt()).abs() < 1e-4,
            "{lowering_ev}"
        );
        assert_eq!(debye_lowering_cm1(0.0, 1e4), 0.0);
    }
}
