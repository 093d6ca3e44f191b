//! The intermediate-coupling level model: configurations and parameter values in,
//! levels out (energy, J, parity, LS composition, Landé g, dE/dP).
//!
//! # Overview
//!
//! - [`LevelStructure::build`] takes configurations (and which pairs of them
//!   interact) and builds, once, the LS basis of each parity and the coefficient
//!   matrix C_p of every parameter in every (parity, J) block, so that
//!   H = Σ_p P_p · C_p. It needs no parameter values.
//! - [`LevelStructure::parameters`] lists the parameters the configurations need
//!   ([`ParameterId`]: E_av, F^k, G^k, ζ, R^k with their orbitals), in a fixed
//!   order; [`required_parameters`] does the same without keeping the structure.
//! - [`LevelStructure::levels`] sums and diagonalises for given values: each
//!   [`Level`] has its energy, J, parity, eigenvector, LS composition, Landé g and
//!   the Hellmann–Feynman derivatives dE/dP_p = ⟨ψ|C_p|ψ⟩. Refits only call this.
//! - [`model`] reads and writes the TOML model file of an ion.
//!
//! How the matrices are made: subshell terms lⁿ are found in the determinants
//! (kernel of L₊ and S₊, seniority from the pairing operator) and coupled
//! subshell after subshell into LS states with parent labels (`3d4.(5D).4s 6D`).
//! Within a configuration the Coulomb and spin–orbit matrices come from Racah
//! algebra: reduced matrix elements of unit tensors tabulated once per lⁿ,
//! recoupled with 9j symbols (`racah`); configuration interaction is projected
//! from the determinants of the LS states (see [`hamiltonian`] for the formulas
//! and sources).
//!
//! ```
//! use termsight::notation::Configuration;
//! use termsight::structure::{LevelStructure, Radial};
//! // 1s2s: E(¹S) − E(³S) = 2G⁰ (Condon & Shortley 1935, §7⁶).
//! let config: Configuration = "1s.2s".parse().unwrap();
//! let structure = LevelStructure::build(&[config], &[]).unwrap();
//! let values: Vec<f64> = structure
//!     .parameters()
//!     .iter()
//!     .map(|p| if p.radial == Radial::Average { 160_000.0 } else { 3_000.0 })
//!     .collect();
//! let levels = structure.levels(&values).unwrap();
//! assert!((levels[1].energy_cm1 - levels[0].energy_cm1 - 6_000.0).abs() < 1e-9);
//! ```

mod basis;
pub mod hamiltonian;
mod levels;
pub mod model;
mod orbital;
mod parameter;
mod racah;
mod shell;
mod size;

use std::collections::HashSet;

pub use basis::{BasisTerm, TermLabel};
pub use hamiltonian::{CoefficientMatrix, JBlock, ParityBlock};
pub use levels::{Component, Level, LevelsProgress, lande_g_ls};
pub use orbital::{Determinant, MAX_SPIN_ORBITALS, Orbital, SpinOrbital, SpinOrbitalLayout};
pub use parameter::{DipoleIntegral, ParameterId, Radial, Scope, scope_name};
pub use shell::{MAX_SHELL_L, ShellTerm, ShellTerms};
pub use size::{JBlockSize, MAX_J_BLOCK_STATES, MAX_SUBSHELL_DETERMINANTS, SizeEstimate};

use crate::notation::{Configuration, Parity};

