//! What can be wrong with a line list, each with the place it was found.

use std::fmt;
use std::io;

use crate::location::Location;
use crate::units::air::AIR_FORMULA_MIN_NM;

/// The position columns a header may name, for messages.
pub(crate) const POSITION_COLUMNS: &str =
    "wavelength_nm, wavelength_A, wavelength_um or wavenumber_cm1";

/// The uncertainty columns a header may name, for messages.
pub(crate) const UNCERTAINTY_COLUMNS: &str =
    "uncertainty_nm, uncertainty_A, uncertainty_um or uncertainty_cm1";

/// Why a line list could not be read. Every variant carries the [`Location`] of the
/// problem and prints as `file:line: column 'name': what is wrong`.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum LineListError {
    /// The input could not be read.
    #[error("{location}: could not be read: {source}")]
    Io {
        /// The source (and the line being read, if any).
        location: Location,
        /// The I/O error.
        source: io::Error,
    },
    /// The input holds no header: it is empty or has only blank and comment lines.
    #[error(
        "{location}: no lines: the input is empty (it needs a header line naming the columns, e.g. wavelength_nm, and one line per row)"
    )]
    Empty {
        /// The source.
        location: Location,
    },
    /// The input has a header but no usable data rows.
    #[error("{location}: no lines: {}", no_lines_detail(*skipped))]
    NoLines {
        /// The header line.
        location: Location,
        /// How many rows were skipped as bad.
        skipped: usize,
    },
    /// A line that cannot be used: a data row with a bad field, or a header or row
    /// that is not text or too long.
    #[error("{location}: {problem}")]
    BadLine {
        /// The line, and the column when one is at fault.
        location: Location,
        /// What is wrong.
        problem: LineProblem,
    },
    /// The header names no position column.
    #[error(
        "{location}: the header names no position column; it needs exactly one of {POSITION_COLUMNS} (found: {found})"
    )]
    NoPositionColumn {
        /// The header line.
        location: Location,
        /// The column names found, comma-separated, for the message.
        found: String,
    },
    /// The header names two position columns.
    #[error(
        "{location}: a second position column after '{first}'; give exactly one of {POSITION_COLUMNS}"
    )]
    TwoPositionColumns {
        /// The header line and the second column.
        location: Location,
        /// The first position column.
        first: String,
    },
    /// The header names two uncertainty columns.
    #[error(
        "{location}: a second uncertainty column after '{first}'; give at most one of {UNCERTAINTY_COLUMNS}"
    )]
    TwoUncertaintyColumns {
        /// The header line and the second column.
        location: Location,
        /// The first uncertainty column.
        first: String,
    },
    /// Two columns have the same name (ignoring case).
    #[error("{location}: the column name appears twice (first as column {first_index})")]
    DuplicateColumn {
        /// The header line and the repeated column.
        location: Location,
        /// 1-based index of the first column of that name.
        first_index: usize,
    },
    /// A column has an empty name.
    #[error("{location}: column {index} has no name; every column needs one")]
    EmptyColumnName {
        /// The header line.
        location: Location,
        /// 1-based index of the column.
        index: usize,
    },
    /// A `wavelength_`, `wavenumber_` or `uncertainty_` column with a unit this
    /// reader does not know (or none).
    #[error("{location}: unknown or missing unit; use one of {accepted}")]
    UnknownUnit {
        /// The header line and the column.
        location: Location,
        /// The accepted column names of that quantity.
        accepted: &'static str,
    },
}

fn no_lines_detail(skipped: usize) -> String {
    if skipped == 0 {
        "the header is followed by no data rows".to_string()
    } else {
        format!("all {skipped} data rows were bad and skipped")
    }
}

impl LineListError {
    /// Where the problem was found.
    pub fn location(&self) -> &Location {
        match self {
            LineListError::Io { location, .. }
            | LineListError::Empty { location }
            | LineListError::NoLines { location, .. }
            | LineListError::BadLine { location, .. }
            | LineListError::NoPositionColumn { location, .. }
            | LineListError::TwoPositionColumns { location, .. }
            | LineListError::TwoUncertaintyColumns { location, .. }
            | LineListError::DuplicateColumn { location, .. }
            | LineListError::EmptyColumnName { location, .. }
            | LineListError::UnknownUnit { location, .. } => location,
        }
    }
}

