//! Reading classified lines for the level optimisation: the CSV that `termsight
//! assign` writes, after the user has marked the assignments they accept, or any
//! CSV with an observed wavenumber, its uncertainty and the two level labels.
//!
//! | column | required | meaning |
//! |---|---|---|
//! | `lower_configuration`, `lower_term`, `lower_J` | yes | lower level (blank for an unassigned row, which is skipped) |
//! | `upper_configuration`, `upper_term`, `upper_J` | yes | upper level |
//! | `observed_wavenumber_cm1`, `observed_uncertainty_cm1` | yes | the measured vacuum wavenumber and its standard uncertainty |
//! | `species` | unless given by the caller | e.g. `He I` |
//! | `line` | no | the line's number in the measured list (default: the row's number) |
//! | `rank` | no | 1 = best candidate (the assign CSV) |
//! | `flags` | no | `;`-separated; `blend` marks a line with several candidates |
//! | `accept` | no | `yes`/`y`/`true`/`1`/`x` accepts the row, `no`/`n`/`false`/`0`/blank rejects it |
//! | `lower_energy_cm1`, `upper_energy_cm1` | no | tabulated energies, used to place each system's reference level |
//! | `observed_intensity` | no | the line's intensity as given (for the term diagram's line widths) |
//!
//! Column names are matched ignoring case; other columns are ignored. `#` starts a
//! comment line.

use std::io::BufRead;

use crate::levels::LevelLabel;
use crate::levels::csv_text::{CsvError, CsvHeader, csv_rows, read_csv_text};
use crate::location::Location;
use crate::notation::Species;

/// One classified line as read.
#[derive(Debug, Clone, PartialEq)]
pub struct ClassifiedLine {
    /// The line's number in the measured list (`line` column), else the data row.
    pub line: usize,
    /// 1-based line of the row in the file, for messages.
    pub source_line: usize,
    /// The spectrum.
    pub species: Species,
    /// Lower level.
    pub lower: LevelLabel,
    /// Upper level.
    pub upper: LevelLabel,
    /// Observed vacuum wavenumber, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// Its standard uncertainty, cm⁻¹ (> 0).
    pub uncertainty_cm1: f64,
    /// Rank of the candidate, when the file has a `rank` column.
    pub rank: Option<usize>,
    /// True when the flags include `blend`.
    pub blend: bool,
    /// The `accept` column's verdict, when the file has one.
    pub accept: Option<bool>,
    /// Tabulated energy of the lower level, cm⁻¹, when given.
    pub lower_energy_cm1: Option<f64>,
    /// Tabulated energy of the upper level, cm⁻¹, when given.
    pub upper_energy_cm1: Option<f64>,
    /// The observed intensity as given (`observed_intensity`), when the file has one.
    pub intensity: Option<f64>,
}

impl ClassifiedLine {
    /// Whether the user keeps this line: the `accept` column when the file has one,
    /// else rank 1 (or no rank column at all).
    pub fn accepted(&self) -> bool {
        match self.accept {
            Some(verdict) => verdict,
            None => self.rank.is_none_or(|rank| rank == 1),
        }
    }
}

/// The rows of a classified-line file.
#[derive(Debug, Clone, PartialEq)]
pub struct ClassifiedLines {
    /// Name of the source.
    pub source: String,
    /// The rows with both level labels, in file order.
    pub lines: Vec<ClassifiedLine>,
    /// Rows without level labels (unassigned lines), left out.
    pub unassigned_rows: usize,
    /// True when the file has an `accept` column.
    pub has_accept_column: bool,
}

/// A classified-line file that cannot be read; every variant names the place.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ClassifiedReadError {
    /// The text could not be read (I/O, bad UTF-8, broken quoting, too large).
    #[error("{location}: cannot read the classified lines: {message}")]
    Unreadable {
        /// Where.
        location: Location,
        /// What went wrong.
        message: String,
    },
    /// No header, or no rows.
    #[error("{location}: {problem}")]
    Empty {
        /// Where.
        location: Location,
        /// What is missing.
        problem: String,
    },
    /// A required column is missing.
    #[error("{location}: no column '{column}' in the header; {hint}")]
    MissingColumn {
        /// The header line.
        location: Location,
        /// The column.
        column: &'static str,
        /// How to supply it.
        hint: &'static str,
    },
    /// A row has a different number of fields from the header.
    #[error("{location}: {found} fields where the header has {expected}")]
    FieldCount {
        /// The row.
        location: Location,
        /// Fields in the header.
        expected: usize,
        /// Fields in the row.
        found: usize,
    },
    /// A field with a bad value.
    #[error("{location}: {problem}")]
    BadField {
        /// Row and column.
        location: Location,
        /// What is wrong.
        problem: String,
    },
}

/// Largest file read, in bytes.
pub const MAX_CLASSIFIED_BYTES: u64 = 4 << 30;

