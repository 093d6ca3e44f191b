//! clap definitions of every command and flag. No side effects here: what the user
//! typed is turned into library configuration by each command's module.

use clap::{Parser, Subcommand};

/// Term analysis of atomic spectra: assign measured lines to transitions, optimise
/// level energies, and fit Slater parameters of a level model.
#[derive(Debug, Parser)]
#[command(name = "termsight", version, about, long_about = None, max_term_width = 100)]
pub struct Cli {
    /// The command to run.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Assign each line of a measured line list to candidate transitions, ranked,
    /// with the probability that each match is chance.
    #[command(long_about = super::assign::LONG_ABOUT)]
    Assign(super::assign::AssignArgs),
    /// Search the unassigned lines for new levels: energies at which several lines
    /// combine with known levels, with allowed J and chance probability.
    FindLevels(super::find_levels::FindLevelsArgs),
    /// Fit the free parameters of a level model to experimental levels
    /// (Levenberg–Marquardt), with standard errors and correlations.
    #[command(long_about = super::fit::LONG_ABOUT)]
    Fit(super::fit::FitArgs),
    /// Compute every level of an ion's level model in intermediate coupling.
    Levels(super::levels::LevelsArgs),
    /// Predict the E1 lines of a level model: wavelengths, line strengths, gf, A
    /// and flags.
    Lines(super::lines::LinesArgs),
    /// Optimise level energies from accepted line assignments (weighted least squares),
    /// with Ritz wavenumbers and wavelengths.
    Optimize(super::optimize::OptimizeArgs),
    /// Temperature and electron density of the plasma from assigned lines
    /// (Boltzmann, Saha–Boltzmann, Stark widths of Hα and Hβ, McWhirter check).
    #[command(long_about = super::plasma::LONG_ABOUT)]
    Plasma(super::plasma::PlasmaArgs),
    /// Orbitals and radial integrals (E_av, F^k, G^k, R^k, ζ, ⟨r⟩) of configurations,
    /// from a self-consistent field; optionally a starting level model of them.
    Radial(super::radial::RadialArgs),
    /// Assign, optimise (and fit) one line list and write it all, tables and
    /// figures, as one self-contained HTML page.
    Report(super::report::ReportArgs),
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