/// A level model that cannot be built or evaluated.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum StructureError {
    /// No configuration was given.
    #[error("the model has no configurations")]
    NoConfigurations,
    /// Configurations with different numbers of electrons.
    #[error(
        "configuration {configuration} has {found} electrons but {first} has {expected}: \
         write the same core in every configuration, or leave it out of all"
    )]
    ElectronCount {
        /// The configuration that differs.
        configuration: String,
        /// Its electron count.
        found: u32,
        /// The first configuration.
        first: String,
        /// The first configuration's electron count.
        expected: u32,
    },
    /// The same configuration twice.
    #[error("configuration {configuration} is listed twice")]
    Duplicate {
        /// The configuration.
        configuration: String,
    },
    /// An orbital with l beyond what the determinant code handles.
    #[error("orbital {orbital} has l > {MAX_SHELL_L}, beyond what the level model handles")]
    OrbitalTooHigh {
        /// The orbital.
        orbital: Orbital,
    },
    /// More open spin-orbitals in one parity than a determinant holds.
    #[error(
        "the {parity} configurations have {spin_orbitals} open spin-orbitals; at most \
         {MAX_SPIN_ORBITALS} fit in one parity block"
    )]
    TooManyOrbitals {
        /// The parity.
        parity: Parity,
        /// Number of spin-orbitals.
        spin_orbitals: usize,
    },
    /// An interaction between configurations of opposite parity.
    #[error("configurations {first} and {second} have opposite parity and cannot interact")]
    OppositeParity {
        /// First configuration.
        first: String,
        /// Second configuration.
        second: String,
    },
    /// An interaction that names a configuration index not in the model.
    #[error("an interaction names configuration number {index}, but the model has {count}")]
    NoSuchConfiguration {
        /// The index.
        index: usize,
        /// Number of configurations.
        count: usize,
    },
    /// Wrong number of parameter values.
    #[error("{found} parameter values given, the model has {expected} parameters")]
    ValueCount {
        /// Parameters of the model.
        expected: usize,
        /// Values given.
        found: usize,
    },
    /// An open subshell with more determinants than the model handles.
    #[error(
        "configuration {configuration}: the open subshell {subshell} has {determinants} \
         Slater determinants, more than the {limit} the level model handles (4f7 has \
         3432); such a subshell is out of reach of this model, so leave the \
         configuration out"
    )]
    SubshellTooLarge {
        /// The configuration.
        configuration: String,
        /// The subshell, e.g. `6h11`.
        subshell: String,
        /// Its number of determinants.
        determinants: u64,
        /// [`MAX_SUBSHELL_DETERMINANTS`].
        limit: u64,
    },
    /// A (parity, J) block with more states than the model handles.
    #[error(
        "the {parity} configurations give {states} levels of J = {j}, more than the \
         {limit} one block may hold (largest share: {largest}); use fewer \
         configurations, or split the list into smaller models"
    )]
    JBlockTooLarge {
        /// The parity.
        parity: Parity,
        /// J, as printed (`7/2`).
        j: String,
        /// LS states of the block.
        states: usize,
        /// [`MAX_J_BLOCK_STATES`].
        limit: usize,
        /// The configuration with the most determinants in that parity.
        largest: String,
    },
    /// A value that is NaN or infinite.
    #[error("parameter {parameter} is not a finite number")]
    NotFinite {
        /// Full name of the parameter.
        parameter: String,
    },
}

/// What [`LevelStructure::build_with_progress`] reports as it goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BuildProgress {
    /// Parity blocks finished.
    pub blocks_done: usize,
    /// Parity blocks in all.
    pub blocks_total: usize,
    /// Steps ((L, S) groups, then J blocks) finished in the block being built.
    pub steps_done: usize,
    /// Steps of the block being built.
    pub steps_total: usize,
}

/// The built level model: LS bases and coefficient matrices of every parity and J
/// block, ready to be evaluated for any parameter values.
#[derive(Debug, Clone)]
pub struct LevelStructure {
    configurations: Vec<Configuration>,
    parameters: Vec<ParameterId>,
    blocks: Vec<ParityBlock>,
}

impl LevelStructure {
    /// Build the structure of `configurations` (intermediate terms in their labels
    /// are ignored), with configuration interaction between the pairs of indices in
    /// `interactions` (same parity only).
    pub fn build(
        configurations: &[Configuration],
        interactions: &[(usize, usize)],
    ) -> Result<LevelStructure, StructureError> {
        Self::build_with_progress(configurations, interactions, |_| {})
    }

