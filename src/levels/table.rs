//! Level tables: reading `species,configuration,term,J,energy_cm1,uncertainty_cm1,source`.

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

/// How a level's energy is known, as the compilations mark it.
///
/// In a level table the marks are written in the `energy_cm1` field, as the
/// compilations print them: `[87846.9]` for a value not from experiment (calculated,
/// extrapolated or derived), `142080.75+x` for a value relative to an unknown offset
/// x (a system of levels not connected to the ground level by observed lines), or
/// both, `[131000.00]+x`; or in an optional column `energy_status` (`bracketed`,
/// `+x`, `bracketed +x`), as the compiled tables do.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub struct EnergyStatus {
    /// Printed in brackets: not from experiment.
    pub bracketed: bool,
    /// The letter of the unknown offset (`x`, `y`, …) the value is relative to;
    /// `None` for a value above the ground level.
    pub offset: Option<char>,
}

impl EnergyStatus {
    /// A measured value above the ground level.
    pub const MEASURED: EnergyStatus = EnergyStatus {
        bracketed: false,
        offset: None,
    };

    /// Whether a line between levels of these two statuses has a known position:
    /// both absolute, or both relative to the same offset (which then cancels).
    pub fn combines_with(self, other: EnergyStatus) -> bool {
        self.offset == other.offset
    }

    /// The energy as a level table writes it: `[value]`, `value+x`.
    pub fn write(self, value: &str) -> String {
        let mut text = if self.bracketed {
            format!("[{value}]")
        } else {
            value.to_string()
        };
        if let Some(letter) = self.offset {
            text.push('+');
            text.push(letter);
        }
        text
    }
}

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
    /// Whether the energy is measured and above the ground level (the marks of the
    /// `energy_cm1` field).
    #[serde(default)]
    pub energy_status: EnergyStatus,
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
    /// What is odd in the table but kept (the table is the authority): labels whose
    /// term parity disagrees with the configuration or whose J the term does not
    /// allow, negative energies. Each names the line and column.
    #[serde(skip)]
    pub warnings: Vec<TableWarning>,
}

/// Something odd in a level table that is kept, with its place.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{location}: {problem}")]
pub struct TableWarning {
    /// The row and column.
    pub location: Location,
    /// What is odd, and what is done with it.
    pub problem: String,
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
    let mut warnings = Vec::new();
    // FxHash: the labels are the table's own, not adversarial keys, and SipHash was a
    // quarter of the start-up time of `assign` with every compiled table.
    let mut first_seen: rustc_hash::FxHashMap<(Species, LevelLabel), usize> =
        rustc_hash::FxHashMap::default();
    for record in records {
        let (line, record) = record.map_err(error)?;
        let level = read_row(&record, &columns, source, line, &mut warnings)?;
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
        warnings,
    })
}

/// Positions of the required columns in the header, and of the optional
/// `energy_status`.
struct Columns {
    index: [usize; 7],
    energy_status: Option<usize>,
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
        let energy_status = header
            .iter()
            .position(|h| h.eq_ignore_ascii_case("energy_status"));
        Ok(Columns {
            index,
            energy_status,
        })
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
    warnings: &mut Vec<TableWarning>,
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
    for warning in label.warnings().into_iter().chain(label.unformable_term()) {
        warnings.push(TableWarning {
            location: Location::line(source, line).column(warning.part),
            problem: format!("{}; the level is kept", warning.problem),
        });
    }
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
    let (energy_text, mut energy_status) = energy_marks(field(4));
    let status_text = columns
        .energy_status
        .and_then(|i| record.get(i))
        .unwrap_or("");
    for word in status_text.split_whitespace() {
        match word.strip_prefix('+') {
            None if word == "bracketed" => energy_status.bracketed = true,
            Some(letter) if letter.len() == 1 && letter.chars().all(|c| c.is_ascii_lowercase()) => {
                energy_status.offset = letter.chars().next();
            }
            _ => {
                return Err(bad(
                    "energy_status",
                    format!(
                        "'{word}' is not an energy status: expected bracketed (not from \
                         experiment) and/or +x (relative to an unknown offset x)"
                    ),
                ));
            }
        }
    }
    let energy_cm1 = number(energy_text).ok_or_else(|| {
        bad(
            "energy_cm1",
            format!("'{}' is not an energy: expected a number in cm-1", field(4)),
        )
    })?;
    if energy_cm1 < 0.0 {
        warnings.push(TableWarning {
            location: Location::line(source, line).column("energy_cm1"),
            problem: format!(
                "the energy {energy_cm1} cm-1 is below the ground level (energies are counted \
                 from the ground level up); the level is kept as given"
            ),
        });
    }
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
        energy_status,
    })
}

