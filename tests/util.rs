//! Helpers shared by the integration tests.

use std::path::PathBuf;

/// Path of a file under `tests/data/`.
pub fn data_path(relative: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(relative)
}

/// A CSV table of reference values: the column names and the rows, as text.
pub struct Table {
    /// Column names of the header.
    pub columns: Vec<String>,
    /// The data rows.
    pub rows: Vec<csv::StringRecord>,
}

impl Table {
    /// Read `tests/data/<relative>`, skipping its `#` comment lines (the source line
    /// the check tables start with). Panics with the path on any problem: a test
    /// without its data must fail, not pass.
    pub fn read(relative: &str) -> Table {
        let path = data_path(relative);
        let mut reader = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .from_path(&path)
            .unwrap_or_else(|error| panic!("{}: {error}", path.display()));
        let columns = reader
            .headers()
            .unwrap_or_else(|error| panic!("{}: {error}", path.display()))
            .iter()
            .map(str::to_string)
            .collect();
        let rows = reader
            .records()
            .collect::<Result<_, _>>()
            .unwrap_or_else(|error| panic!("{}: {error}", path.display()));
        Table { columns, rows }
    }

    /// The number in column `name` of `row`.
    pub fn number(&self, row: &csv::StringRecord, name: &str) -> f64 {
        let index = self
            .columns
            .iter()
            .position(|column| column == name)
            .unwrap_or_else(|| panic!("no column {name} in {:?}", self.columns));
        let text = row.get(index).unwrap_or_default();
        text.parse()
            .unwrap_or_else(|_| panic!("column {name}: '{text}' is not a number"))
    }
}