    /// [`Self::build`], calling `progress` as each parity block is built (after
    /// each of its (L, S) groups and J blocks) and after each block.
    pub fn build_with_progress(
        configurations: &[Configuration],
        interactions: &[(usize, usize)],
        progress: impl FnMut(BuildProgress),
    ) -> Result<LevelStructure, StructureError> {
        Self::build_by(
            configurations,
            interactions,
            hamiltonian::Route::Racah,
            progress,
        )
    }

    /// [`Self::build_with_progress`] with the matrices within configurations made
    /// by `route` (the tests build both and compare them).
    pub(crate) fn build_by(
        configurations: &[Configuration],
        interactions: &[(usize, usize)],
        route: hamiltonian::Route,
        mut progress: impl FnMut(BuildProgress),
    ) -> Result<LevelStructure, StructureError> {
        let configurations: Vec<Configuration> = configurations
            .iter()
            .map(Configuration::without_intermediates)
            .collect();
        let first = configurations
            .first()
            .ok_or(StructureError::NoConfigurations)?;
        check_size(&configurations)?;
        for (i, c) in configurations.iter().enumerate() {
            if c.electron_count() != first.electron_count() {
                return Err(StructureError::ElectronCount {
                    configuration: c.to_string(),
                    found: c.electron_count(),
                    first: first.to_string(),
                    expected: first.electron_count(),
                });
            }
            let mut sorted: Vec<_> = c.subshells().collect();
            sorted.sort();
            if configurations[..i].iter().any(|d| {
                let mut other: Vec<_> = d.subshells().collect();
                other.sort();
                other == sorted
            }) {
                return Err(StructureError::Duplicate {
                    configuration: c.to_string(),
                });
            }
        }
        let mut pairs = HashSet::new();
        for &(a, b) in interactions {
            for index in [a, b] {
                if index >= configurations.len() {
                    return Err(StructureError::NoSuchConfiguration {
                        index,
                        count: configurations.len(),
                    });
                }
            }
            if configurations[a].parity() != configurations[b].parity() {
                return Err(StructureError::OppositeParity {
                    first: configurations[a].to_string(),
                    second: configurations[b].to_string(),
                });
            }
            pairs.insert((a.min(b), a.max(b)));
        }
        let parities: Vec<Parity> = [Parity::Even, Parity::Odd]
            .into_iter()
            .filter(|p| configurations.iter().any(|c| c.parity() == *p))
            .collect();
        let mut built = Vec::new();
        for (done, parity) in parities.iter().enumerate() {
            let members: Vec<usize> = (0..configurations.len())
                .filter(|&i| configurations[i].parity() == *parity)
                .collect();
            let total = parities.len();
            built.push(hamiltonian::build_block(
                *parity,
                &configurations,
                &members,
                &pairs,
                route,
                &mut |steps_done, steps_total| {
                    progress(BuildProgress {
                        blocks_done: done,
                        blocks_total: total,
                        steps_done,
                        steps_total,
                    })
                },
            )?);
            progress(BuildProgress {
                blocks_done: done + 1,
                blocks_total: total,
                steps_done: 0,
                steps_total: 0,
            });
        }
        // Index the parameters that act somewhere, in (scope, kind) order.
        let mut ids: Vec<ParameterId> = built
            .iter()
            .flat_map(|b| b.j_coefficients.iter().flat_map(|m| m.keys().copied()))
            .collect();
        ids.sort();
        ids.dedup();
        let blocks = built
            .into_iter()
            .map(|mut b| {
                for (j_block, matrices) in b.block.j_blocks.iter_mut().zip(b.j_coefficients) {
                    j_block.coefficients = matrices
                        .into_iter()
                        .filter_map(|(id, m)| ids.binary_search(&id).ok().map(|p| (p, m)))
                        .collect();
                }
                b.block
            })
            .collect();
        Ok(LevelStructure {
            configurations,
            parameters: ids,
            blocks,
        })
    }

    /// The configurations, as given (without intermediate terms).
    pub fn configurations(&self) -> &[Configuration] {
        &self.configurations
    }

    /// The parameters, in the order [`Self::levels`] takes their values.
    pub fn parameters(&self) -> &[ParameterId] {
        &self.parameters
    }

