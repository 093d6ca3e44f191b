//! Settings of a fit: how levels are weighted, how long to iterate, when to warn
//! about correlated parameters.

use serde::Serialize;

use super::FitError;

/// How the experimental levels are weighted.
///
/// Parametric fits of Slater parameters customarily weight every level alike: the
/// model's own shortcomings (configurations left out, effective operators left
/// out) move levels by far more than their measurement uncertainties, so weights
/// 1/u² would let the best-measured levels decide the fit while the model cannot
/// reproduce them to that precision anyway (common practice, no source). That is
/// the default. Weights from the table's uncertainties are there for fits where
/// the model is good to the level uncertainties.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Weighting {
    /// Every level counts the same: minimise Σ (E_exp − E_calc)².
    Equal,
    /// Minimise Σ (E_exp − E_calc)²/(u² + u_floor²), u the level's uncertainty.
    /// The floor keeps a level given with uncertainty 0 (the ground level, zero of
    /// the scale by definition) from getting infinite weight.
    Uncertainty {
        /// u_floor in cm⁻¹, > 0.
        floor_cm1: f64,
    },
}

impl Weighting {
    /// The factor 1/√(u² + u_floor²) (or 1) that multiplies a level's residual.
    pub fn factor(&self, uncertainty_cm1: f64) -> f64 {
        match *self {
            Weighting::Equal => 1.0,
            Weighting::Uncertainty { floor_cm1 } => {
                1.0 / (uncertainty_cm1 * uncertainty_cm1 + floor_cm1 * floor_cm1).sqrt()
            }
        }
    }
}

/// Settings of [`super::fit_levels`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitOptions {
    weighting: Weighting,
    max_evaluations: Option<usize>,
    correlation_warning: f64,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            weighting: Weighting::Equal,
            max_evaluations: None,
            correlation_warning: 0.95,
        }
    }
}

impl FitOptions {
    /// How levels are weighted. Default: [`Weighting::Equal`]. The floor of
    /// [`Weighting::Uncertainty`] must be a positive number.
    pub fn with_weighting(mut self, weighting: Weighting) -> Result<Self, FitError> {
        if let Weighting::Uncertainty { floor_cm1 } = weighting
            && !(floor_cm1.is_finite() && floor_cm1 > 0.0)
        {
            return Err(FitError::InvalidOption {
                problem: format!(
                    "the uncertainty floor must be a positive number of cm⁻¹, not {floor_cm1}"
                ),
            });
        }
        // Its square must be an ordinary number: 1e-300 squares to 0, giving a level
        // of zero uncertainty an infinite weight (the fit then never ends), and
        // 1e300 squares to infinity, giving every level zero weight.
        if let Weighting::Uncertainty { floor_cm1 } = weighting
            && !(1.0 / (floor_cm1 * floor_cm1)).is_normal()
        {
            return Err(FitError::InvalidOption {
                problem: format!(
                    "the uncertainty floor must lie between 1e-150 and 1e150 cm⁻¹, not {floor_cm1:e}"
                ),
            });
        }
        self.weighting = weighting;
        Ok(self)
    }

    /// Stop after this many evaluations of the levels (≥ 1). Default: 100 × (number
    /// of free parameters + 1), the rule of MINPACK's `lmder`.
    pub fn with_max_evaluations(mut self, evaluations: usize) -> Result<Self, FitError> {
        if evaluations == 0 {
            return Err(FitError::InvalidOption {
                problem: "the number of evaluations must be at least 1".into(),
            });
        }
        self.max_evaluations = Some(evaluations);
        Ok(self)
    }

    /// Warn about pairs of parameters whose correlation |ρ| exceeds this, in (0, 1).
    /// Default: 0.95.
    pub fn with_correlation_warning(mut self, threshold: f64) -> Result<Self, FitError> {
        if !(threshold > 0.0 && threshold < 1.0) {
            return Err(FitError::InvalidOption {
                problem: format!("the correlation threshold must lie in (0, 1), not {threshold}"),
            });
        }
        self.correlation_warning = threshold;
        Ok(self)
    }

    /// The weighting.
    pub fn weighting(&self) -> Weighting {
        self.weighting
    }

    /// The evaluation limit, if set.
    pub fn max_evaluations(&self) -> Option<usize> {
        self.max_evaluations
    }

    /// The correlation threshold.
    pub fn correlation_warning(&self) -> f64 {
        self.correlation_warning
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bad_settings_are_refused_with_the_allowed_range() {
        let o = FitOptions::default();
        let e = o
            .with_weighting(Weighting::Uncertainty { floor_cm1: 0.0 })
            .unwrap_err();
        assert!(e.to_string().contains("positive"), "{e}");
        assert!(o.with_max_evaluations(0).is_err());
        assert!(o.with_correlation_warning(1.0).is_err());
        assert!(o.with_correlation_warning(f64::NAN).is_err());
        assert_eq!(
            o.with_correlation_warning(0.9)
                .unwrap()
                .correlation_warning(),
            0.9
        );
    }

    #[test]
    fn the_floor_bounds_the_weight() {
        let w = Weighting::Uncertainty { floor_cm1: 0.01 };
        assert_eq!(w.factor(0.0), 100.0);
        assert!((w.factor(0.03) - 1.0 / 0.001f64.sqrt()).abs() < 1e-9);
        assert_eq!(Weighting::Equal.factor(0.0), 1.0);
    }
}
