//! Where in an input file something was found, for error messages.
//!
//! Every reader of user files reports problems as `file:line: column 'name': what`,
//! so that the user can go straight to the offending field.

use std::fmt;

/// A place in a text input: file name (or `<stdin>`), 1-based line, and the
/// column (header name) or key when one applies.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    /// Name of the source as the user gave it (a path, `<stdin>`, or `<embedded He I>`).
    pub source: String,
    /// 1-based line number; 0 when the problem concerns the whole source.
    pub line: usize,
    /// The column or key, when the problem is in one field.
    pub field: Option<Field>,
}

/// One field of a row or document.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Field {
    /// A column of a table, by its header name (or 1-based index when there is no header).
    Column(String),
    /// A key of a TOML document, as a dotted path (`parameters.F2(2p,2p)`).
    Key(String),
}

impl Location {
    /// A location naming the whole source.
    pub fn source(source: impl Into<String>) -> Self {
        Location {
            source: source.into(),
            line: 0,
            field: None,
        }
    }

    /// A location naming one line of a source.
    pub fn line(source: impl Into<String>, line: usize) -> Self {
        Location {
            source: source.into(),
            line,
            field: None,
        }
    }

    /// The same location, narrowed to one column of a table.
    pub fn column(mut self, column: impl Into<String>) -> Self {
        self.field = Some(Field::Column(column.into()));
        self
    }

    /// The same location, narrowed to one key of a document.
    pub fn key(mut self, key: impl Into<String>) -> Self {
        self.field = Some(Field::Key(key.into()));
        self
    }
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.source)?;
        if self.line > 0 {
            write!(f, ":{}", self.line)?;
        }
        match &self.field {
            Some(Field::Column(name)) => write!(f, ": column '{name}'")?,
            Some(Field::Key(name)) => write!(f, ": key '{name}'")?,
            None => {}
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_names_file_line_and_column() {
        let loc = Location::line("lines.csv", 12).column("wavelength_nm");
        assert_eq!(loc.to_string(), "lines.csv:12: column 'wavelength_nm'");
        assert_eq!(Location::source("x.toml").to_string(), "x.toml");
        let key = Location::line("he.toml", 7).key("parameters.zeta(2p)");
        assert_eq!(key.to_string(), "he.toml:7: key 'parameters.zeta(2p)'");
    }
}
