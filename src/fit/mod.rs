//! The parametric fit: the free parameters of a level model (E_av, F^k, G^k, ζ,
//! R^k) adjusted by least squares to experimental level energies.
//!
//! # Overview
//!
//! - [`fit_levels`] takes a [`LevelModel`](crate::structure::model::LevelModel),
//!   its [`LevelStructure`](crate::structure::LevelStructure) and a level table,
//!   and returns a [`FitResult`]: every parameter with its fitted value and
//!   standard error, the correlation matrix of the free ones, the standard
//!   deviation of the fit with its degrees of freedom, and each experimental level
//!   beside its computed counterpart and composition. Progress reaches a callback
//!   ([`FitProgress`]) after every accepted Levenberg–Marquardt step.
//! - Parameters are free, fixed, or tied to another with a fixed ratio (the model
//!   file's `vary` and `tie`); a group of tied parameters moves as one.
//! - [`matching`]: how experimental levels find their computed states (parity and
//!   J, then LS composition, or energy order for pair-coupled labels) and keep them
//!   through the iterations (eigenvector overlap, so crossing levels do not swap);
//!   after convergence they are matched afresh and the fit repeated while that
//!   changes an assignment.
//! - [`checks`]: before iterating, a level set that cannot determine the free
//!   parameters is refused with the parameters named: a parameter no level depends
//!   on, more free parameters than levels, or combinations the levels cannot tell
//!   apart (singular value decomposition).
//! - [`FitOptions`]: weighting ([`Weighting`]: equal, the default and custom for
//!   parametric fits, or by the levels' uncertainties with a floor), evaluation
//!   limit, correlation warning threshold.
//! - [`first_order`]: for two-electron ions, the hydrogenic first-order values of
//!   the Slater integrals beside the fitted ones.
//! - [`FitResult::fitted_model`] gives the model with fitted values and their
//!   uncertainties, for [`write_model`](crate::structure::model::write_model).
//!
//! ```
//! use termsight::fit::{fit_levels, FitOptions};
//! use termsight::levels::read_level_table;
//! use termsight::structure::model::parse_model;
//! // He I 1s2s: E(¹S) − E(³S) = 2G⁰(1s,2s) (Condon & Shortley 1935, §7⁶); the
//! // levels are those of the NIST ASD (2014).
//! let model = parse_model(
//!     "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2s\"\n\
//!      Eav = 160000.0\n\"G0(1s,2s)\" = 3000.0\n",
//!     "he.toml",
//! )
//! .unwrap();
//! let table = read_level_table(
//!     "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
//!      He I,1s.2s,3S,1,159855.9743297,0.0000001,ASD\n\
//!      He I,1s.2s,1S,0,166277.440141,0.000001,ASD\n"
//!         .as_bytes(),
//!     "he.csv",
//! )
//! .unwrap();
//! let result = fit_levels(&model.model, &model.structure, &table.levels, &FitOptions::default(), |_| {})
//!     .unwrap();
//! let g0 = result.parameters.iter().find(|p| p.name == "G0(1s,2s)@1s.2s").unwrap();
//! assert!((g0.fitted_cm1 - (166277.440141 - 159855.9743297) / 2.0).abs() < 1e-6);
//! assert_eq!(result.degrees_of_freedom, 0);
//! ```

pub mod checks;
pub mod first_order;
pub mod matching;
mod options;
mod parameters;
mod result;
mod solve;

pub use checks::CrowdedConfiguration;
pub use first_order::{HydrogenicIntegral, OneSNl, SimplePicture, simple_picture};
pub use matching::{MatchedBy, UnmatchedReason};
pub use options::{FitOptions, Weighting};
pub use result::{
    Convergence, Correlation, FitResult, FittedLevel, FittedParameter, ParameterKind, Share,
    UnmatchedLevel,
};
pub use solve::{FitProgress, fit_levels};

use crate::notation::Species;
use crate::structure::StructureError;

