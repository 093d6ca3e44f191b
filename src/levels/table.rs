//! Level tables: reading `species,configuration,term,J,energy_cm1,uncertainty_cm1,source`.

use std::collections::HashMap;
use std::io::BufRead;

use serde::{Deserialize, Serialize};

use super::csv_text::{CsvError, CsvHeader, csv_rows, read_csv_text};
use super::label::LevelLabel;
use crate::location::Location;
use crate::notation::Species;

/// The columns of a level table, in the order they are written.
pub const LEVEL_COLUMNS: [&str; 7] = [
    "species",
    "configuration",
    "term",
    "J",
    "energy_cm1",
    "uncertainty_cm1",
    "source",
];

/// One level of a spectrum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Level {
    /// The spectrum the level belongs to.
    pub species: Species,
    /// Configuration, term and J.
    pub label: LevelLabel,
    /// Energy above the ground level, cm⁻¹ (E/hc).
    pub energy_cm1: f64,
    /// Standard uncertainty of the energy, cm⁻¹ (≥ 0; 0 for the ground level,
    /// which is the zero of the scale by definition).
    pub uncertainty_cm1: f64,
    /// Where the value comes from (a citation, or a note such as `calculated`).
    pub source: String,
}

/// A table of levels, of one spectrum or several, in the order read.
///
/// Within one species no label occurs twice, so `(species, label)` identifies a level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelTable {
    /// Name of the source: a path, or `<embedded He I>` for a built-in table.
    pub source: String,
    /// The levels, in the order read.
    pub levels: Vec<Level>,
}

impl LevelTable {
    /// The species in the table, in order of first appearance.
    pub fn species(&self) -> Vec<Species> {
        let mut seen = Vec::new();
        for level in &self.levels {
            if !seen.contains(&level.species) {
                seen.push(level.species);
            }
        }
        seen
    }

    /// The levels of one species, in table order.
    pub fn of_species(&self, species: Species) -> impl Iterator<Item = &Level> + '_ {
        self.levels.iter().filter(move |l| l.species == species)
    }

    /// The level of `species` with `label`, if the table has it.
    pub fn find(&self, species: Species, label: &LevelLabel) -> Option<&Level> {
        self.levels
            .iter()
            .find(|l| l.species == species && &l.label == label)
    }

    /// The table without the levels of species that `keep` rejects.
    pub fn retain_species(mut self, keep: impl Fn(Species) -> bool) -> LevelTable {
        self.levels.retain(|l| keep(l.species));
        self
    }
}

/// A level table that cannot be read. Every variant names the place: the file, the
/// line and, for a bad field, the column.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum LevelTableError {
    /// The text could not be read (an I/O error, bad UTF-8, broken quoting).
    #[error("{location}: cannot read the level table: {message}")]
    Unreadable {
        /// Where.
        location: Location,
        /// What the reader reported.
        message: String,
    },
    /// The source has no header line, or no level after it.
    #[error("{location}: {problem}")]
    Empty {
        /// The source (line 0) or the header line.
        location: Location,
        /// What is missing.
        problem: String,
    },
    /// A required column is not in the header.
    #[error(
        "{location}: no column '{column}' in the header; a level table has the columns {}",
        LEVEL_COLUMNS.join(",")
    )]
    MissingColumn {
        /// The header line.
        location: Location,
        /// The missing column.
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
    /// A field that is not a valid value for its column.
    #[error("{location}: {problem}")]
    BadField {
        /// The row and column.
        location: Location,
        /// What is wrong and what was expected.
        problem: String,
    },
    /// The same level (species and label) twice.
    #[error("{location}: level {species} {label} is already given on line {first_line}")]
    Duplicate {
        /// The second occurrence.
        location: Location,
        /// The species.
        species: Species,
        /// The label.
        label: Box<LevelLabel>,
        /// Line of the first occurrence.
        first_line: usize,
    },
}

