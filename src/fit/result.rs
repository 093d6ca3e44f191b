//! What a fit gives: fitted parameters with standard errors, correlations, the
//! standard deviation of the fit, and every level with its residual.

use serde::Serialize;

use crate::levels;
use crate::notation::Species;
use crate::structure::ParameterId;
use crate::structure::model::LevelModel;

use super::matching::{MatchedBy, UnmatchedReason};
use super::options::Weighting;

/// How a parameter took part in the fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum ParameterKind {
    /// Adjusted.
    Free,
    /// Held at its value.
    Fixed,
    /// ratio × another parameter.
    Tied {
        /// Full name of the parameter it follows.
        to: String,
        /// The ratio.
        ratio: f64,
    },
}

/// One parameter after the fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FittedParameter {
    /// Which parameter.
    #[serde(skip)]
    pub id: ParameterId,
    /// Full name, `G1(1s,2p)@1s.2p`.
    pub name: String,
    /// Free, fixed or tied.
    #[serde(flatten)]
    pub kind: ParameterKind,
    /// True when the fit moved it: a free parameter, or one tied to a free one.
    pub adjusted: bool,
    /// Starting value, cm⁻¹.
    pub initial_cm1: f64,
    /// Fitted value, cm⁻¹ (the starting value for a fixed parameter).
    pub fitted_cm1: f64,
    /// Standard error, cm⁻¹, for free and tied parameters when the fit has degrees
    /// of freedom; `None` otherwise.
    pub standard_error_cm1: Option<f64>,
}

impl FittedParameter {
    /// fitted/initial, when the initial value is not 0.
    pub fn ratio_to_initial(&self) -> Option<f64> {
        (self.initial_cm1 != 0.0).then(|| self.fitted_cm1 / self.initial_cm1)
    }
}

/// One LS component of a computed level, by its label.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Share {
    /// The LS basis state, `1s.2p 3P°`.
    pub label: String,
    /// 100·|⟨γLSJ|ψ⟩|².
    pub percent: f64,
}

/// An experimental level with its computed counterpart.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FittedLevel {
    /// The experimental level as read.
    pub experimental: levels::Level,
    /// The computed energy at the fitted parameters, cm⁻¹.
    pub calculated_cm1: f64,
    /// E_exp − E_calc, cm⁻¹.
    pub difference_cm1: f64,
    /// The factor the level's residual was multiplied by in the fit (1 without
    /// weights).
    pub weight: f64,
    /// How it was matched.
    pub matched_by: MatchedBy,
    /// LS composition of the computed state, largest first (components of at least
    /// 0.01 %).
    pub composition: Vec<Share>,
    /// Landé g of the computed state.
    pub lande_g: f64,
}

/// An experimental level of the species that no computed state was given to.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UnmatchedLevel {
    /// The level as read.
    pub experimental: levels::Level,
    /// Why.
    pub reason: UnmatchedReason,
}

/// Correlation coefficients of the free parameters (one per group of tied
/// parameters, named by its leader): ρ_ij = C_ij/√(C_ii C_jj) of the covariance
/// matrix C.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Correlation {
    /// Full names of the free parameters, in matrix order.
    pub parameters: Vec<String>,
    /// The symmetric matrix, rows in the order of `parameters`.
    pub matrix: Vec<Vec<f64>>,
}

impl Correlation {
    /// The pairs (i < j) with |ρ_ij| above `threshold`, largest first.
    pub fn above(&self, threshold: f64) -> Vec<(String, String, f64)> {
        let mut pairs = Vec::new();
        for (i, row) in self.matrix.iter().enumerate() {
            for (j, &rho) in row.iter().enumerate().skip(i + 1) {
                if rho.abs() > threshold {
                    pairs.push((self.parameters[i].clone(), self.parameters[j].clone(), rho));
                }
            }
        }
        pairs.sort_by(|a, b| b.2.abs().total_cmp(&a.2.abs()));
        pairs
    }
}

/// How the iterations ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Convergence {
    /// The Levenberg–Marquardt tolerances were met (or the residuals vanished).
    Converged,
    /// The evaluation limit was reached first: the values are the best found.
    StoppedAtLimit,
    /// Nothing was free: the levels were computed, not fitted.
    NothingToFit,
}

/// The outcome of [`super::fit_levels`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitResult {
    /// The spectrum.
    pub species: Species,
    /// How the levels were weighted.
    pub weighting: Weighting,
    /// Every parameter of the model, in model order.
    pub parameters: Vec<FittedParameter>,
    /// Correlations of the free parameters.
    pub correlation: Correlation,
    /// The threshold above which correlations are warned about.
    pub correlation_warning: f64,
    /// Matched levels, in the order of the level table.
    pub levels: Vec<FittedLevel>,
    /// Levels of the species that no computed state matches.
    pub unmatched: Vec<UnmatchedLevel>,
    /// Levels of other species in the table (not used).
    pub other_species_levels: usize,
    /// Number of free parameters (groups of tied parameters count once).
    pub free_parameters: usize,
    /// Matched levels − free parameters.
    pub degrees_of_freedom: usize,
    /// Standard deviation of the fit, σ = √(Σ(E_exp − E_calc)²/(N − p)), cm⁻¹;
    /// `None` without degrees of freedom.
    pub sigma_cm1: Option<f64>,
    /// Root mean square of E_exp − E_calc over the matched levels, cm⁻¹.
    pub rms_cm1: f64,
    /// Σ w²(E_exp − E_calc)²/(N − p) with the weights of
    /// [`Weighting::Uncertainty`]; `None` for equal weights or without degrees of
    /// freedom.
    pub reduced_chi_square: Option<f64>,
    /// Levenberg–Marquardt iterations (Jacobians computed, the first at the
    /// starting values); 0 when nothing was free.
    pub iterations: usize,
    /// Evaluations of the levels.
    pub evaluations: usize,
    /// How the iterations ended.
    pub convergence: Convergence,
    /// Fits made: the first, and one more each time matching the levels afresh at
    /// the fitted values changed an assignment.
    pub passes: usize,
    /// False when the assignments still changed after the last pass.
    pub assignment_settled: bool,
}

impl FitResult {
    /// The pairs of free parameters correlated above the warning threshold.
    pub fn strong_correlations(&self) -> Vec<(String, String, f64)> {
        self.correlation.above(self.correlation_warning)
    }

    /// `model` with the fitted values, and the standard errors as the uncertainties
    /// of the adjusted parameters (free, or tied to a free one). Without degrees of
    /// freedom the standard errors are unknown and those uncertainties are removed
    /// (an old uncertainty beside a new value would mislead); parameters the fit
    /// did not move keep theirs.
    pub fn fitted_model(&self, model: &LevelModel) -> LevelModel {
        let mut fitted = model.clone();
        for parameter in &mut fitted.parameters {
            let Some(result) = self.parameters.iter().find(|p| p.id == parameter.id) else {
                continue;
            };
            parameter.value = result.fitted_cm1;
            if result.adjusted {
                parameter.uncertainty = result.standard_error_cm1;
            }
        }
        fitted
    }
}
