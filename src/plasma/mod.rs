//! Plasma physics for line intensities: predicted relative intensities of lines
//! in a plasma in local thermodynamic equilibrium of its excited levels, and the
//! excitation temperature from a Boltzmann plot.
//!
//! - [`intensity`]: I ∝ g_k A_ki exp(−E_k/kT) (photon counts) or that times σ
//!   (energy), with [`IntensityUnits`] saying which.
//! - [`boltzmann`]: the Boltzmann plot ln(I/(g_k A_ki)) against E_k (photon units;
//!   ln(Iλ/(g_k A_ki)) in energy units), fitted by weighted least squares for
//!   T_exc ± σ, its points kept ([`BoltzmannPoint`], [`BoltzmannFit`]).
//!
//! Pure computation: no I/O.

pub mod boltzmann;
pub mod intensity;

pub use boltzmann::{BoltzmannFit, BoltzmannPoint, BoltzmannProblem, fit_boltzmann};
pub use intensity::{IntensityUnits, ln_relative_intensity, relative_intensity};
