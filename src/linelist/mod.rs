//! Measured line lists: reading CSV, TSV or whitespace-separated text with a header,
//! validating every row, and holding the lines in input order.
//!
//! [`read_line_list`] reads a list from any [`BufRead`](std::io::BufRead) and a source
//! name (used in messages); [`ReadOptions`] carries what the command line adds (the
//! medium, a global uncertainty, the air formula, whether to skip bad rows). The
//! result is a [`LineList`] of [`ObservedLine`]s; every problem is a
//! [`LineListError`] that names the file, the line and the column.
//!
//! # The accepted format
//!
//! A line list is plain UTF-8 text: one header line, then one data row per line.
//!
//! - **Columns** are separated by commas (CSV), tabs (TSV) or runs of spaces and
//!   tabs. The separator is taken from the header line: a comma there means CSV,
//!   else a tab means TSV, else whitespace. CSV and TSV fields may be quoted with
//!   `"` (a doubled `""` inside quotes is one quote); as in RFC 4180 the quote must
//!   be the field's first character (right after the separator), and a quoted field
//!   must end on its own line. Spaces around fields are ignored.
//! - **Comments**: a line whose first non-blank character is `#` is a comment, before
//!   or after the header. In the whitespace format a `#` also ends the data of a row
//!   (a trailing comment); in CSV and TSV a `#` inside a row is data. Blank lines,
//!   a UTF-8 byte-order mark and CRLF line ends are accepted. Comments need not be
//!   UTF-8 (a Latin-1 `°` in a note does no harm); everything else must be.
//! - **Header names** (matched ignoring case and surrounding spaces) say the quantity
//!   and the unit:
//!
//!   | column | meaning |
//!   |---|---|
//!   | `wavelength_nm`, `wavelength_A`, `wavelength_um` | wavelength in nm, Å or µm |
//!   | `wavenumber_cm1` | vacuum wavenumber in cm⁻¹ |
//!   | `uncertainty_nm`, `uncertainty_A`, `uncertainty_um`, `uncertainty_cm1` | standard uncertainty of the position, in its own unit (it need not be the position's) |
//!   | `medium` | `air` or `vacuum`, per row (for wavelengths) |
//!   | `intensity` | a number in any unit, or blank |
//!
//!   Exactly one position column (`wavelength_*` or `wavenumber_cm1`) is required;
//!   the others are optional. Any other column is passed through unchanged
//!   ([`LineList::extra_columns`], [`ObservedLine::extra`]). Column names must be
//!   unique.
//! - **Medium** of a wavelength: the row's `medium` value; if the column is absent or
//!   the cell blank, [`ReadOptions::medium`]; else the trade's convention (air at and
//!   above 200 nm, vacuum below, applied to the number as given; see
//!   [`Medium::conventional`]), and then [`LineList::medium_assumed`] is set. Air
//!   wavelengths are converted with [`ReadOptions::air_formula`] and must be at least
//!   [`AIR_FORMULA_MIN_NM`](crate::units::air::AIR_FORMULA_MIN_NM). A wavenumber is
//!   a vacuum wavenumber: its `medium` cell may only be blank or `vacuum`.
//! - **Uncertainty** of each row: the uncertainty column; if absent or blank,
//!   [`ReadOptions::uncertainty`]; a row with neither is an error. It is converted to
//!   a wavenumber uncertainty with
//!   [`Wavelength::wavenumber_uncertainty_cm1`](crate::units::Wavelength::wavenumber_uncertainty_cm1)
//!   (a wavelength uncertainty given for a wavenumber column is taken as a vacuum
//!   wavelength uncertainty).
//! - **Values**: positions and uncertainties are finite numbers greater than zero;
//!   intensities are finite numbers or blank. Every row has as many fields as the
//!   header. In the whitespace format no field can be blank.
//! - **Lines longer than** [`ReadOptions::max_line_bytes`] are rejected, so that a
//!   file that is not a line list fails quickly and in bounded memory.
//!
//! The lines come out in input order (the matcher sorts its own index by
//! wavenumber), each with its 1-based data-row index [`ObservedLine::row`] (counting every
//! data row, also rows that were skipped) and its physical line number
//! [`ObservedLine::source_line`].
//!
//! ```
//! use termsight::linelist::{read_line_list, ReadOptions};
//! let text = "\
//! ## hollow-cathode scan 3, demo data
//! wavelength_nm, uncertainty_nm, intensity, note
//! 587.5621,      0.0005,         1200,      strong
//! 388.8648,      0.0010,         300,\"blend?\"
//! ";
//! let list = read_line_list(text.as_bytes(), "scan3.csv", &ReadOptions::default()).unwrap();
//! assert_eq!(list.lines.len(), 2);
//! assert!(list.medium_assumed); // no medium given: air above 200 nm
//! assert_eq!(list.lines[0].row, 1);
//! assert_eq!(list.lines[1].extra, vec!["blend?".to_string()]);
//! ```

