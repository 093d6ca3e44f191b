//! The assign CSV: its columns, one row per candidate (one row for an unassigned
//! line) as a record in memory, and the reader that reads it back (for the level
//! optimisation).

use std::io::BufRead;

use serde::{Deserialize, Serialize};

use super::{Flag, LineAssignment};
use crate::levels::csv_text::{CsvError, CsvHeader, csv_rows, read_csv_text};
use crate::levels::{LevelLabel, Predictions, SelectionRules};
use crate::linelist::{GivenPosition, LineList};
use crate::location::Location;
use crate::notation::Species;
use crate::units::{LengthUnit, Medium, Wavelength};

/// The columns of the assign CSV, in order. Pass-through columns of the line list
/// follow them.
///
/// | column | meaning |
/// |---|---|
/// | `line` | 1-based data row of the observed line in the input |
/// | `given_value`, `given_unit`, `given_medium` | the position as given: number, unit (`nm`, `A`, `um`, `cm1`), `air`/`vacuum` (blank for a wavenumber) |
/// | `observed_wavenumber_cm1`, `observed_uncertainty_cm1` | vacuum wavenumber and its standard uncertainty |
/// | `observed_intensity` | as given, or blank |
/// | `rank` | 1 = best candidate; blank for an unassigned line |
/// | `species` | e.g. `He I` |
/// | `lower_configuration`, `lower_term`, `lower_J`, `lower_energy_cm1` | lower level |
/// | `upper_configuration`, `upper_term`, `upper_J`, `upper_energy_cm1` | upper level |
/// | `predicted_wavenumber_cm1`, `predicted_uncertainty_cm1` | the prediction (its uncertainty includes any model uncertainty) |
/// | `predicted_in_given_unit` | the prediction in the unit and medium of `given_*` |
/// | `predicted_strength` | the predicted relative strength gf: of a level model's line, or from the published A_ki of a compiled table's line; blank otherwise |
/// | `ga_s1` | g_k·A_ki of the upper level k, s⁻¹, from the published transition probability of a compiled table's line; blank when none is published |
/// | `deviation_cm1` | observed − predicted |
/// | `combined_uncertainty_cm1` | √(observed² + predicted²) |
/// | `deviation_sigma` | `deviation_cm1 / combined_uncertainty_cm1` |
/// | `chance_probability` | probability that the match is a chance coincidence |
/// | `selection_rules` | `LS` or `parity+J` |
/// | `flags` | `;`-separated: `intercombination`, `L-forbidden`, `jump-forbidden`, `two-electron-jump`, `blend`, `unassigned` |
/// | `observed_to_predicted_intensity` | observed intensity over the predicted one on the species' fitted scale (over a declared blend's sum for its members); blank without an intensity, a transition probability, or in `--position-only` |
/// | `predicted_relative_intensity` | predicted intensity relative to the species' strongest line in the range of the list (= 1), at its excitation temperature; blank without a transition probability |
/// | `log_likelihood` | the natural-log likelihood ranked on (see [`super::likelihood`]); blank in `--position-only` |
/// | `species_verdict` | `present`, `absent` or `undecided` for the candidate's species; blank in `--position-only` |
///
/// Terms are printed `2S+1 L` with `°` for odd parity (`3P°`), pair-coupling terms
/// `2[3/2]°`. Numbers carry the digits they have (see [`crate::report::digits`]):
/// wavenumbers, energies and deviations to 10⁻⁸ cm⁻¹, `predicted_in_given_unit` to
/// 10⁻¹¹ nm in its unit, uncertainties, `deviation_sigma`, `chance_probability` and
/// `predicted_strength` to three significant digits, `given_value` and
/// `observed_intensity` as read. The writer is `crate::report::write_assign_csv`,
/// whose table of columns says how each is written.
pub const ASSIGN_COLUMNS: [&str; 32] = [
    "line",
    "given_value",
    "given_unit",
    "given_medium",
    "observed_wavenumber_cm1",
    "observed_uncertainty_cm1",
    "observed_intensity",
    "rank",
    "species",
    "lower_configuration",
    "lower_term",
    "lower_J",
    "lower_energy_cm1",
    "upper_configuration",
    "upper_term",
    "upper_J",
    "upper_energy_cm1",
    "predicted_wavenumber_cm1",
    "predicted_uncertainty_cm1",
    "predicted_in_given_unit",
    "predicted_strength",
    "ga_s1",
    "deviation_cm1",
    "combined_uncertainty_cm1",
    "deviation_sigma",
    "chance_probability",
    "selection_rules",
    "flags",
    "observed_to_predicted_intensity",
    "predicted_relative_intensity",
    "log_likelihood",
    "species_verdict",
];