/// Read a level table in CSV with a header naming the columns of [`LEVEL_COLUMNS`]
/// (in any order; other columns are ignored). Lines starting with `#` are comments;
/// spaces around fields are ignored.
///
/// Each row is checked: the species (`He I`) and the label as in
/// [`LevelLabel::from_fields`], J possible for the species' electron count, the
/// energy a finite number (cm⁻¹), the uncertainty a finite number ≥ 0 (cm⁻¹), no level
/// given twice. The first problem is returned, naming `source`, the line and the
/// column.
///
/// ```
/// use termsight::levels::read_level_table;
/// let text = "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
///             He I,1s2,1S,0,0,0,ground\n\
///             He I,1s.2p,1P*,1,171134.896946,0.000001,demo\n";
/// let table = read_level_table(text.as_bytes(), "demo.csv").unwrap();
/// assert_eq!(table.levels.len(), 2);
/// assert_eq!(table.levels[1].label.to_string(), "1s.2p 1P° 1");
/// ```
pub fn read_level_table(
    mut reader: impl BufRead,
    source: &str,
) -> Result<LevelTable, LevelTableError> {
    let error = |e: CsvError| {
        let location = Location::line(source, e.line());
        match e {
            CsvError::Unreadable { message, .. } => {
                LevelTableError::Unreadable { location, message }
            }
            CsvError::Empty => LevelTableError::Empty {
                location,
                problem: format!(
                    "the level table is empty; expected a header line {}",
                    LEVEL_COLUMNS.join(",")
                ),
            },
            CsvError::FieldCount {
                expected, found, ..
            } => LevelTableError::FieldCount {
                location,
                expected,
                found,
            },
        }
    };
    let text = read_csv_text(&mut reader, MAX_LEVEL_TABLE_BYTES, "a level table").map_err(error)?;
    let (header, records) = csv_rows(&text).map_err(error)?;
    let CsvHeader {
        fields: header,
        line: header_line,
    } = header;
    let columns = Columns::find(&header, || Location::line(source, header_line))?;

    let mut levels = Vec::new();
    let mut first_seen: HashMap<(Species, LevelLabel), usize> = HashMap::new();
    for record in records {
        let (line, record) = record.map_err(error)?;
        let level = read_row(&record, &columns, source, line)?;
        let key = (level.species, level.label.clone());
        if let Some(&first_line) = first_seen.get(&key) {
            return Err(LevelTableError::Duplicate {
                location: Location::line(source, line),
                species: level.species,
                label: Box::new(level.label),
                first_line,
            });
        }
        first_seen.insert(key, line);
        levels.push(level);
    }
    if levels.is_empty() {
        return Err(LevelTableError::Empty {
            location: Location::line(source, header_line),
            problem: "the level table has a header but no levels".into(),
        });
    }
    Ok(LevelTable {
        source: source.to_string(),
        levels,
    })
}

/// Positions of the required columns in the header.
struct Columns {
    index: [usize; 7],
}

impl Columns {
    fn find(
        header: &csv::StringRecord,
        location: impl Fn() -> Location,
    ) -> Result<Columns, LevelTableError> {
        let mut index = [0; 7];
        for (slot, name) in index.iter_mut().zip(LEVEL_COLUMNS) {
            let position = header.iter().position(|h| h.eq_ignore_ascii_case(name));
            *slot = position.ok_or_else(|| LevelTableError::MissingColumn {
                location: location(),
                column: name,
            })?;
        }
        Ok(Columns { index })
    }

    /// The field of column `LEVEL_COLUMNS[which]`.
    fn get<'r>(&self, record: &'r csv::StringRecord, which: usize) -> &'r str {
        self.index
            .get(which)
            .and_then(|&i| record.get(i))
            .unwrap_or("")
    }
}