mod error;
mod fields;
mod header;
mod options;
mod physical;
mod read;
mod row;
#[cfg(test)]
mod tests;

use serde::{Deserialize, Serialize};

use crate::units::{AirFormula, LengthUnit, Medium, WavenumberCm1};

pub use error::{LineListError, LineProblem};
pub use options::{GlobalUncertainty, ReadOptions, UncertaintyError, UncertaintyUnit};
pub use read::{SKIPPED_DETAIL_LIMIT, read_line_list};

/// How the position of a line was given in the input.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum GivenPosition {
    /// A wavelength in `unit`, measured in `medium`.
    Wavelength {
        /// The number as read.
        value: f64,
        /// Its unit.
        unit: LengthUnit,
        /// Air or vacuum.
        medium: Medium,
    },
    /// A vacuum wavenumber in cm⁻¹.
    Wavenumber {
        /// The number as read, cm⁻¹.
        value: f64,
    },
}

/// One measured line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ObservedLine {
    /// 1-based index of the data row in the input, in input order (the `line`
    /// column of outputs).
    pub row: usize,
    /// 1-based physical line number in the input file, for messages.
    pub source_line: usize,
    /// The position as given.
    pub given: GivenPosition,
    /// Vacuum wavenumber σ in cm⁻¹.
    pub wavenumber_cm1: WavenumberCm1,
    /// Standard uncertainty of σ in cm⁻¹ (> 0).
    pub uncertainty_cm1: f64,
    /// Intensity as given (arbitrary units), if the list has an `intensity` column.
    pub intensity: Option<f64>,
    /// Values of the pass-through columns, in the order of [`LineList::extra_columns`].
    pub extra: Vec<String>,
}

/// A data row left out under `skip_bad`, with the reason.
#[derive(Debug, Clone, PartialEq)]
pub struct SkippedRow {
    /// Where, as `file:line: column 'name'`.
    pub location: crate::location::Location,
    /// Why.
    pub reason: String,
}

/// A measured line list.
#[derive(Debug, Clone, PartialEq)]
pub struct LineList {
    /// Name of the source (a path or `<stdin>`).
    pub source: String,
    /// The lines, in input order.
    pub lines: Vec<ObservedLine>,
    /// Names of columns passed through to the output unchanged.
    pub extra_columns: Vec<String>,
    /// The air formula used to convert air wavelengths.
    pub air_formula: AirFormula,
    /// Rows skipped because they were bad (only when skipping was asked for): the
    /// first [`SKIPPED_DETAIL_LIMIT`] in detail, in input order.
    pub skipped: Vec<SkippedRow>,
    /// How many rows were skipped in all (≥ `skipped.len()`).
    pub skipped_total: usize,
    /// True when the medium of at least one wavelength was neither in the file nor in
    /// [`ReadOptions::medium`], so the convention (air at and above 200 nm, vacuum
    /// below) was assumed.
    pub medium_assumed: bool,
}