const REQUIRED: [&str; 8] = [
    "lower_configuration",
    "lower_term",
    "lower_J",
    "upper_configuration",
    "upper_term",
    "upper_J",
    "observed_wavenumber_cm1",
    "observed_uncertainty_cm1",
];

const OPTIONAL: [&str; 8] = [
    "species",
    "line",
    "rank",
    "flags",
    "accept",
    "lower_energy_cm1",
    "upper_energy_cm1",
    "observed_intensity",
];

/// Read classified lines. `default_species` is used when the file has no `species`
/// column (it is an error to have neither).
pub fn read_classified_lines(
    mut reader: impl BufRead,
    source: &str,
    default_species: Option<Species>,
) -> Result<ClassifiedLines, ClassifiedReadError> {
    let error = |e: CsvError| {
        let location = Location::line(source, e.line());
        match e {
            CsvError::Unreadable { message, .. } => {
                ClassifiedReadError::Unreadable { location, message }
            }
            CsvError::Empty => ClassifiedReadError::Empty {
                location,
                problem: format!(
                    "the file is empty; expected a header with at least {}",
                    REQUIRED.join(",")
                ),
            },
            CsvError::FieldCount {
                expected, found, ..
            } => ClassifiedReadError::FieldCount {
                location,
                expected,
                found,
            },
        }
    };
    let text = read_csv_text(&mut reader, MAX_CLASSIFIED_BYTES, "a classified-line file")
        .map_err(error)?;
    let (header, rows) = csv_rows(&text).map_err(error)?;
    let CsvHeader {
        fields: header,
        line: header_line,
    } = header;
    let position = |name: &str| header.iter().position(|h| h.eq_ignore_ascii_case(name));
    let mut required = [0usize; REQUIRED.len()];
    for (slot, column) in required.iter_mut().zip(REQUIRED) {
        *slot = position(column).ok_or(ClassifiedReadError::MissingColumn {
            location: Location::line(source, header_line),
            column,
            hint: "the file must name both levels and the observed wavenumber with its \
                   uncertainty (the CSV of `termsight assign --format csv` has them)",
        })?;
    }
    let optional: Vec<Option<usize>> = OPTIONAL.iter().map(|c| position(c)).collect();
    if optional[0].is_none() && default_species.is_none() {
        return Err(ClassifiedReadError::MissingColumn {
            location: Location::line(source, header_line),
            column: "species",
            hint: "add the column or say which spectrum the lines belong to (--species)",
        });
    }
    let columns = Columns { required, optional };

    let mut out = ClassifiedLines {
        source: source.to_string(),
        lines: Vec::new(),
        unassigned_rows: 0,
        has_accept_column: columns.optional[4].is_some(),
    };
    let mut data_row = 0;
    for row in rows {
        let (line, row) = row.map_err(error)?;
        data_row += 1;
        let fields = Fields {
            row: &row,
            columns: &columns,
            source,
            line,
        };
        match fields.classified(data_row, default_species)? {
            Some(classified) => out.lines.push(classified),
            None => out.unassigned_rows += 1,
        }
    }
    if out.lines.is_empty() {
        return Err(ClassifiedReadError::Empty {
            location: Location::line(source, header_line),
            problem: "no row names both levels of a line: nothing to optimise".into(),
        });
    }
    Ok(out)
}

struct Columns {
    required: [usize; REQUIRED.len()],
    optional: Vec<Option<usize>>,
}

struct Fields<'a> {
    row: &'a csv::StringRecord,
    columns: &'a Columns,
    source: &'a str,
    line: usize,
}

