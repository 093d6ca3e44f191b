//! clap definitions of every command and flag. No side effects here: what the user
//! typed is turned into library configuration by each command's module.

use clap::{Parser, Subcommand};

/// Term analysis of atomic spectra: assign measured lines to transitions, optimise
/// level energies, and fit Slater parameters of a level model.
#[derive(Debug, Parser)]
#[command(name = "termsight", version, about, long_about = None)]
pub struct Cli {
    /// The command to run.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Assign each line of a measured line list to candidate transitions, ranked.
    Assign(AssignArgs),
    /// Compute every level of an ion's level model in intermediate coupling.
    Levels(super::levels::LevelsArgs),
    /// Orbitals and radial integrals (E_av, F^k, G^k, R^k, ζ, ⟨r⟩) of configurations,
    /// from a self-consistent field.
    Radial(super::radial::RadialArgs),
}

/// Arguments of `termsight assign`.
#[derive(Debug, clap::Args)]
pub struct AssignArgs {
    /// The measured line list (CSV, TSV or whitespace columns with a header).
    pub lines: std::path::PathBuf,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clap_definitions_are_consistent() {
        use clap::CommandFactory;
        Cli::command().debug_assert();
    }
}