/// The number inside an energy field and the compilation's marks around it:
/// `[87846.9]` (not from experiment), `142080.75+x` (relative to the offset x).
fn energy_marks(text: &str) -> (&str, EnergyStatus) {
    let mut rest = text.trim();
    let mut status = EnergyStatus::MEASURED;
    let mut chars = rest.chars().rev();
    if let (Some(letter), Some('+')) = (chars.next(), chars.next())
        && letter.is_ascii_lowercase()
    {
        status.offset = Some(letter);
        rest = &rest[..rest.len() - 2];
    }
    if let Some(inner) = rest.strip_prefix('[').and_then(|r| r.strip_suffix(']')) {
        status.bracketed = true;
        rest = inner;
    }
    (rest.trim(), status)
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
    fn odd_labels_and_negative_energies_are_kept_with_warnings() {
        // The published table is the authority (shared/reference-data SOURCES.md:
        // Al I and Fe I print terms whose parity disagrees with the configuration, N I
        // and Al I J values the term does not allow): such rows are kept, and a
        // warning names the line and column. The same holds for a user's table.
        let t = read(
            "He I,1s.2p,3P,1,1.0,0.1,x\n\
             He I,1s.2p,3P*,3,2.0,0.1,x\n\
             He I,1s.3p,1P*,1,-5.0,0.1,x\n",
        )
        .unwrap();
        assert_eq!(t.levels.len(), 3);
        let w: Vec<String> = t.warnings.iter().map(|w| w.to_string()).collect();
        assert_eq!(w.len(), 3, "{w:?}");
        assert!(
            w[0].starts_with("t.csv:2: column 'term': term 3P is even"),
            "{}",
            w[0]
        );
        assert!(
            w[1].starts_with("t.csv:3: column 'J': J = 3 is not possible"),
            "{}",
            w[1]
        );
        assert!(
            w[2].starts_with("t.csv:4: column 'energy_cm1': the energy -5"),
            "{}",
            w[2]
        );
    }

    #[test]
    fn energy_marks_of_the_compilations_are_read() {
        // NIST ASD prints values not from experiment in brackets and values relative
        // to an unknown offset with +x (N I sextets, shared/reference-data SOURCES.md).
        let t = read(
            "N I,2s2.2p3,4S*,3/2,0.000,0,x\n\
             N I,2s.2p3.(5S*).3s,6S*,5/2,[131000.00]+x,0.01,x\n\
             N I,2s.2p3.(5S*).3p,6P,3/2,142080.75+x,0.01,x\n\
             N I,2s2.2p2.(3P).6d,4P,1/2,[107800.1],0.1,x\n",
        )
        .unwrap();
        let status: Vec<EnergyStatus> = t.levels.iter().map(|l| l.energy_status).collect();
        assert_eq!(status[0], EnergyStatus::MEASURED);
        assert_eq!((status[1].bracketed, status[1].offset), (true, Some('x')));
        assert_eq!((status[2].bracketed, status[2].offset), (false, Some('x')));
        assert_eq!((status[3].bracketed, status[3].offset), (true, None));
        assert_eq!(t.levels[1].energy_cm1, 131000.0);
        assert!(status[1].combines_with(status[2]) && !status[0].combines_with(status[2]));
        assert_eq!(status[1].write("131000.00"), "[131000.00]+x");
        let column = read_level_table(
            "species,configuration,term,J,energy_cm1,uncertainty_cm1,source,energy_status\n\
             N I,2s.2p3.(5S*).3s,6S*,5/2,131000.00,0.01,x,bracketed +x\n\
             N I,2s2.2p3,4S*,3/2,0.000,0,x,\n"
                .as_bytes(),
            "t.csv",
        )
        .unwrap();
        assert_eq!(column.levels[0].energy_status, status[1]);
        assert_eq!(column.levels[1].energy_status, EnergyStatus::MEASURED);
        let e = read_level_table(
            "species,configuration,term,J,energy_cm1,uncertainty_cm1,source,energy_status\n\
             N I,2s2.2p3,4S*,3/2,0.000,0,x,calculated\n"
                .as_bytes(),
            "t.csv",
        )
        .unwrap_err();
        assert!(
            e.to_string().starts_with("t.csv:2: column 'energy_status'"),
            "{e}"
        );
        assert!(read("N I,2s2.2p3,4S*,3/2,[1.0,0,x\n").is_err());
        assert!(read("N I,2s2.2p3,4S*,3/2,1.0+,0,x\n").is_err());
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
