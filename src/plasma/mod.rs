//! Plasma physics from line intensities: predicted relative intensities of lines in
//! a plasma in local thermodynamic equilibrium of its excited levels, the excitation
//! temperature (Boltzmann plot), temperature and electron density across two
//! ionisation stages (Saha–Boltzmann plot), electron density from the Stark widths of
//! Hα and Hβ, and the McWhirter check of local thermodynamic equilibrium.
//!
//! Pure computation: the lines come in as values, the results go out as values;
//! reading is in [`crate::cli`], writing in [`crate::report`].
//!
//! - [`intensity`]: I ∝ g_k A_ki exp(−E_k/kT) (photon counts) or that times σ
//!   (energy), with [`IntensityUnits`] saying which.
//! - [`boltzmann`]: the Boltzmann plot of one species as the assignment uses it,
//!   fitted by weighted least squares for T_exc ± σ, its points kept
//!   ([`BoltzmannPoint`], [`BoltzmannFit`]).
//! - [`straight_line`]: weighted least-squares straight (and parallel) lines with
//!   covariance.
//! - [`ionization`]: ionisation energies with their source.
//! - [`partition`]: partition functions from the compiled level tables.
//! - [`saha`]: Boltzmann and Saha–Boltzmann fits across stages.
//! - [`stark`]: Stark widths of the Balmer lines.
//! - [`lte`]: the McWhirter criterion.
//! - [`diagnose`]: all of it, per element, for a set of assigned lines.

pub mod boltzmann;
pub mod diagnose;
pub mod intensity;
pub mod ionization;
pub mod lte;
pub mod partition;
pub mod saha;
pub mod stark;
pub mod straight_line;

pub use boltzmann::{BoltzmannFit, BoltzmannPoint, BoltzmannProblem, fit_boltzmann};
pub use intensity::{IntensityUnits, ln_relative_intensity, relative_intensity};