fn read_row(
    record: &csv::StringRecord,
    columns: &Columns,
    source: &str,
    line: usize,
) -> Result<Level, LevelTableError> {
    let field = |which: usize| columns.get(record, which);
    let bad = |column: &str, problem: String| LevelTableError::BadField {
        location: Location::line(source, line).column(column),
        problem,
    };
    let species: Species = field(0)
        .parse()
        .map_err(|e| bad("species", format!("{e}")))?;
    let label = LevelLabel::from_fields(field(1), field(2), field(3))
        .map_err(|e| bad(e.part, e.problem))?;
    if !label.j_fits(species) {
        return Err(bad(
            "J",
            format!(
                "J = {} is impossible for {species}, which has {} electrons (J is a \
                 half-integer exactly when the electron count is odd)",
                label.j,
                species.electron_count()
            ),
        ));
    }
    let energy_cm1 = number(field(4)).ok_or_else(|| {
        bad(
            "energy_cm1",
            format!("'{}' is not an energy: expected a number in cm-1", field(4)),
        )
    })?;
    let uncertainty_cm1 = number(field(5)).filter(|u| *u >= 0.0).ok_or_else(|| {
        bad(
            "uncertainty_cm1",
            format!(
                "'{}' is not an uncertainty: expected a number ≥ 0 in cm-1",
                field(5)
            ),
        )
    })?;
    for (column, value) in [
        ("energy_cm1", energy_cm1),
        ("uncertainty_cm1", uncertainty_cm1),
    ] {
        if value.abs() > MAX_CM1 {
            return Err(bad(
                column,
                format!("'{value:e}' is out of range: expected at most 1e150 cm-1 in size"),
            ));
        }
    }
    Ok(Level {
        species,
        label,
        energy_cm1,
        uncertainty_cm1,
        source: field(6).to_string(),
    })
}

/// Largest level table accepted, in bytes: far above the largest compiled tables
/// (about a megabyte), low enough that a wrong file fails quickly.
pub const MAX_LEVEL_TABLE_BYTES: u64 = 64 << 20;

/// A finite number, or `None`.
/// The largest energy or uncertainty a level table may give, cm⁻¹: far beyond any
/// atomic level, yet small enough that squares and sums of squares stay finite
/// (1e300 would make the uncertainties of the predicted lines infinite).
const MAX_CM1: f64 = 1e150;

