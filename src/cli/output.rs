//! Writing result files safely.

use std::io::{self, Write};
use std::path::Path;

use super::CliError;

/// Write `bytes` to `path` through a temporary file in the same directory that is
/// renamed into place only when complete: an interrupted run never leaves a
/// partial output, and an existing file is replaced in one step.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<(), CliError> {
    let io_error = |source| CliError::Io {
        path: path.display().to_string(),
        source,
    };
    let dir = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let mut temp = tempfile::NamedTempFile::new_in(dir).map_err(io_error)?;
    temp.write_all(bytes).map_err(io_error)?;
    temp.as_file().sync_all().map_err(io_error)?;
    temp.persist(path).map_err(|e| io_error(e.error))?;
    Ok(())
}

/// Write `bytes` to the file at `path` as [`write_atomically`] does, or to standard
/// output when there is no path.
pub fn write_output(path: Option<&Path>, bytes: &[u8]) -> Result<(), CliError> {
    match path {
        Some(path) => write_atomically(path, bytes),
        None => io::stdout()
            .lock()
            .write_all(bytes)
            .map_err(|source| CliError::Io {
                path: "<stdout>".into(),
                source,
            }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_and_replaces_a_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        write_atomically(&path, b"first").unwrap();
        write_atomically(&path, b"second").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "second");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
    }

    #[test]
    fn missing_directory_names_the_path() {
        let err = write_atomically(Path::new("/nonexistent-dir/x.csv"), b"x").unwrap_err();
        assert!(err.to_string().contains("/nonexistent-dir/x.csv"));
    }
}
