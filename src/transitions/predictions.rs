//! A model's lines as a [`Predictions`] set for the matcher.

use super::spectrum::{MODEL_RULES, ModelSpectrum};
use crate::levels::{Level, PredictedLine, PredictionError, Predictions, SpeciesOrigin};
use crate::notation::Species;

/// Lines weaker than this fraction of the strongest are numerical zeros (a line
/// the model gives no strength at all).
const NO_STRENGTH: f64 = 1e-12;

/// The lines of `spectrum` as predictions of `species` for [`crate::assign`].
///
/// - Levels carry their unique model labels and their energies on the model's own
///   scale (as `termsight levels` prints them), with uncertainty 0; `source` reads `model <origin>`.
/// - Lines carry uncertainty 0: the model's uncertainty enters once per species,
///   `model_uncertainty_cm1`, which the matcher adds in quadrature.
/// - The relative strength of each line is its gf value.
/// - Lines with no strength in the model (S below 10⁻¹² of the strongest line) are
///   left out; every other line is kept, flagged as [`super::ModelLine::flags`] says.
pub fn model_predictions(
    species: Species,
    spectrum: &ModelSpectrum,
    origin: &str,
    model_uncertainty_cm1: f64,
) -> Result<Predictions, PredictionError> {
    let levels: Vec<Level> = spectrum
        .levels
        .iter()
        .map(|l| Level {
            species,
            label: l.label.clone(),
            energy_cm1: l.energy_cm1,
            uncertainty_cm1: 0.0,
            source: format!("model {origin}"),
            energy_status: Default::default(),
        })
        .collect();
    let strongest = spectrum
        .lines
        .iter()
        .map(|l| l.strength)
        .fold(0.0, f64::max);
    let lines: Vec<PredictedLine> = spectrum
        .lines
        .iter()
        .filter(|l| l.strength > NO_STRENGTH * strongest)
        .map(|l| PredictedLine {
            species,
            lower: l.lower,
            upper: l.upper,
            wavenumber_cm1: l.wavenumber_cm1,
            uncertainty_cm1: 0.0,
            rules: MODEL_RULES,
            flags: l.flags,
            relative_strength: Some(l.gf),
            transition_probability: None,
            bracketed_level: false,
            listing: Default::default(),
        })
        .collect();
    Predictions::new(
        levels,
        lines,
        vec![SpeciesOrigin {
            species,
            origin: format!(
                "level model {origin}, lines with gf from its eigenvectors, model \
                 uncertainty {model_uncertainty_cm1} cm⁻¹"
            ),
            model_uncertainty_cm1,
        }],
    )
}
