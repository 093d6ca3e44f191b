//! Finding the predicted lines within tolerance of an observed line by binary search.
//!
//! The tolerance of a pair is k·u_c with u_c = √(u_obs² + u_pred²), so it depends on
//! the predicted line. Searching the sorted predictions with the largest u_pred of
//! the whole set would make every window as wide as the worst-known line's; instead
//! the lines are split into classes whose uncertainties lie within a factor of two
//! (2^m ≤ u_pred < 2^(m+1), and a class for u_pred = 0), each kept sorted by
//! wavenumber. An observed line is searched in each class with that class's widest
//! window, then every line found is checked against its own tolerance. The cost is
//! O(C log N + found) per observed line for C classes (a few dozen at most), never
//! O(N).

use std::collections::BTreeMap;

use crate::levels::Predictions;

/// Predicted lines of one uncertainty class, sorted by wavenumber.
#[derive(Debug, Default)]
struct UncertaintyClass {
    /// Largest u_pred in the class, cm⁻¹.
    max_uncertainty_cm1: f64,
    /// Wavenumbers, cm⁻¹, ascending.
    wavenumbers: Vec<f64>,
    /// u_pred of each line (model uncertainty included), cm⁻¹.
    uncertainties: Vec<f64>,
    /// Index of each line in `Predictions::lines()`.
    lines: Vec<u32>,
}

/// A search structure over a [`Predictions`] set.
#[derive(Debug)]
pub(super) struct CandidateIndex {
    classes: Vec<UncertaintyClass>,
    /// Every wavenumber of the set, ascending (for density counts).
    all_wavenumbers: Vec<f64>,
}

/// A predicted line found within tolerance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Hit {
    /// Index in `Predictions::lines()`.
    pub line: usize,
    /// σ_obs − σ_pred, cm⁻¹.
    pub deviation_cm1: f64,
    /// √(u_obs² + u_pred²), cm⁻¹, model uncertainty included.
    pub combined_uncertainty_cm1: f64,
}

impl CandidateIndex {
    /// Build the index. Each line's uncertainty is its own combined in quadrature with
    /// the model uncertainty of its species.
    pub fn new(predictions: &Predictions) -> CandidateIndex {
        let model: Vec<_> = predictions
            .species()
            .iter()
            .map(|s| (s.species, s.model_uncertainty_cm1))
            .collect();
        let mut classes: BTreeMap<i32, UncertaintyClass> = BTreeMap::new();
        let lines = predictions.lines();
        for (index, line) in lines.iter().enumerate() {
            let model_u = model
                .iter()
                .find(|(s, _)| *s == line.species)
                .map_or(0.0, |(_, u)| *u);
            let u = line.uncertainty_cm1.hypot(model_u);
            let key = if u > 0.0 {
                u.log2().floor() as i32
            } else {
                i32::MIN
            };
            let class = classes.entry(key).or_default();
            class.max_uncertainty_cm1 = class.max_uncertainty_cm1.max(u);
            class.wavenumbers.push(line.wavenumber_cm1);
            class.uncertainties.push(u);
            class.lines.push(index as u32);
        }
        CandidateIndex {
            classes: classes.into_values().collect(),
            all_wavenumbers: lines.iter().map(|l| l.wavenumber_cm1).collect(),
        }
    }

    /// Every predicted line with |σ_obs − σ_pred| ≤ k·√(u_obs² + u_pred²), pushed
    /// onto `hits` (cleared first), in no particular order.
    pub fn search(&self, sigma_obs: f64, u_obs: f64, k: f64, hits: &mut Vec<Hit>) {
        hits.clear();
        if !(sigma_obs.is_finite() && u_obs.is_finite()) {
            return;
        }
        for class in &self.classes {
            let half_width = k * u_obs.hypot(class.max_uncertainty_cm1);
            let start = class
                .wavenumbers
                .partition_point(|&s| s < sigma_obs - half_width);
            let found = class
                .wavenumbers
                .iter()
                .zip(&class.uncertainties)
                .zip(&class.lines)
                .skip(start)
                .take_while(|((s, _), _)| **s <= sigma_obs + half_width);
            for ((&sigma, &u_pred), &line) in found {
                let deviation_cm1 = sigma_obs - sigma;
                let combined_uncertainty_cm1 = u_obs.hypot(u_pred);
                if deviation_cm1.abs() <= k * combined_uncertainty_cm1 {
                    hits.push(Hit {
                        line: line as usize,
                        deviation_cm1,
                        combined_uncertainty_cm1,
                    });
                }
            }
        }
    }

    /// Number of predicted lines with σ in [low, high].
    pub fn count_between(&self, low: f64, high: f64) -> usize {
        let first = self.all_wavenumbers.partition_point(|&s| s < low);
        let past = self.all_wavenumbers.partition_point(|&s| s <= high);
        past.saturating_sub(first)
    }

    /// Lowest and highest predicted wavenumber, if there is any line.
    pub fn span(&self) -> Option<(f64, f64)> {
        Some((
            *self.all_wavenumbers.first()?,
            *self.all_wavenumbers.last()?,
        ))
    }
}
