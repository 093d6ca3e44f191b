//! termsight: term analysis of atomic spectra.
//!
//! A measured line list goes in; out come ranked assignments of each line to a
//! transition of a known species (with the probability that the match is a chance
//! coincidence), optimised level energies, and the Slater parameters (direct F^k,
//! exchange G^k, spin–orbit ζ, configuration energies E_av) of a level model fitted
//! to those levels.
//!
//! # Overview
//!
//! Data flows one way: read → model → predict → match → refine → report.
//!
//! - [`units`]: wavelengths, wavenumbers, energies; air↔vacuum; uncertainty propagation.
//! - [`notation`]: configurations, terms, J values and species labels.
//! - [`linelist`]: reading measured line lists.
//! - [`levels`]: level tables (embedded reference levels), Ritz predictions, level optimisation.
//! - [`angular`]: 3j and 6j symbols, Condon–Shortley c^k coefficients.
//! - [`structure`]: the determinantal / LS intermediate-coupling level model.
//! - [`radial`]: Hartree–Fock radial wavefunctions, Slater, spin–orbit and dipole
//!   integrals, and starting level models from them.
//! - [`transitions`]: E1 selection rules, line strengths, gf and A values.
//! - [`plasma`]: predicted line intensities, the excitation temperature (Boltzmann
//!   plot), temperature and electron density across stages (Saha–Boltzmann), Stark
//!   widths and the LTE check.
//! - [`assign`]: candidate search, ranking by likelihood, chance-coincidence probabilities, blends, species verdicts.
//! - [`fit`]: least-squares fits of model parameters to observed levels.
//! - [`report`]: terminal tables, CSV, JSON, SVG figures and the HTML page (return
//!   strings or write into any `io::Write`, never open files).
//! - [`cli`]: the command-line front end; the only module that reads or writes files.
//!
//! Energies are in cm⁻¹ throughout unless a name says otherwise (`_hartree`, `_ev`).
#![deny(missing_docs)]

pub mod angular;
pub mod assign;
pub mod cli;
pub mod fit;
#[doc(hidden)]
pub mod fuzzing;
pub mod levels;
pub mod linelist;
pub mod location;
pub mod notation;
pub mod plasma;
pub mod radial;
pub mod report;
pub mod structure;
pub mod transitions;
pub mod units;
