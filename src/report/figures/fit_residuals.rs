//! Residuals of a level-model fit: E_exp − E_calc of every fitted level against its
//! energy.

use super::FigureError;
use super::scatter::{Marker, Point, Scatter, scatter_svg};
use crate::fit::FitResult;
use crate::notation::Parity;

/// One level's residual.
#[derive(Debug, Clone, PartialEq)]
pub struct FitResidual {
    /// E_exp, cm⁻¹.
    pub energy_cm1: f64,
    /// E_exp − E_calc, cm⁻¹.
    pub difference_cm1: f64,
    /// Odd parity.
    pub odd: bool,
}

/// What the residual figure of `fit` shows.
#[derive(Debug, Clone, PartialEq)]
pub struct FitResiduals {
    /// The spectrum.
    pub species: String,
    /// The model and level sources, for the title.
    pub source: String,
    /// σ of the fit, cm⁻¹, when there are degrees of freedom.
    pub sigma_cm1: Option<f64>,
    /// The levels.
    pub levels: Vec<FitResidual>,
}

/// The residuals of a fit.
pub fn fit_residuals_from(source: &str, result: &FitResult) -> FitResiduals {
    FitResiduals {
        species: result.species.to_string(),
        source: source.to_string(),
        sigma_cm1: result.sigma_cm1,
        levels: result
            .levels
            .iter()
            .map(|l| FitResidual {
                energy_cm1: l.experimental.energy_cm1,
                difference_cm1: l.difference_cm1,
                odd: l.experimental.label.parity() == Parity::Odd,
            })
            .collect(),
    }
}

/// Draw the residuals as SVG: even levels as dots, odd as squares, ±σ of the fit dashed.
pub fn fit_residuals_svg(data: &FitResiduals) -> Result<String, FigureError> {
    let points: Vec<Point> = data
        .levels
        .iter()
        .map(|l| Point {
            x: l.energy_cm1,
            y: l.difference_cm1,
            marker: if l.odd { Marker::Square } else { Marker::Dot },
        })
        .collect();
    let sigma = data
        .sigma_cm1
        .map(|s| {
            format!(
                "σ of the fit {} cm⁻¹ (dashed at ±σ)",
                super::style::tick(s, 3)
            )
        })
        .unwrap_or_else(|| "no degrees of freedom for σ".to_string());
    let spec = Scatter {
        title: format!("E_exp − E_calc of {}: {}", data.species, data.source),
        note: format!("{} levels fitted; {sigma}", data.levels.len()),
        x_desc: "experimental level energy E_exp (cm⁻¹)",
        y_desc: "E_exp − E_calc (cm⁻¹)",
        x_digits: 0,
        limit: data.sigma_cm1.filter(|s| *s > 0.0),
        legend: vec![
            (Marker::Dot, "even level".to_string()),
            (Marker::Square, "odd level".to_string()),
        ],
    };
    scatter_svg(&spec, &points)
}