/// Columns a file must have to be read back; the others may be absent.
const REQUIRED: [&str; 19] = [
    "line",
    "observed_wavenumber_cm1",
    "observed_uncertainty_cm1",
    "rank",
    "species",
    "lower_configuration",
    "lower_term",
    "lower_J",
    "lower_energy_cm1",
    "upper_configuration",
    "upper_term",
    "upper_J",
    "upper_energy_cm1",
    "predicted_wavenumber_cm1",
    "deviation_cm1",
    "deviation_sigma",
    "chance_probability",
    "flags",
    "predicted_uncertainty_cm1",
];

/// One row of the assign CSV.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AssignmentRecord {
    /// 1-based data row of the observed line in its input.
    pub line: usize,
    /// The position as given in the input.
    pub given: GivenPosition,
    /// Vacuum wavenumber, cm⁻¹.
    pub observed_wavenumber_cm1: f64,
    /// Its standard uncertainty, cm⁻¹.
    pub observed_uncertainty_cm1: f64,
    /// Intensity as given.
    pub observed_intensity: Option<f64>,
    /// 1 = best; `None` for an unassigned line.
    pub rank: Option<usize>,
    /// The candidate, `None` for an unassigned line.
    pub candidate: Option<CandidateRecord>,
    /// Flags of the candidate (or `unassigned`).
    pub flags: Vec<Flag>,
    /// Pass-through columns of the line list.
    pub extra: Vec<String>,
}

/// The candidate part of an [`AssignmentRecord`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CandidateRecord {
    /// The spectrum.
    pub species: Species,
    /// Lower level.
    pub lower: LevelLabel,
    /// Its energy, cm⁻¹.
    pub lower_energy_cm1: f64,
    /// Upper level.
    pub upper: LevelLabel,
    /// Its energy, cm⁻¹.
    pub upper_energy_cm1: f64,
    /// Predicted vacuum wavenumber, cm⁻¹.
    pub predicted_wavenumber_cm1: f64,
    /// Its standard uncertainty with the model uncertainty, cm⁻¹.
    pub predicted_uncertainty_cm1: f64,
    /// The prediction in the unit and medium the observed line was given in (`None`
    /// when it cannot be expressed there, e.g. an air wavelength below 185 nm).
    pub predicted_in_given_unit: Option<f64>,
    /// The predicted relative strength ([`crate::levels::PredictedLine::relative_strength`]:
    /// gf for the lines of a level model), `None` when the predictions have none.
    pub predicted_strength: Option<f64>,
    /// g_k·A_ki, s⁻¹, from the published transition probability of the line
    /// ([`crate::levels::PredictedLine::transition_probability`]), `None` when none
    /// is published.
    #[serde(default)]
    pub ga_s1: Option<f64>,
    /// Observed − predicted, cm⁻¹.
    pub deviation_cm1: f64,
    /// Combined standard uncertainty, cm⁻¹.
    pub combined_uncertainty_cm1: f64,
    /// Deviation / combined uncertainty.
    pub deviation_sigma: f64,
    /// Chance-coincidence probability.
    pub chance_probability: f64,
    /// Rules applied to the predicted line.
    pub selection_rules: SelectionRules,
}

