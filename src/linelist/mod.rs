//! Measured line lists: reading CSV, TSV or whitespace-separated text with a header,
//! validating every row, and holding the lines sorted by vacuum wavenumber.
//!
//! (The reader is being built; the types below are the interface the rest of the
//! crate uses.)

use serde::{Deserialize, Serialize};

use crate::units::{AirFormula, LengthUnit, Medium, WavenumberCm1};

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
    /// The lines, sorted by increasing vacuum wavenumber.
    pub lines: Vec<ObservedLine>,
    /// Names of columns passed through to the output unchanged.
    pub extra_columns: Vec<String>,
    /// The air formula used to convert air wavelengths.
    pub air_formula: AirFormula,
    /// Rows skipped because they were bad (only when skipping was asked for).
    pub skipped: Vec<SkippedRow>,
}