fn number(text: &str) -> Option<f64> {
    text.parse::<f64>().ok().filter(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    const HEADER: &str = "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n";

    fn read(body: &str) -> Result<LevelTable, LevelTableError> {
        read_level_table(format!("{HEADER}{body}").as_bytes(), "t.csv")
    }

    #[test]
    fn reads_rows_comments_and_any_column_order() {
        let text = "# a comment\n\
                    source,J,term,configuration,species,uncertainty_cm1,energy_cm1,extra\n\
                    # another\n\
                    x,1,3P*,1s.2p,He I,0.001,169086.843,ignored\n";
        let table = read_level_table(text.as_bytes(), "t.csv").unwrap();
        let level = &table.levels[0];
        assert_eq!(level.label.to_string(), "1s.2p 3P° 1");
        assert_eq!(level.species.to_string(), "He I");
        assert_eq!(
            (level.energy_cm1, level.uncertainty_cm1),
            (169086.843, 0.001)
        );
        assert_eq!(level.source, "x");
    }

    #[test]
    fn errors_name_file_line_and_column() {
        let e = read("He I,1s.2p,3P*,1,abc,0.1,x\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.csv:2: column 'energy_cm1': 'abc' is not an energy: expected a number in cm-1"
        );
        let e = read("He I,1s.2p,3P*,1,1.0,-0.1,x\n").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("t.csv:2: column 'uncertainty_cm1'"),
            "{e}"
        );
        let e = read("He I,1s.2p,3P*,1,NaN,0.1,x\n").unwrap_err();
        assert!(
            e.to_string().starts_with("t.csv:2: column 'energy_cm1'"),
            "{e}"
        );
        let e = read("He I,1s.2p,3P,1,1.0,0.1,x\n").unwrap_err();
        assert!(e.to_string().starts_with("t.csv:2: column 'term'"), "{e}");
        let e = read("He I,1s.2p,3P*,3,1.0,0.1,x\n").unwrap_err();
        assert!(e.to_string().starts_with("t.csv:2: column 'J'"), "{e}");
        let e = read("He I,1s.2p,3P*,,1.0,0.1,x\n").unwrap_err();
        assert!(e.to_string().starts_with("t.csv:2: column 'J'"), "{e}");
        let e = read("Hx I,1s.2p,3P*,1,1.0,0.1,x\n").unwrap_err();
        assert!(
            e.to_string().starts_with("t.csv:2: column 'species'"),
            "{e}"
        );
        let e = read("He I,1s.2p,3P*,1,1.0\n").unwrap_err();
        assert_eq!(e.to_string(), "t.csv:2: 5 fields where the header has 7");
    }

    // Malformed-input check (common practice, no source): a finite but absurd energy
    // or uncertainty (1e300: its square overflows) is refused at its line and column.
    #[test]
    fn absurdly_large_numbers_are_refused() {
        let e = read("He I,1s.2p,3P*,1,1e300,0.1,x\n").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("t.csv:2: column 'energy_cm1': '1e300' is out of range"),
            "{e}"
        );
        let e = read("He I,1s.2p,3P*,1,169086.77,1e308,x\n").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("t.csv:2: column 'uncertainty_cm1': '1e308' is out of range"),
            "{e}"
        );
        assert!(read("He I,1s.2p,3P*,1,169086.77,1e150,x\n").is_ok());
    }

    #[test]
    fn half_integer_j_in_helium_is_refused() {
        // He has two electrons, so J is an integer (common practice, no source).
        let e = read("He I,1s.2p,2P*,1/2,1.0,0.1,x\n").unwrap_err();
        assert!(e.to_string().contains("He I, which has 2 electrons"), "{e}");
    }

    #[test]
    fn duplicate_levels_name_both_lines() {
        let e = read("He I,1s.2p,3P*,1,1.0,0.1,x\nHe I,1s.2p,3P°,1,1.0,0.1,y\n").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("t.csv:3: level He I 1s.2p 3P° 1 is already given on line 2"),
            "{e}"
        );
        // The same label in another species is a different level.
        let ok = read("He I,1s.2p,3P*,1,1.0,0.1,x\nLi II,1s.2p,3P°,1,1.0,0.1,y\n").unwrap();
        assert_eq!(ok.species().len(), 2);
    }

    #[test]
    fn empty_header_only_and_missing_columns() {
        let e = read_level_table("".as_bytes(), "t.csv").unwrap_err();
        assert!(matches!(e, LevelTableError::Empty { .. }), "{e}");
        let e = read_level_table("# only a comment\n".as_bytes(), "t.csv").unwrap_err();
        assert!(matches!(e, LevelTableError::Empty { .. }), "{e}");
        let e = read("").unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.csv:1: the level table has a header but no levels"
        );
        let e = read_level_table("species,term,J\n".as_bytes(), "t.csv").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("t.csv:1: no column 'configuration' in the header"),
            "{e}"
        );
    }

    #[test]
    fn line_numbers_count_comment_lines() {
        let e = read_level_table(
            format!("# c\n{HEADER}# c\n\nHe I,1s.2p,3P*,1,x,0.1,s\n").as_bytes(),
            "t.csv",
        )
        .unwrap_err();
        assert!(e.to_string().starts_with("t.csv:5:"), "{e}");
    }

    #[test]
    fn bad_utf8_is_an_error_with_a_line() {
        let mut bytes = HEADER.as_bytes().to_vec();
        bytes.extend_from_slice(b"He I,1s.2p,3P*,1,1.0,0.1,\xff\xfe\n");
        let e = read_level_table(bytes.as_slice(), "t.csv").unwrap_err();
        assert!(e.to_string().starts_with("t.csv:2: cannot read"), "{e}");
    }
}