/// Flatten assignments into records, sorted by input row, then rank: the rows of
/// the assign CSV in memory, as [`read_assignments`] gives them back. The outputs
/// of `termsight assign` do not go through these records (they are written
/// straight from the assignments); they are for programs and tests.
///
/// `assignments` must come from [`super::assign_lines`] called with `list.lines`
/// and `predictions`; a candidate or line index out of range is left out.
pub fn records(
    list: &LineList,
    predictions: &Predictions,
    assignments: &[LineAssignment],
) -> Vec<AssignmentRecord> {
    let mut out = Vec::new();
    let mut order: Vec<&LineAssignment> = assignments.iter().collect();
    order.sort_by_key(|a| list.lines.get(a.observed).map_or(usize::MAX, |l| l.row));
    for assignment in order {
        let Some(observed) = list.lines.get(assignment.observed) else {
            continue;
        };
        let base = AssignmentRecord {
            line: observed.row,
            given: observed.given,
            observed_wavenumber_cm1: observed.wavenumber_cm1,
            observed_uncertainty_cm1: observed.uncertainty_cm1,
            observed_intensity: observed.intensity,
            rank: None,
            candidate: None,
            flags: vec![Flag::Unassigned],
            extra: observed.extra.clone(),
        };
        if assignment.candidates.is_empty() {
            out.push(base);
            continue;
        }
        for (rank, candidate) in assignment.candidates.iter().enumerate() {
            let Some(line) = predictions.lines().get(candidate.prediction) else {
                continue;
            };
            let Some((lower, upper)) = predictions.levels_of(line) else {
                continue;
            };
            let model_u = predictions.model_uncertainty_cm1(line.species);
            out.push(AssignmentRecord {
                rank: Some(rank + 1),
                flags: candidate.flags(line, assignment.is_blend()),
                candidate: Some(CandidateRecord {
                    species: line.species,
                    lower: lower.label.clone(),
                    lower_energy_cm1: lower.energy_cm1,
                    upper: upper.label.clone(),
                    upper_energy_cm1: upper.energy_cm1,
                    predicted_wavenumber_cm1: line.wavenumber_cm1,
                    predicted_uncertainty_cm1: line.uncertainty_cm1.hypot(model_u),
                    predicted_in_given_unit: predicted_in_given_unit(
                        line.wavenumber_cm1,
                        &observed.given,
                        list.air_formula,
                    ),
                    predicted_strength: line.relative_strength,
                    ga_s1: line.transition_probability.map(|t| t.ga_s1()),
                    deviation_cm1: candidate.deviation_cm1,
                    combined_uncertainty_cm1: candidate.combined_uncertainty_cm1,
                    deviation_sigma: candidate.deviation_sigma,
                    chance_probability: candidate.chance_probability,
                    selection_rules: line.rules,
                }),
                ..base.clone()
            });
        }
    }
    out
}

/// A vacuum wavenumber `sigma_cm1` in the unit and medium of `given` (converted to
/// air with `formula`); `None` when it cannot be expressed there.
pub fn predicted_in_given_unit(
    sigma_cm1: f64,
    given: &GivenPosition,
    formula: crate::units::AirFormula,
) -> Option<f64> {
    match given {
        GivenPosition::Wavenumber { .. } => Some(sigma_cm1),
        GivenPosition::Wavelength { unit, medium, .. } => {
            Wavelength::from_wavenumber_cm1(sigma_cm1, *unit, *medium, formula)
                .ok()
                .map(|w| w.value)
        }
    }
}

/// An assign CSV read back.
#[derive(Debug, Clone, PartialEq)]
pub struct AssignmentFile {
    /// Name of the source.
    pub source: String,
    /// Columns beyond [`ASSIGN_COLUMNS`], in file order (pass-through columns).
    pub extra_columns: Vec<String>,
    /// The rows, in file order.
    pub records: Vec<AssignmentRecord>,
}