impl Fields<'_> {
    fn text(&self, name: &str) -> &str {
        let index = match REQUIRED.iter().position(|c| *c == name) {
            Some(i) => self.columns.required.get(i).copied(),
            None => OPTIONAL
                .iter()
                .position(|c| *c == name)
                .and_then(|i| self.columns.optional.get(i).copied().flatten()),
        };
        index.and_then(|i| self.row.get(i)).unwrap_or("")
    }

    fn bad(&self, column: &str, problem: String) -> ClassifiedReadError {
        ClassifiedReadError::BadField {
            location: Location::line(self.source, self.line).column(column),
            problem,
        }
    }

    fn optional_number(&self, name: &str) -> Result<Option<f64>, ClassifiedReadError> {
        let text = self.text(name);
        if text.is_empty() {
            return Ok(None);
        }
        text.parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .map(Some)
            .ok_or_else(|| self.bad(name, format!("'{text}' is not a number")))
    }

    fn positive(&self, name: &str) -> Result<f64, ClassifiedReadError> {
        let text = self.text(name);
        self.optional_number(name)?
            .filter(|v| *v > 0.0)
            .ok_or_else(|| self.bad(name, format!("'{text}' is not a positive number in cm-1")))
    }

    /// A positive uncertainty whose weight 1/u² is an ordinary finite number
    /// (about 1e-150 to 1e150 cm-1): beyond that the normal equations overflow.
    fn uncertainty(&self, name: &str) -> Result<f64, ClassifiedReadError> {
        let u = self.positive(name)?;
        if (1.0 / (u * u)).is_normal() {
            Ok(u)
        } else {
            Err(self.bad(
                name,
                format!(
                    "'{}' is out of range: its weight 1/u² is not a finite non-zero number; \
                     give an uncertainty between 1e-150 and 1e150 cm-1",
                    self.text(name)
                ),
            ))
        }
    }

    fn label(&self, side: &str) -> Result<Option<LevelLabel>, ClassifiedReadError> {
        let column = |part: &str| format!("{side}_{part}");
        let parts = [
            self.text(&column("configuration")),
            self.text(&column("term")),
            self.text(&column("J")),
        ];
        if parts.iter().all(|p| p.is_empty()) {
            return Ok(None);
        }
        let label = LevelLabel::from_fields(parts[0], parts[1], parts[2])
            .map_err(|e| self.bad(&column(e.part), e.problem))?;
        // A level energy is fitted to a consistent label only: a term whose parity
        // is not the configuration's, or a J the term does not allow, is refused here.
        match label.warnings().into_iter().next() {
            Some(e) => Err(self.bad(&column(e.part), e.problem)),
            None => Ok(Some(label)),
        }
    }

    fn count(&self, name: &str) -> Result<Option<usize>, ClassifiedReadError> {
        let text = self.text(name);
        if text.is_empty() {
            return Ok(None);
        }
        text.parse::<usize>()
            .ok()
            .filter(|&v| v > 0)
            .map(Some)
            .ok_or_else(|| self.bad(name, format!("'{text}' is not a whole number ≥ 1")))
    }

    fn accept(&self) -> Result<Option<bool>, ClassifiedReadError> {
        if self.columns.optional[4].is_none() {
            return Ok(None);
        }
        let text = self.text("accept");
        match text.to_ascii_lowercase().as_str() {
            "yes" | "y" | "true" | "1" | "x" => Ok(Some(true)),
            "no" | "n" | "false" | "0" | "" => Ok(Some(false)),
            _ => Err(self.bad(
                "accept",
                format!("'{text}' is neither yes (y, true, 1, x) nor no (n, false, 0, blank)"),
            )),
        }
    }

    fn classified(
        &self,
        data_row: usize,
        default_species: Option<Species>,
    ) -> Result<Option<ClassifiedLine>, ClassifiedReadError> {
        let (lower, upper) = (self.label("lower")?, self.label("upper")?);
        let (lower, upper) = match (lower, upper) {
            (Some(lower), Some(upper)) => (lower, upper),
            (None, None) => return Ok(None),
            (None, Some(_)) => {
                return Err(self.bad(
                    "lower_configuration",
                    "the lower level is blank but the upper level is given".into(),
                ));
            }
            (Some(_), None) => {
                return Err(self.bad(
                    "upper_configuration",
                    "the upper level is blank but the lower level is given".into(),
                ));
            }
        };
        let species = match self.text("species") {
            "" => default_species.ok_or_else(|| {
                self.bad("species", "no species: write one or give --species".into())
            })?,
            text => text
                .parse()
                .map_err(|e| self.bad("species", format!("{e}")))?,
        };
        if lower == upper {
            return Err(self.bad(
                "upper_configuration",
                format!("the line joins level {lower} to itself"),
            ));
        }
        Ok(Some(ClassifiedLine {
            line: self.count("line")?.unwrap_or(data_row),
            source_line: self.line,
            species,
            lower,
            upper,
            wavenumber_cm1: self.positive("observed_wavenumber_cm1")?,
            uncertainty_cm1: self.uncertainty("observed_uncertainty_cm1")?,
            rank: self.count("rank")?,
            blend: self.text("flags").split(';').any(|f| f.trim() == "blend"),
            accept: self.accept()?,
            lower_energy_cm1: self.optional_number("lower_energy_cm1")?,
            upper_energy_cm1: self.optional_number("upper_energy_cm1")?,
            // Only drawn, never fitted: a cell that is not a number is no intensity.
            intensity: self
                .text("observed_intensity")
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite()),
        }))
    }
}

