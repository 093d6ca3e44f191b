//! Levels: level tables, the reference tables compiled into the program, and the
//! E1 lines predicted from levels by the Ritz combination principle.
//!
//! - [`LevelLabel`]: configuration, term and J of a level, parsed and printed through
//!   [`crate::notation`]; with the species it is the key of a level.
//! - [`Level`], [`LevelTable`], [`read_level_table`]: the CSV level table
//!   `species,configuration,term,J,energy_cm1,uncertainty_cm1,source`.
//! - [`EMBEDDED_TABLES`]: 29 spectra (neutrals and first ions, H I to Hg I) from the
//!   NIST Atomic Spectra Database, with the published E1 transition probabilities of
//!   their lines; [`compiled_predictions`] gives their lines from 100 nm to 2.5 µm.
//!   See `reference-levels/SOURCES.md`.
//! - [`e1`]: the E1 selection rules, which pairs of levels may combine and how a line
//!   is flagged (intercombination, L-forbidden, jump-forbidden, two-electron-jump).
//! - [`Predictions`], [`PredictedLine`]: predicted lines sorted by wavenumber, with
//!   their levels, flags and the rules applied, from a table ([`predict_from_table`])
//!   or, later, from a level model. The matcher ([`crate::assign`]) reads only these.
//! - [`optimize`]: level energies from assigned lines by weighted least squares.
//! - [`search`]: new levels from unassigned lines (candidate energies E_k ± σ, their
//!   clusters, J values and chance probabilities).
//!
//! ```
//! use termsight::levels::{EMBEDDED_TABLES, predict_from_table};
//! let helium = EMBEDDED_TABLES.iter().find(|t| t.species == "He I").unwrap();
//! let predictions = predict_from_table(&helium.load().unwrap()).unwrap();
//! // He I 1s2p 1P°1 – 1s3d 1D2, the red line at 667.8 nm in air (14970.07 cm⁻¹).
//! let red = predictions
//!     .lines()
//!     .iter()
//!     .find(|l| (l.wavenumber_cm1 - 14970.07).abs() < 0.01)
//!     .unwrap();
//! let (lower, upper) = predictions.levels_of(red).unwrap();
//! assert_eq!(lower.label.to_string(), "1s.2p 1P° 1");
//! assert_eq!(upper.label.to_string(), "1s.3d 1D 2");
//! ```

mod accuracy;
mod compiled_form;
pub(crate) mod csv_text;
pub mod e1;
mod embedded;
mod formable;
mod label;
pub mod optimize;
mod pairs;
mod predicted;
mod rates;
mod reach;
mod ritz;
pub mod search;
mod table;

pub use e1::{SelectionRules, TransitionFlags};
pub use embedded::{
    COMPILED_RANGE_NM, CompiledError, EMBEDDED_TABLES, EmbeddedTable, compiled_predictions,
    compiled_predictions_near, compiled_range, embedded_stages, embedded_table,
};
pub use label::{LabelError, LevelLabel};
pub use predicted::{
    AccuracyCode, Listing, PredictedLine, PredictionError, Predictions, SpeciesOrigin,
    SpeciesSummary, TransitionProbability, UnkeptLines,
};
pub use rates::{PublishedLine, RATES_HEADER, RatesError, read_rates};
pub use reach::{ListReach, Reach};
pub use ritz::{WavenumberRange, predict_from_table, predict_lines, ritz_wavenumber};
pub use table::{
    EnergyStatus, LEVEL_COLUMNS, Level, LevelTable, LevelTableError, MAX_LEVEL_TABLE_BYTES,
    TableWarning, read_level_table,
};
