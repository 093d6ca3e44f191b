//! Writing result files safely.

use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use super::CliError;

/// Bytes buffered before a write reaches the file.
const BUFFER_BYTES: usize = 1 << 20;

/// Write `bytes` to `path` through a temporary file in the same directory that is
/// renamed into place only when complete: an interrupted run never leaves a
/// partial output, and an existing file is replaced in one step, keeping its
/// permissions. A symbolic link is followed (the file it points to is replaced, not
/// the link), and a path that is not a regular file (`/dev/null`, `/dev/stdout`, a
/// named pipe) is written to in place rather than replaced.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<(), CliError> {
    write_atomically_with(path, |out| out.write_all(bytes))
}

/// [`write_atomically`] for an output written piece by piece: `write` gets a
/// buffered writer on the temporary file (or on the device), and the file is
/// renamed into place only when `write` has returned without error.
pub fn write_atomically_with(
    path: &Path,
    write: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> Result<(), CliError> {
    let io_error = |source| CliError::Io {
        path: path.display().to_string(),
        source,
    };
    let existing = fs::metadata(path).ok();
    if let Some(meta) = &existing {
        if meta.is_dir() {
            return Err(CliError::Message(format!(
                "{}: is a directory; give a file name for the output",
                path.display()
            )));
        }
        if !meta.is_file() {
            let mut file = fs::OpenOptions::new()
                .write(true)
                .open(path)
                .map_err(io_error)?;
            return buffered(&mut file, write).map_err(io_error);
        }
    }
    let is_link = fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink());
    let target: PathBuf = if is_link {
        match fs::canonicalize(path) {
            Ok(target) => target,
            // A link to a file that does not exist yet: create it through the link.
            Err(_) => {
                let mut file = fs::File::create(path).map_err(io_error)?;
                return buffered(&mut file, write).map_err(io_error);
            }
        }
    } else {
        path.to_path_buf()
    };
    let dir = match target.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    // Name the directory the user's path is in, not the temporary file, when it
    // cannot take the output.
    if let Err(e) = fs::metadata(dir) {
        return Err(io_error(io::Error::new(
            e.kind(),
            format!("cannot write into the directory {}: {e}", dir.display()),
        )));
    }
    let mut builder = tempfile::Builder::new();
    #[cfg(unix)]
    {
        // A new file gets the usual 0666 less the umask, not the temporary file's 0600.
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(fs::Permissions::from_mode(0o666));
    }
    let mut temp = builder
        .tempfile_in(dir)
        .map_err(|e| io_error(without_temporary_name(e)))?;
    // On an error the temporary file is removed when `temp` is dropped.
    buffered(temp.as_file_mut(), write).map_err(io_error)?;
    if let Some(meta) = &existing {
        temp.as_file()
            .set_permissions(meta.permissions())
            .map_err(io_error)?;
    }
    temp.as_file().sync_all().map_err(io_error)?;
    temp.persist(&target).map_err(|e| io_error(e.error))?;
    Ok(())
}

/// `error` without the name of the temporary file: the errors of `tempfile` end in
/// ` at path "/dir/.tmpXXXX"`, a file the user never named (the message names the
/// user's path instead). `tempfile` keeps the inner error private, so its text is
/// cut.
fn without_temporary_name(error: io::Error) -> io::Error {
    let text = error.to_string();
    match text.split_once(" at path ") {
        Some((head, _)) => io::Error::new(error.kind(), head.to_string()),
        None => error,
    }
}

