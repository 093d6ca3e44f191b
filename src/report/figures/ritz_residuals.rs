//! Residuals of the level optimisation: observed − Ritz wavenumber of every line, in
//! units of its standard uncertainty, against the wavenumber.

use super::FigureError;
use super::scatter::{Marker, Point, Scatter, scatter_svg};
use crate::levels::optimize::OptimizationReport;

/// One line's residual.
#[derive(Debug, Clone, PartialEq)]
pub struct RitzResidual {
    /// The spectrum.
    pub species: String,
    /// Observed vacuum wavenumber, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// (observed − Ritz)/u.
    pub residual_sigma: f64,
    /// Flagged as an outlier.
    pub outlier: bool,
}

/// What the residual figure of `optimize` shows.
#[derive(Debug, Clone, PartialEq)]
pub struct RitzResiduals {
    /// The input, for the title.
    pub source: String,
    /// The outlier limit, standard uncertainties.
    pub outlier_sigma: f64,
    /// The lines.
    pub lines: Vec<RitzResidual>,
}

/// The residuals of every line of an optimisation.
pub fn ritz_residuals_from(
    source: &str,
    report: &OptimizationReport,
    outlier_sigma: f64,
) -> RitzResiduals {
    let lines = report
        .species
        .iter()
        .flat_map(|s| {
            s.lines.iter().map(|l| RitzResidual {
                species: s.species.to_string(),
                wavenumber_cm1: l.observed_cm1,
                residual_sigma: l.fit.residual_sigma,
                outlier: l.fit.outlier,
            })
        })
        .collect();
    RitzResiduals {
        source: source.to_string(),
        outlier_sigma,
        lines,
    }
}

/// Draw the residuals as SVG: points, outliers as crosses, the outlier limits dashed.
pub fn ritz_residuals_svg(data: &RitzResiduals) -> Result<String, FigureError> {
    let points: Vec<Point> = data
        .lines
        .iter()
        .map(|l| Point {
            x: l.wavenumber_cm1,
            y: l.residual_sigma,
            marker: if l.outlier {
                Marker::Cross
            } else {
                Marker::Dot
            },
        })
        .collect();
    let mut species: Vec<&str> = Vec::new();
    for l in &data.lines {
        if !species.contains(&l.species.as_str()) {
            species.push(&l.species);
        }
    }
    let outliers = data.lines.iter().filter(|l| l.outlier).count();
    let spec = Scatter {
        title: format!("Observed − Ritz wavenumbers: {}", data.source),
        note: format!(
            "{} lines of {} used in the level optimisation, {outliers} outliers",
            data.lines.len(),
            species.join(", ")
        ),
        x_desc: "observed vacuum wavenumber (cm⁻¹)",
        y_desc: "(σ_obs − σ_Ritz)/u (standard uncertainties)",
        x_digits: 0,
        limit: Some(data.outlier_sigma),
        legend: vec![
            (Marker::Dot, "line".to_string()),
            (
                Marker::Cross,
                format!(
                    "outlier (beyond ±{}, dashed)",
                    super::style::tick(data.outlier_sigma, 2)
                ),
            ),
        ],
    };
    scatter_svg(&spec, &points)
}