/// What is wrong with one line of a line list (the location is kept beside it).
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum LineProblem {
    /// The line is not valid UTF-8 text.
    InvalidUtf8,
    /// The line is longer than the limit.
    TooLong {
        /// The limit in bytes.
        limit: usize,
    },
    /// A quoted field is not closed before the end of the line.
    UnterminatedQuote,
    /// The row has a different number of fields from the header.
    FieldCount {
        /// Fields in the header.
        expected: usize,
        /// Fields in this row.
        found: usize,
        /// The header's line number.
        header_line: usize,
    },
    /// A required value is blank.
    Missing,
    /// The text is not a number.
    NotANumber {
        /// The text (shortened if long).
        text: String,
    },
    /// The number is infinite or NaN.
    NotFinite {
        /// The text (shortened if long).
        text: String,
    },
    /// The number is zero or negative.
    NotPositive {
        /// The text (shortened if long).
        text: String,
    },
    /// The converted value (wavenumber or its uncertainty) is not a finite number
    /// greater than zero, because the given number is extreme.
    NotConvertible {
        /// The text (shortened if long).
        text: String,
        /// What it was converted to.
        what: &'static str,
    },
    /// A `medium` value other than `air` or `vacuum`.
    UnknownMedium {
        /// The text (shortened if long).
        text: String,
    },
    /// A wavenumber row says its medium is air.
    AirWavenumber,
    /// An air wavelength shorter than the air formulas accept.
    AirOutOfRange {
        /// The wavelength in nm.
        lambda_nm: f64,
    },
    /// Neither the row nor the options give an uncertainty.
    NoUncertainty,
    /// The uncertainty is as large as the position itself: the line could be
    /// anywhere from zero to twice its wavenumber.
    UncertaintyTooLarge {
        /// The uncertainty as given (shortened if long).
        text: String,
        /// It in cm⁻¹.
        uncertainty_cm1: f64,
        /// The line's vacuum wavenumber, cm⁻¹.
        wavenumber_cm1: f64,
    },
}

impl fmt::Display for LineProblem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LineProblem::InvalidUtf8 => f.write_str("the line is not valid UTF-8 text"),
            LineProblem::TooLong { limit } => {
                write!(f, "the line is longer than {limit} bytes; is this a line list?")
            }
            LineProblem::UnterminatedQuote => {
                f.write_str("a quoted field is not closed on this line")
            }
            LineProblem::FieldCount {
                expected,
                found,
                header_line,
            } => write!(
                f,
                "{found} fields, but the header (line {header_line}) names {expected}"
            ),
            LineProblem::Missing => f.write_str("no value; every row needs one here"),
            LineProblem::NotANumber { text } => write!(f, "'{text}' is not a number"),
            LineProblem::NotFinite { text } => write!(f, "'{text}' is not a finite number"),
            LineProblem::NotPositive { text } => {
                write!(f, "'{text}' is not greater than zero")
            }
            LineProblem::NotConvertible { text, what } => write!(
                f,
                "'{text}' is too extreme: its {what} is not a finite number greater than zero"
            ),
            LineProblem::UnknownMedium { text } => {
                write!(f, "'{text}' is not a medium; write air or vacuum")
            }
            LineProblem::AirWavenumber => f.write_str(
                "'air' does not apply: wavenumber_cm1 is a vacuum wavenumber (leave the medium blank or write vacuum)",
            ),
            LineProblem::AirOutOfRange { lambda_nm } => write!(
                f,
                "an air wavelength of {lambda_nm} nm is shorter than {AIR_FORMULA_MIN_NM} nm, where the air formulas end; give it as a vacuum wavelength"
            ),
            LineProblem::UncertaintyTooLarge {
                text,
                uncertainty_cm1,
                wavenumber_cm1,
            } => write!(
                f,
                "the uncertainty '{text}' ({uncertainty_cm1:.4e} cm-1) is not smaller than the \
                 line's own wavenumber ({wavenumber_cm1:.4e} cm-1): check its unit and column"
            ),
            LineProblem::NoUncertainty => write!(
                f,
                "no uncertainty: add a column {UNCERTAINTY_COLUMNS}, or give one uncertainty for all lines (--uncertainty, e.g. 0.002nm or 0.05cm-1)"
            ),
        }
    }
}

/// Longest piece of a field quoted in a message, in characters.
const QUOTED_CHARS: usize = 40;

/// `text` as quoted in a message: at most [`QUOTED_CHARS`] characters, then `…`.
pub(crate) fn shorten(text: &str) -> String {
    match text.char_indices().nth(QUOTED_CHARS) {
        Some((cut, _)) => format!("{}…", text.get(..cut).unwrap_or_default()),
        None => text.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_text_is_shortened_on_a_char_boundary() {
        let long = "é".repeat(100);
        let short = shorten(&long);
        assert_eq!(short.chars().count(), QUOTED_CHARS + 1);
        assert!(short.ends_with('…'));
        assert_eq!(shorten("abc"), "abc");
    }
}