/// A fit that cannot be made. The ill-posed cases name the parameters.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FitError {
    /// A setting out of its range.
    #[error("{problem}")]
    InvalidOption {
        /// What is wrong, with the allowed range.
        problem: String,
    },
    /// The model and its structure do not agree (a model built in code).
    #[error("the model does not fit its level structure: {problem}")]
    ModelMismatch {
        /// What is wrong.
        problem: String,
    },
    /// The level model cannot be evaluated.
    #[error(transparent)]
    Structure(#[from] StructureError),
    /// The level table has no level of the model's species.
    #[error(
        "the level table has no level of {species}{}",
        if found.is_empty() { String::new() } else {
            format!(" (it has {})", found.iter().map(ToString::to_string).collect::<Vec<_>>().join(", "))
        }
    )]
    NoLevels {
        /// The model's species.
        species: Species,
        /// The species the table has.
        found: Vec<Species>,
    },
    /// No experimental level matches a computed state.
    #[error(
        "none of the {levels} levels of {species} matches a level of the model{}",
        example.as_ref().map_or(String::new(), |(label, why)| format!(" (e.g. {label}: {why})"))
    )]
    NothingMatched {
        /// The species.
        species: Species,
        /// Its levels in the table.
        levels: usize,
        /// One level and why it did not match.
        example: Option<(String, String)>,
    },
    /// Free parameters that no matched level depends on.
    #[error("{}", no_effect(parameters))]
    NoEffect {
        /// Full names of the parameters.
        parameters: Vec<String>,
    },
    /// More free parameters than matched levels.
    #[error("{}", too_few_levels(*free, *levels, crowded))]
    TooFewLevels {
        /// Free parameters (groups of tied parameters count once).
        free: usize,
        /// Matched levels.
        levels: usize,
        /// Configurations whose free parameters outnumber their levels.
        crowded: Vec<CrowdedConfiguration>,
    },
    /// Combinations of free parameters that the matched levels cannot determine.
    #[error("{}", undetermined(combinations))]
    Undetermined {
        /// Each combination: (full name, proportion) with the largest proportion 1:
        /// moving the parameters together in these proportions leaves every matched
        /// level unchanged.
        combinations: Vec<Vec<(String, f64)>>,
    },
    /// The iterations failed.
    #[error("the fit failed: {problem}")]
    Diverged {
        /// What happened.
        problem: String,
    },
}

fn no_effect(parameters: &[String]) -> String {
    let (them, are) = if parameters.len() == 1 {
        ("it", "is")
    } else {
        ("them", "are")
    };
    let mut text = format!(
        "the fit is ill-posed: no matched level depends on {}; fix {them}, or add levels \
         that depend on {them}",
        parameters.join(", ")
    );
    if parameters.iter().any(|p| p.starts_with('R')) {
        text.push_str(&format!(
            " (an interaction integral R^k at 0 mixes nothing, so no level depends on it to \
             first order: start it from a value of the right size if {them} {are} to be fitted)"
        ));
    }
    text
}

fn too_few_levels(free: usize, levels: usize, crowded: &[CrowdedConfiguration]) -> String {
    let plural = |n: usize, word: &str| format!("{n} {word}{}", if n == 1 { "" } else { "s" });
    let mut text = format!(
        "the fit is ill-posed: {} but only {}",
        plural(free, "free parameter"),
        plural(levels, "matched level")
    );
    if !crowded.is_empty() {
        let parts: Vec<String> = crowded
            .iter()
            .map(|c| {
                format!(
                    "{} has {} ({}) and {}",
                    c.configuration,
                    plural(c.parameters.len(), "free parameter"),
                    c.parameters.join(", "),
                    plural(c.levels, "level")
                )
            })
            .collect();
        text.push_str(&format!("; {}", parts.join("; ")));
    }
    text.push_str("; fix or tie parameters, or add levels");
    text
}

fn undetermined(combinations: &[Vec<(String, f64)>]) -> String {
    let parts: Vec<String> = combinations
        .iter()
        .map(|combination| {
            let names: Vec<&str> = combination.iter().map(|(n, _)| n.as_str()).collect();
            let steps: Vec<String> = combination
                .iter()
                .map(|(n, v)| format!("Δ{n} = {v:+.6}·t"))
                .collect();
            format!(
                "{} cannot be told apart: every matched level stays the same when they \
                 change together as {} (any t)",
                names.join(", "),
                steps.join(", ")
            )
        })
        .collect();
    format!(
        "the fit is ill-posed: the matched levels cannot determine every free parameter: {}; \
         fix or tie one of each group, or add levels that separate them",
        parts.join("; ")
    )
}