/// An assign CSV that cannot be read; every variant names the place.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum AssignmentReadError {
    /// The text could not be read (I/O, bad UTF-8, broken quoting, too large).
    #[error("{location}: cannot read the assignments: {message}")]
    Unreadable {
        /// Where.
        location: Location,
        /// What went wrong.
        message: String,
    },
    /// No header line.
    #[error("{location}: the file is empty; expected a header line naming the assign columns")]
    Empty {
        /// The source.
        location: Location,
    },
    /// A required column is missing.
    #[error("{location}: no column '{column}' in the header")]
    MissingColumn {
        /// The header line.
        location: Location,
        /// The column.
        column: &'static str,
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

/// Largest assign CSV read back, in bytes (a million lines with a few candidates
/// each is well below it).
pub const MAX_ASSIGN_CSV_BYTES: u64 = 4 << 30;

/// Read an assign CSV as written by `termsight assign --format csv`: `#` comment
/// lines (the run's description) are skipped, the header must name at least the
/// columns the level optimisation needs (the line, the observed wavenumber and its
/// uncertainty, rank, species, both level labels and energies, the prediction, its
/// deviation, chance probability and flags); other columns of [`ASSIGN_COLUMNS`]
/// may be absent, and unknown columns are kept as pass-through fields.
pub fn read_assignments(
    mut reader: impl BufRead,
    source: &str,
) -> Result<AssignmentFile, AssignmentReadError> {
    let error = |e: CsvError| {
        let location = Location::line(source, e.line());
        match e {
            CsvError::Unreadable { message, .. } => {
                AssignmentReadError::Unreadable { location, message }
            }
            CsvError::Empty => AssignmentReadError::Empty { location },
            CsvError::FieldCount {
                expected, found, ..
            } => AssignmentReadError::FieldCount {
                location,
                expected,
                found,
            },
        }
    };
    let text = read_csv_text(&mut reader, MAX_ASSIGN_CSV_BYTES, "an assign CSV").map_err(error)?;
    let (header, rows) = csv_rows(&text).map_err(error)?;
    let CsvHeader {
        fields: header,
        line: header_line,
    } = header;
    let position = |name: &str| header.iter().position(|h| h == name);
    for column in REQUIRED {
        if position(column).is_none() {
            return Err(AssignmentReadError::MissingColumn {
                location: Location::line(source, header_line),
                column,
            });
        }
    }
    let index: Vec<Option<usize>> = ASSIGN_COLUMNS.iter().map(|c| position(c)).collect();
    let extra_index: Vec<usize> = (0..header.len())
        .filter(|&i| header.get(i).is_some_and(|h| !ASSIGN_COLUMNS.contains(&h)))
        .collect();
    let extra_columns = extra_index
        .iter()
        .filter_map(|&i| header.get(i).map(str::to_string))
        .collect();

    let mut records = Vec::new();
    for row in rows {
        let (line, row) = row.map_err(error)?;
        let fields = Fields {
            row: &row,
            index: &index,
            source,
            line,
        };
        let mut record = fields.record()?;
        record.extra = extra_index
            .iter()
            .map(|&i| row.get(i).unwrap_or("").to_string())
            .collect();
        records.push(record);
    }
    Ok(AssignmentFile {
        source: source.to_string(),
        extra_columns,
        records,
    })
}

/// Typed access to the fields of one row.
struct Fields<'a> {
    row: &'a csv::StringRecord,
    index: &'a [Option<usize>],
    source: &'a str,
    line: usize,
}

