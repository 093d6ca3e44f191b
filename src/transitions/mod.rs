//! Electric-dipole (E1) lines of a level model: line strengths from the model's
//! eigenvectors, gf and A values, flags, and predicted line lists for the matcher.
//!
//! A spectroscopist facing a poorly known species has a level model but few
//! levels: this module says where its lines should lie and how strong they are.
//!
//! # Overview
//!
//! - [`DipoleOperator::build`] takes a [`LevelStructure`](crate::structure::LevelStructure) with configurations of
//!   both parities and builds, once, the reduced dipole matrix ⟨γLSJ‖D‖γ'L'S'J'⟩
//!   between the LS states of every (even J, odd J') pair, as one coefficient matrix
//!   per radial dipole integral P(a,b) = ⟨a|r|b⟩ ([`DipoleIntegral`]); see
//!   [`operator`] for the method and its sources.
//! - [`model_spectrum`] evaluates it for parameter values and dipole integrals:
//!   every level with a unique LS label ([`unique_labels`]) and every E1 line
//!   ([`ModelLine`]) with its line strength S (e²a₀²), gf, A (s⁻¹) and flags.
//!   Intermediate coupling and configuration interaction enter through the
//!   eigenvectors, so an intercombination line gets exactly the strength the
//!   model's spin–orbit mixing lends it, and a two-electron jump the strength its
//!   configuration mixing lends it.
//! - [`rates`]: gf and A from S and σ, with the conversion constants derived from
//!   CODATA 2018.
//! - [`model_predictions`] turns a spectrum into a [`crate::levels::Predictions`]
//!   set, which [`crate::assign`] matches against observed lines.
//!
//! Flags use the vocabulary of [`crate::levels::e1`]: `intercombination` (the
//! labels' spins differ), `L-forbidden`, `jump-forbidden` (one electron with
//! Δl ≠ ±1), `two-electron-jump`; a line with none is `LS-allowed`.
//!
//! ```
//! use termsight::notation::Configuration;
//! use termsight::structure::{LevelStructure, Radial};
//! use termsight::transitions::{DipoleOperator, model_spectrum};
//! // 3s² and 3s3p in pure LS (ζ = 0), ⟨3s|r|3p⟩ = 2.5 bohr: the strongest line is
//! // the resonance line 3s² ¹S₀ – 3s3p ¹P°₁.
//! let configs: Vec<Configuration> = vec!["3s2".parse().unwrap(), "3s.3p".parse().unwrap()];
//! let structure = LevelStructure::build(&configs, &[]).unwrap();
//! let values: Vec<f64> = structure
//!     .parameters()
//!     .iter()
//!     .map(|p| match p.radial {
//!         Radial::Average => if p.scope == termsight::structure::Scope::Configuration(0) { 0.0 } else { 30_000.0 },
//!         Radial::Exchange { .. } => 9_000.0,
//!         _ => 0.0,
//!     })
//!     .collect();
//! let operator = DipoleOperator::build(&structure).unwrap();
//! let spectrum = model_spectrum(&structure, &operator, &values, &[2.5]).unwrap();
//! let singlet = spectrum.lines.iter().max_by(|a, b| a.gf.total_cmp(&b.gf)).unwrap();
//! assert_eq!(spectrum.levels[singlet.upper].label.to_string(), "3s.3p 1P° 1");
//! // S = |⟨3s² ¹S‖D‖3s3p ¹P⟩|² = 2·|P|² for the ns² – nsnp resonance line.
//! assert!((singlet.strength - 2.0 * 2.5 * 2.5).abs() < 1e-9);
//! ```

pub mod operator;
mod predictions;
pub mod rates;
mod spectrum;

pub use operator::{DipoleOperator, DipoleProgress, IntegralUse, JPair, PairValue};
pub use predictions::model_predictions;
pub use rates::gf_from_ga;
pub use spectrum::{
    LabelledLevel, ModelLine, ModelSpectrum, model_spectrum, model_spectrum_with_pairs,
    unique_labels,
};

pub use crate::structure::DipoleIntegral;
use crate::structure::StructureError;

/// Lines that cannot be predicted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum TransitionError {
    /// The model lacks a dipole integral that its lines need.
    #[error(
        "the model has no value for the dipole integral {integral} (⟨{a}|r|{b}⟩ in bohr), \
         which the lines between {even} and {odd} need; give it in the [dipole] table, \
         e.g. \"{integral}\" = 2.0 (`termsight radial` computes it)",
        a = integral.a,
        b = integral.b
    )]
    MissingDipole {
        /// The integral.
        integral: DipoleIntegral,
        /// An even configuration whose lines need it.
        even: String,
        /// An odd configuration whose lines need it.
        odd: String,
    },
    /// A dipole integral that is NaN or infinite.
    #[error("the dipole integral {integral} is not a finite number ({value})")]
    NotFinite {
        /// The integral.
        integral: DipoleIntegral,
        /// Its value.
        value: f64,
    },
    /// Wrong number of dipole values.
    #[error("{found} dipole integrals given, the operator needs {expected}")]
    DipoleCount {
        /// Integrals of the operator.
        expected: usize,
        /// Values given.
        found: usize,
    },
    /// More spin-orbitals in the two parities together than a determinant holds.
    #[error(
        "the configurations of both parities have {spin_orbitals} open spin-orbitals \
         together; at most {} fit",
        crate::structure::MAX_SPIN_ORBITALS
    )]
    TooManyOrbitals {
        /// Number of spin-orbitals.
        spin_orbitals: usize,
    },
    /// The level model could not be evaluated.
    #[error(transparent)]
    Structure(#[from] StructureError),
}

#[cfg(test)]
mod tests;