/// The classified lines of an assignment held in memory (the rows of the assign CSV,
/// as [`crate::assign::records`] gives them): every row with a candidate, as
/// [`read_classified_lines`] would read the CSV back without an `accept` column.
pub fn classified_from_records(
    source: &str,
    records: &[crate::assign::AssignmentRecord],
) -> ClassifiedLines {
    let mut out = ClassifiedLines {
        source: source.to_string(),
        lines: Vec::new(),
        unassigned_rows: 0,
        has_accept_column: false,
    };
    for (row, record) in records.iter().enumerate() {
        let Some(candidate) = &record.candidate else {
            out.unassigned_rows += 1;
            continue;
        };
        out.lines.push(ClassifiedLine {
            line: record.line,
            // The header line comes first in the CSV.
            source_line: row + 2,
            species: candidate.species,
            lower: candidate.lower.clone(),
            upper: candidate.upper.clone(),
            wavenumber_cm1: record.observed_wavenumber_cm1,
            uncertainty_cm1: record.observed_uncertainty_cm1,
            rank: record.rank,
            blend: record.flags.contains(&crate::assign::Flag::Blend),
            accept: None,
            lower_energy_cm1: Some(candidate.lower_energy_cm1),
            upper_energy_cm1: Some(candidate.upper_energy_cm1),
            intensity: record.observed_intensity,
        });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    const HEADER: &str = "species,line,rank,lower_configuration,lower_term,lower_J,upper_configuration,upper_term,upper_J,observed_wavenumber_cm1,observed_uncertainty_cm1,flags";

    fn read(text: &str) -> Result<ClassifiedLines, ClassifiedReadError> {
        read_classified_lines(text.as_bytes(), "a.csv", None)
    }

    #[test]
    fn reads_rows_and_skips_unassigned_ones() {
        // He I 1s2p 1P°1 – 1s3d 1D2 at 667.8 nm (ASD 2014 levels: 14970.07 cm⁻¹).
        let text = format!(
            "# a comment\n{HEADER}\nHe I,1,1,1s.2p,1P*,1,1s.3d,1D,2,14970.07,0.03,\n\
             He I,2,,,,,,,,15000,0.03,unassigned\n\
             He I,3,2,1s.2p,1P*,1,1s.3d,1D,2,14970.07,0.03,blend\n"
        );
        let read = read(&text).unwrap();
        assert_eq!(read.lines.len(), 2);
        assert_eq!(read.unassigned_rows, 1);
        assert!(read.lines[0].accepted());
        assert!(!read.lines[1].accepted() && read.lines[1].blend);
        assert_eq!(read.lines[0].source_line, 3);
    }

    #[test]
    fn the_accept_column_decides() {
        let text = format!(
            "{HEADER},accept\nHe I,1,2,1s.2p,1P*,1,1s.3d,1D,2,14970.07,0.03,,yes\n\
             He I,1,1,1s.2p,1P*,1,1s.3d,1D,2,14970.07,0.03,,\n"
        );
        let read = read(&text).unwrap();
        assert!(read.has_accept_column);
        assert!(read.lines[0].accepted());
        assert!(!read.lines[1].accepted());
    }

    #[test]
    fn bad_rows_name_line_and_column() {
        let cases = [
            (
                "He I,1,1,1s.2p,1P*,1,1s.3d,1D,2,abc,0.03,",
                "a.csv:2: column 'observed_wavenumber_cm1'",
            ),
            (
                "He I,1,1,1s.2p,1P*,1,1s.3d,1D,2,14970,-1,",
                "a.csv:2: column 'observed_uncertainty_cm1'",
            ),
            (
                "He I,1,1,1s.2p,1Q,1,1s.3d,1D,2,14970,0.1,",
                "a.csv:2: column 'lower_term'",
            ),
            (
                "Xx I,1,1,1s.2p,1P*,1,1s.3d,1D,2,14970,0.1,",
                "a.csv:2: column 'species'",
            ),
            (
                "He I,1,1,1s.2p,1P*,1,,,,14970,0.1,",
                "a.csv:2: column 'upper_configuration'",
            ),
            ("He I,1,1,1s.2p,1P*,1", "a.csv:2: 6 fields"),
        ];
        for (row, expected) in cases {
            let error = read(&format!("{HEADER}\n{row}\n")).unwrap_err().to_string();
            assert!(error.starts_with(expected), "{error}");
        }
        let error = read("species,lower_term\n").unwrap_err().to_string();
        assert!(error.contains("no column 'lower_configuration'"), "{error}");
        assert!(read("").is_err());
        assert!(read(&format!("{HEADER}\n")).is_err());
    }

    #[test]
    fn species_may_come_from_the_caller() {
        let text = "lower_configuration,lower_term,lower_J,upper_configuration,upper_term,upper_J,observed_wavenumber_cm1,observed_uncertainty_cm1\n\
                    1s.2p,1P*,1,1s.3d,1D,2,14970.07,0.03\n";
        assert!(read(text).unwrap_err().to_string().contains("--species"));
        let helium: Species = "He I".parse().unwrap();
        let read = read_classified_lines(text.as_bytes(), "a.csv", Some(helium)).unwrap();
        assert_eq!(read.lines[0].species, helium);
        assert!(read.lines[0].accepted());
    }
}