impl Fields<'_> {
    /// The text of column `name` ("" when the column is absent).
    fn text(&self, name: &str) -> &str {
        ASSIGN_COLUMNS
            .iter()
            .position(|c| *c == name)
            .and_then(|i| self.index.get(i).copied().flatten())
            .and_then(|i| self.row.get(i))
            .unwrap_or("")
    }

    fn bad(&self, column: &str, problem: String) -> AssignmentReadError {
        AssignmentReadError::BadField {
            location: Location::line(self.source, self.line).column(column),
            problem,
        }
    }

    fn number(&self, name: &str) -> Result<f64, AssignmentReadError> {
        let text = self.text(name);
        text.parse::<f64>()
            .ok()
            .filter(|v| !v.is_nan())
            .ok_or_else(|| self.bad(name, format!("'{text}' is not a number")))
    }

    fn optional_number(&self, name: &str) -> Result<Option<f64>, AssignmentReadError> {
        if self.text(name).is_empty() {
            Ok(None)
        } else {
            self.number(name).map(Some)
        }
    }

    fn label(&self, side: &str) -> Result<LevelLabel, AssignmentReadError> {
        let column = |part: &str| format!("{side}_{part}");
        LevelLabel::from_fields(
            self.text(&column("configuration")),
            self.text(&column("term")),
            self.text(&column("J")),
        )
        .map_err(|e| self.bad(&column(e.part), e.problem))
    }

    fn given(&self, observed_wavenumber: f64) -> Result<GivenPosition, AssignmentReadError> {
        let unit = self.text("given_unit");
        if unit.is_empty() {
            return Ok(GivenPosition::Wavenumber {
                value: observed_wavenumber,
            });
        }
        let value = self.number("given_value")?;
        if unit == "cm1" {
            return Ok(GivenPosition::Wavenumber { value });
        }
        let unit = LengthUnit::from_name(unit).ok_or_else(|| {
            self.bad(
                "given_unit",
                format!("'{unit}' is not a unit: expected nm, A, um or cm1"),
            )
        })?;
        let medium = Medium::from_name(self.text("given_medium")).ok_or_else(|| {
            self.bad(
                "given_medium",
                format!(
                    "'{}' is not a medium: expected air or vacuum",
                    self.text("given_medium")
                ),
            )
        })?;
        Ok(GivenPosition::Wavelength {
            value,
            unit,
            medium,
        })
    }

    fn record(&self) -> Result<AssignmentRecord, AssignmentReadError> {
        let line = self
            .text("line")
            .parse::<usize>()
            .ok()
            .filter(|&l| l > 0)
            .ok_or_else(|| {
                self.bad(
                    "line",
                    format!("'{}' is not a row number (1, 2, …)", self.text("line")),
                )
            })?;
        let observed_wavenumber_cm1 = self.number("observed_wavenumber_cm1")?;
        let flags = self
            .text("flags")
            .split(';')
            .filter(|f| !f.trim().is_empty())
            .map(|f| {
                Flag::from_name(f).ok_or_else(|| {
                    self.bad(
                        "flags",
                        format!(
                            "'{f}' is not a flag: expected {}",
                            Flag::ALL.map(|f| f.name()).join(", ")
                        ),
                    )
                })
            })
            .collect::<Result<Vec<_>, _>>()?;
        let rank_text = self.text("rank");
        let rank = if rank_text.is_empty() {
            None
        } else {
            Some(
                rank_text
                    .parse::<usize>()
                    .ok()
                    .filter(|&r| r > 0)
                    .ok_or_else(|| {
                        self.bad("rank", format!("'{rank_text}' is not a rank (1, 2, …)"))
                    })?,
            )
        };
        let candidate = match rank {
            None => None,
            Some(_) => Some(self.candidate()?),
        };
        Ok(AssignmentRecord {
            line,
            given: self.given(observed_wavenumber_cm1)?,
            observed_wavenumber_cm1,
            observed_uncertainty_cm1: self.number("observed_uncertainty_cm1")?,
            observed_intensity: self.optional_number("observed_intensity")?,
            rank,
            candidate,
            flags,
            extra: Vec::new(),
        })
    }

    fn candidate(&self) -> Result<CandidateRecord, AssignmentReadError> {
        let species = self
            .text("species")
            .parse::<Species>()
            .map_err(|e| self.bad("species", e.to_string()))?;
        let rules_text = self.text("selection_rules");
        let selection_rules = if rules_text.is_empty() {
            SelectionRules::ParityAndJ
        } else {
            SelectionRules::from_name(rules_text).ok_or_else(|| {
                self.bad(
                    "selection_rules",
                    format!("'{rules_text}' is not a rule set: expected LS or parity+J"),
                )
            })?
        };
        let deviation_cm1 = self.number("deviation_cm1")?;
        let deviation_sigma = self.number("deviation_sigma")?;
        let combined = match self.optional_number("combined_uncertainty_cm1")? {
            Some(u) => u,
            None => {
                let predicted = self.number("predicted_uncertainty_cm1")?;
                self.number("observed_uncertainty_cm1")?.hypot(predicted)
            }
        };
        Ok(CandidateRecord {
            species,
            lower: self.label("lower")?,
            lower_energy_cm1: self.number("lower_energy_cm1")?,
            upper: self.label("upper")?,
            upper_energy_cm1: self.number("upper_energy_cm1")?,
            predicted_wavenumber_cm1: self.number("predicted_wavenumber_cm1")?,
            predicted_uncertainty_cm1: self.number("predicted_uncertainty_cm1")?,
            predicted_in_given_unit: self.optional_number("predicted_in_given_unit")?,
            predicted_strength: self.optional_number("predicted_strength")?,
            ga_s1: self.optional_number("ga_s1")?,
            deviation_cm1,
            combined_uncertainty_cm1: combined,
            deviation_sigma,
            chance_probability: self.number("chance_probability")?,
            selection_rules,
        })
    }
}