    /// Index of a parameter in [`Self::parameters`].
    pub fn parameter_index(&self, id: &ParameterId) -> Option<usize> {
        self.parameters.binary_search(id).ok()
    }

    /// The parity blocks (even first).
    pub fn blocks(&self) -> &[ParityBlock] {
        &self.blocks
    }

    /// The label of an LS basis state of block `block`.
    pub fn state_label(&self, block: usize, state: usize) -> &TermLabel {
        &self.blocks[block].basis[state].label
    }
}

/// Count the levels of every (parity, J) block and the determinants of every
/// configuration of a model, without building it (fast even for models far
/// beyond the limits).
pub fn estimate_size(configurations: &[Configuration]) -> SizeEstimate {
    size::estimate(configurations, MAX_SHELL_L)
}

/// Refuse, before any work, a model beyond [`MAX_SUBSHELL_DETERMINANTS`] or
/// [`MAX_J_BLOCK_STATES`].
fn check_size(configurations: &[Configuration]) -> Result<(), StructureError> {
    if let Some(found) = size::too_large_subshell(configurations, MAX_SHELL_L) {
        return Err(StructureError::SubshellTooLarge {
            configuration: configurations
                .get(found.configuration)
                .map(ToString::to_string)
                .unwrap_or_default(),
            subshell: found.subshell.to_string(),
            determinants: found.determinants,
            limit: MAX_SUBSHELL_DETERMINANTS,
        });
    }
    let estimate = estimate_size(configurations);
    if let Some(block) = estimate.largest_block()
        && block.states > MAX_J_BLOCK_STATES
    {
        let largest = configurations
            .iter()
            .zip(&estimate.determinants)
            .filter(|(c, _)| c.parity() == block.parity)
            .max_by_key(|(_, d)| **d)
            .map(|(c, d)| format!("{c}, {d} determinants"))
            .unwrap_or_default();
        return Err(StructureError::JBlockTooLarge {
            parity: block.parity,
            j: crate::notation::HalfInt { twice: block.two_j }.to_string(),
            states: block.states,
            limit: MAX_J_BLOCK_STATES,
            largest,
        });
    }
    Ok(())
}

/// The parameters that `configurations`, with configuration interaction between the
/// pairs in `interactions`, need: for a radial calculation to fill in.
pub fn required_parameters(
    configurations: &[Configuration],
    interactions: &[(usize, usize)],
) -> Result<Vec<ParameterId>, StructureError> {
    Ok(LevelStructure::build(configurations, interactions)?.parameters)
}

#[cfg(test)]
mod size_tests {
    use super::*;

    #[test]
    fn a_huge_subshell_is_refused_with_its_count_and_a_hint() {
        // 6h¹¹: C(22, 11) = 705 432 determinants (common practice, no source).
        let configs: Vec<Configuration> = vec!["6h11".parse().unwrap()];
        let start = std::time::Instant::now();
        let error = LevelStructure::build(&configs, &[]).unwrap_err();
        let text = error.to_string();
        assert!(text.contains("705432"), "{text}");
        assert!(text.contains("10000"), "{text}");
        assert!(text.contains("leave the configuration out"), "{text}");
        // Refused before any work (a loose bound, not a timing goal).
        assert!(start.elapsed() < std::time::Duration::from_secs(5));
    }

    #[test]
    fn a_huge_j_block_is_refused_with_its_size() {
        // 4f⁵.5d.6p.7s: 2002·10·6·2 = 240 240 determinants, thousands of levels
        // per J (counted by estimate_size, checked on p² and f³ in size.rs).
        let configs: Vec<Configuration> = vec!["4f5.5d.6p.7s".parse().unwrap()];
        let estimate = estimate_size(&configs);
        let largest = estimate.largest_block().unwrap().states;
        assert!(largest > MAX_J_BLOCK_STATES, "{largest}");
        let text = LevelStructure::build(&configs, &[])
            .unwrap_err()
            .to_string();
        assert!(text.contains(&largest.to_string()), "{text}");
        assert!(text.contains("2000"), "{text}");
        assert!(text.contains("split the list"), "{text}");
    }
}
