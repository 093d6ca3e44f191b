//! Plasma conditions from assigned lines: excitation temperature (Boltzmann plot),
//! temperature and electron density across two ionisation stages (Saha–Boltzmann
//! plot), electron density from the Stark widths of Hα and Hβ, and the McWhirter
//! check of local thermodynamic equilibrium.
//!
//! Pure computation: the lines come in as values, the results go out as values;
//! reading the assign CSV is in [`crate::cli`], writing in [`crate::report`].
//!
//! - [`straight_line`]: weighted least-squares straight (and parallel) lines with
//!   covariance.
//! - [`ionization`]: ionisation energies with their source.
//! - [`partition`]: partition functions from the compiled level tables.
//! - [`saha`]: Boltzmann and Saha–Boltzmann fits.
//! - [`stark`]: Stark widths of the Balmer lines.
//! - [`lte`]: the McWhirter criterion.
//! - [`diagnose`]: all of it, per element, for a set of assigned lines.

pub mod diagnose;
pub mod ionization;
pub mod lte;
pub mod partition;
pub mod saha;
pub mod stark;
pub mod straight_line;
