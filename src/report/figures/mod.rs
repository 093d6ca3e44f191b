//! Figures as SVG: each from a plain data type filled from what a command computed,
//! each with axes and units, a title that names its input, and a legend. Nothing
//! tells two kinds of mark apart by colour alone: line style, width or marker shape
//! differ too, so the figures read in black and white.
//!
//! | figure | data | from |
//! |---|---|---|
//! | [`stick_spectrum_svg`] | [`StickSpectrum`] | `assign` |
//! | [`term_diagram_svg`] | [`TermDiagram`] | `optimize` |
//! | [`boltzmann_svg`] | [`BoltzmannPlot`] | `assign` (its Boltzmann fit, [`crate::plasma::boltzmann`]) |
//! | [`ritz_residuals_svg`] | [`RitzResiduals`] | `optimize` |
//! | [`fit_residuals_svg`] | [`FitResiduals`] | `fit` |
//! | [`model_spectrum_svg`] | [`ModelSpectrumFigure`] | `lines` |
//!
//! The charts are drawn with `plotters` (its SVG backend: text stays text); the term
//! diagram is written by hand, since no chart crate draws levels in columns joined
//! by transitions. A figure of more lines than its plot area has pixel columns is
//! binned ([`binning`]) and says so in a note under its title.

pub mod binning;
mod boltzmann;
mod boltzmann_data;
mod fit_residuals;
mod model_spectrum;
mod ritz_residuals;
mod scatter;
mod stick_spectrum;
mod style;
pub use style::escape;
mod term_diagram;

pub use boltzmann::boltzmann_svg;
pub use boltzmann_data::{
    BoltzmannError, BoltzmannPlot, SECOND_RADIATION_CONSTANT_CM_K, boltzmann_from_records,
    boltzmann_from_report,
};
pub use fit_residuals::{FitResidual, FitResiduals, fit_residuals_from, fit_residuals_svg};
pub use model_spectrum::{
    ModelSpectrumFigure, ModelStick, model_spectrum_from, model_spectrum_svg,
};
pub use ritz_residuals::{RitzResidual, RitzResiduals, ritz_residuals_from, ritz_residuals_svg};
pub use stick_spectrum::{
    AssignedStick, ObservedStick, PredictedStick, SpectrumAxis, StickSpectrum, StickWindow,
    stick_spectrum_from, stick_spectrum_svg,
};
pub use term_diagram::{
    DiagramLevel, DiagramTransition, ExtraLevel, TermDiagram, term_diagram_from, term_diagram_svg,
};
/// A figure could not be drawn.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FigureError {
    /// Nothing to draw: what is missing.
    #[error("nothing to draw: {0}")]
    Empty(String),
    /// The chart library refused (a range of zero width, …).
    #[error("drawing the figure: {0}")]
    Drawing(String),
}

impl FigureError {
    /// Wrap an error of the chart library.
    pub(crate) fn drawing(error: impl std::fmt::Display) -> FigureError {
        FigureError::Drawing(error.to_string())
    }
}
