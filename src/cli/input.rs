//! Opening input files.

use std::fs::File;
use std::io::{self, BufRead, BufReader, Write};
use std::path::Path;

use super::CliError;
use crate::levels::{LevelTable, read_level_table};

/// The file at `path`, opened for buffered reading, with its name for messages; an
/// error names the path.
pub fn open_file(path: &Path) -> Result<(BufReader<File>, String), CliError> {
    let name = path.display().to_string();
    let file = File::open(path).map_err(|source| CliError::Io {
        path: name.clone(),
        source,
    })?;
    Ok((BufReader::new(file), name))
}

/// Standard input (named `<stdin>`) when `path` is `-`, else the file, as in
/// [`open_file`].
pub fn open_input(path: &Path) -> Result<(Box<dyn BufRead>, String), CliError> {
    if path.as_os_str() == "-" {
        Ok((Box::new(io::stdin().lock()), "<stdin>".into()))
    } else {
        let (reader, name) = open_file(path)?;
        Ok((Box::new(reader), name))
    }
}

/// Warnings of one level table printed on standard error, at most.
const WARNINGS_SHOWN: usize = 20;

/// The level table in the file at `path`; errors name the file. What the table
/// keeps but is odd (see [`LevelTable::warnings`]) is printed on standard error, each
/// with its line and column.
pub fn read_levels_file(path: &Path) -> Result<LevelTable, CliError> {
    let (reader, name) = open_file(path)?;
    let table = read_level_table(reader, &name).map_err(|e| CliError::Message(e.to_string()))?;
    let mut stderr = io::stderr().lock();
    for warning in table.warnings.iter().take(WARNINGS_SHOWN) {
        let _ = writeln!(stderr, "termsight: warning: {warning}");
    }
    if table.warnings.len() > WARNINGS_SHOWN {
        let _ = writeln!(
            stderr,
            "termsight: warning: {} more in {name}",
            table.warnings.len() - WARNINGS_SHOWN
        );
    }
    Ok(table)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_stdin_and_the_missing_file() {
        assert_eq!(open_input(Path::new("-")).unwrap().1, "<stdin>");
        let Err(err) = open_input(Path::new("/nonexistent-dir/x.csv")) else {
            panic!("a missing file opened");
        };
        assert!(err.to_string().starts_with("/nonexistent-dir/x.csv: "));
    }
}