/// Run `write` on a buffered writer on `file`, then flush it.
fn buffered(
    file: &mut fs::File,
    write: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> io::Result<()> {
    let mut out = io::BufWriter::with_capacity(BUFFER_BYTES, file);
    write(&mut out)?;
    out.flush()
}

/// Write `bytes` to the file at `path` as [`write_atomically`] does, or to standard
/// output when there is no path.
pub fn write_output(path: Option<&Path>, bytes: &[u8]) -> Result<(), CliError> {
    write_output_with(path, |out| out.write_all(bytes))
}

/// [`write_output`] for an output written piece by piece (see
/// [`write_atomically_with`]); standard output is buffered too.
pub fn write_output_with(
    path: Option<&Path>,
    write: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> Result<(), CliError> {
    match path {
        Some(path) => write_atomically_with(path, write),
        None => {
            let mut out = io::BufWriter::with_capacity(BUFFER_BYTES, io::stdout().lock());
            write(&mut out)
                .and_then(|()| out.flush())
                .map_err(|source| CliError::Io {
                    path: "<stdout>".into(),
                    source,
                })
        }
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

    // Malformed-input checks (common practice, no source): an output path that is a
    // symbolic link, a device or a directory must not be replaced by a plain file.
    #[cfg(unix)]
    #[test]
    fn follows_a_symbolic_link_instead_of_replacing_it() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("target.csv");
        let link = dir.path().join("link.csv");
        std::fs::write(&target, "old").unwrap();
        std::os::unix::fs::symlink(&target, &link).unwrap();
        write_atomically(&link, b"new").unwrap();
        assert!(
            std::fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new");
    }

    // Not the real /dev/null: a test run as root that broke this would replace it.
    // A named pipe of the test's own is a file that is not a regular file too.
    #[cfg(unix)]
    #[test]
    fn writes_into_a_named_pipe_in_place() {
        use std::io::Read;
        let dir = tempfile::tempdir().unwrap();
        let fifo = dir.path().join("pipe");
        let made = std::process::Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .unwrap();
        assert!(made.success());
        let reader = {
            let fifo = fifo.clone();
            std::thread::spawn(move || {
                let mut text = String::new();
                std::fs::File::open(&fifo)
                    .unwrap()
                    .read_to_string(&mut text)
                    .unwrap();
                text
            })
        };
        write_atomically(&fifo, b"through the pipe").unwrap();
        assert_eq!(reader.join().unwrap(), "through the pipe");
        let meta = std::fs::symlink_metadata(&fifo).unwrap();
        assert!(!meta.is_file(), "the pipe was replaced by a regular file");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
    }

    // Common practice, no source: a file replaced atomically is untouched until the
    // new one is complete, and the new one is a new file renamed into place (a
    // write in place would keep the inode and show a truncated file meanwhile).
    #[cfg(unix)]
    #[test]
    fn the_old_file_stays_whole_while_the_new_one_is_written() {
        use std::os::unix::fs::MetadataExt;
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        std::fs::write(&path, "old").unwrap();
        let inode = std::fs::metadata(&path).unwrap().ino();
        // More than the buffer, so that bytes reach the disk before the end.
        let big = vec![b'x'; 2 * BUFFER_BYTES + 1];
        let result = write_atomically_with(&path, |out| {
            out.write_all(&big)?;
            out.flush()?;
            assert_eq!(std::fs::read_to_string(&path).unwrap(), "old");
            Err(io::Error::other("killed midway"))
        });
        assert!(result.is_err());
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "old");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
        write_atomically(&path, &big).unwrap();
        assert_eq!(std::fs::metadata(&path).unwrap().len(), big.len() as u64);
        assert_ne!(std::fs::metadata(&path).unwrap().ino(), inode);
    }

    #[cfg(unix)]
    #[test]
    fn keeps_the_permissions_of_a_replaced_file() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        std::fs::write(&path, "old").unwrap();
        std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o640)).unwrap();
        write_atomically(&path, b"new").unwrap();
        let mode = std::fs::metadata(&path).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o640);
    }

    #[test]
    fn refuses_a_directory_naming_it() {
        let dir = tempfile::tempdir().unwrap();
        let err = write_atomically(dir.path(), b"x").unwrap_err();
        assert!(err.to_string().contains(&dir.path().display().to_string()));
        assert!(dir.path().is_dir());
    }

    #[test]
    fn a_failed_write_leaves_neither_the_file_nor_a_temporary_one() {
        // Common practice, no source: an output that fails half-way is not left
        // behind, and the file it would have replaced is kept.
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        std::fs::write(&path, "old").unwrap();
        let result = write_atomically_with(&path, |out| {
            out.write_all(b"half")?;
            Err(io::Error::other("interrupted"))
        });
        assert!(result.is_err());
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "old");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
    }

    #[test]
    fn missing_directory_names_the_path() {
        let err = write_atomically(Path::new("/nonexistent-dir/x.csv"), b"x").unwrap_err();
        let text = err.to_string();
        assert!(text.starts_with("/nonexistent-dir/x.csv: "), "{text}");
        // Not the temporary file the user never named.
        assert!(!text.contains(".tmp"), "{text}");
    }

    #[cfg(unix)]
    #[test]
    fn an_unwritable_directory_names_the_path_not_the_temporary_file() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let locked = dir.path().join("locked");
        std::fs::create_dir(&locked).unwrap();
        std::fs::set_permissions(&locked, std::fs::Permissions::from_mode(0o500)).unwrap();
        let path = locked.join("x.csv");
        let result = write_atomically(&path, b"x");
        std::fs::set_permissions(&locked, std::fs::Permissions::from_mode(0o700)).unwrap();
        // Root may write anyway; then there is no message to check.
        if let Err(err) = result {
            let text = err.to_string();
            assert!(text.starts_with(&path.display().to_string()), "{text}");
            assert!(!text.contains(".tmp"), "{text}");
        }
    }
}
