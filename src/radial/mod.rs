//! Radial wavefunctions and radial integrals from first principles.
//!
//! (module documentation written below once the pieces are in place)

pub mod average;
pub mod energy;
pub mod grid;
pub mod hartree_fock;
pub mod hydrogenic;
pub mod integrals;
pub mod local_exchange;
pub mod numerov;
mod operator;
pub mod scf;
pub mod slater;
mod three_j;

pub use grid::{GridSpec, RadialGrid};
pub use hartree_fock::hartree_fock;
pub use integrals::{IntegralKind, RadialIntegral, ScaleFactors, radial_integrals};
pub use local_exchange::local_exchange;
pub use scf::{
    Method, Orbital, ScfObserver, ScfOptions, ScfProgress, ScfSolution, ScfStage, Silent,
    screened_hydrogenic,
};

/// Errors of the radial solver.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum RadialError {
    /// A grid that cannot be built or does not fit the data.
    #[error("radial grid: {problem}")]
    InvalidGrid {
        /// What is wrong.
        problem: String,
    },
    /// An orbital with impossible quantum numbers or charge.
    #[error("orbital n = {n}, l = {l}: {problem}")]
    InvalidOrbital {
        /// Principal quantum number.
        n: u32,
        /// Orbital angular momentum.
        l: u32,
        /// What is wrong.
        problem: String,
    },
    /// No bound state with the requested node count was found.
    #[error("no bound state n = {n}, l = {l}: {problem}")]
    NoBoundState {
        /// Principal quantum number.
        n: u32,
        /// Orbital angular momentum.
        l: u32,
        /// What went wrong.
        problem: String,
    },
    /// Settings out of their allowed range.
    #[error("{problem}")]
    InvalidSettings {
        /// What is wrong, with the allowed range.
        problem: String,
    },
    /// A configuration that cannot be computed.
    #[error("configuration {configuration}: {problem}")]
    InvalidConfiguration {
        /// The configuration as printed.
        configuration: String,
        /// What is wrong.
        problem: String,
    },
    /// The self-consistent field did not converge.
    #[error(
        "the self-consistent field did not converge in {iterations} iterations (residual {residual:.2e})"
    )]
    NotConverged {
        /// Iterations done.
        iterations: u32,
        /// The last residual.
        residual: f64,
    },
    /// An orbital came out unbound (ε ≥ 0).
    #[error("orbital {orbital} is not bound (ε = {energy_hartree:.6} hartree)")]
    Unbound {
        /// The orbital label.
        orbital: String,
        /// Its energy, hartree.
        energy_hartree: f64,
    },
}
