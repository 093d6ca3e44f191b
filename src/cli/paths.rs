//! Refusing output paths that would destroy an input or another output of the same
//! run: an output is compared with every input file, and the outputs with each
//! other, by identity of the file (device and inode on Unix, canonical path
//! elsewhere and for files that do not exist yet).

use std::fs;
use std::path::{Component, Path, PathBuf};

use super::CliError;

/// One file of a run, named as the option that gave it for messages.
#[derive(Debug, Clone, Copy)]
pub struct NamedPath<'a> {
    /// The option or argument, e.g. `--output`, `LINES`.
    pub option: &'a str,
    /// The path as the user gave it.
    pub path: &'a Path,
}

/// Refuse an output that is one of the inputs (unless `overwrite_input`) and two
/// outputs that are the same file. Standard input (`-`) is no file; devices,
/// pipes and other files that are not regular files are written in place, so
/// they destroy nothing and may appear more than once.
pub fn check_outputs(
    inputs: &[NamedPath<'_>],
    outputs: &[NamedPath<'_>],
    overwrite_input: bool,
) -> Result<(), CliError> {
    for (i, output) in outputs.iter().enumerate() {
        if !could_be_replaced(output.path) {
            continue;
        }
        if !overwrite_input {
            for input in inputs.iter().filter(|input| input.path.as_os_str() != "-") {
                if same_file(input.path, output.path) {
                    return Err(CliError::Message(format!(
                        "{} {}: is the input {} {}; writing there would destroy it. Give \
                         another file name, or add --overwrite-input to replace the input \
                         with the output",
                        output.option,
                        output.path.display(),
                        input.option,
                        input.path.display()
                    )));
                }
            }
        }
        for earlier in outputs.iter().take(i) {
            if same_file(earlier.path, output.path) {
                return Err(CliError::Message(format!(
                    "{} {}: is also the file of {} {}; one output would replace the other. \
                     Give each output a file of its own",
                    output.option,
                    output.path.display(),
                    earlier.option,
                    earlier.path.display()
                )));
            }
        }
    }
    Ok(())
}

/// True unless `path` exists and is not a regular file (a device, a pipe, a
/// directory: those are written in place or refused later, never replaced).
fn could_be_replaced(path: &Path) -> bool {
    fs::metadata(path).map_or(true, |meta| meta.is_file())
}

/// Whether `a` and `b` name the same file. Two existing files are the same when
/// their device and inode agree (hard links and symbolic links included); a path
/// that does not exist yet is compared by its canonical form (its directory
/// resolved, then the file name).
pub fn same_file(a: &Path, b: &Path) -> bool {
    if let (Ok(meta_a), Ok(meta_b)) = (fs::metadata(a), fs::metadata(b)) {
        #[cfg(unix)]
        {
            use std::os::unix::fs::MetadataExt;
            return meta_a.dev() == meta_b.dev() && meta_a.ino() == meta_b.ino();
        }
        #[cfg(not(unix))]
        {
            let _ = (meta_a, meta_b);
        }
    }
    canonical(a) == canonical(b)
}

/// The canonical form of `path`: resolved by the file system where it exists, else
/// its directory resolved (when that exists) and the file name appended, else the
/// absolute path with `.` and `..` removed by hand.
fn canonical(path: &Path) -> PathBuf {
    if let Ok(resolved) = fs::canonicalize(path) {
        return resolved;
    }
    let absolute = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    if let (Some(parent), Some(name)) = (absolute.parent(), absolute.file_name())
        && let Ok(dir) = fs::canonicalize(parent)
    {
        return dir.join(name);
    }
    // `std::path::absolute` keeps `..`; no well-kept crate is needed for this
    // small lexical clean-up.
    let mut clean = PathBuf::new();
    for component in absolute.components() {
        match component {
            Component::CurDir => {}
            Component::ParentDir => {
                clean.pop();
            }
            other => clean.push(other.as_os_str()),
        }
    }
    clean
}

#[cfg(test)]
mod tests {
    use super::*;

    fn named<'a>(option: &'a str, path: &'a Path) -> NamedPath<'a> {
        NamedPath { option, path }
    }

    // Common practice, no source: an output written onto an input destroys the
    // input; two outputs on one file keep only the last.
    #[test]
    fn refuses_an_output_onto_an_input_unless_told() {
        let dir = tempfile::tempdir().unwrap();
        let input = dir.path().join("lines.csv");
        fs::write(&input, "x").unwrap();
        // The same file by another spelling.
        let other_spelling = dir.path().join(".").join("lines.csv");
        let e = check_outputs(
            &[named("LINES", &input)],
            &[named("--output", &other_spelling)],
            false,
        )
        .unwrap_err()
        .to_string();
        assert!(
            e.contains("--overwrite-input") && e.contains("LINES"),
            "{e}"
        );
        assert!(
            check_outputs(
                &[named("LINES", &input)],
                &[named("--output", &other_spelling)],
                true
            )
            .is_ok()
        );
        let elsewhere = dir.path().join("out.csv");
        assert!(
            check_outputs(
                &[named("LINES", &input)],
                &[named("--output", &elsewhere)],
                false
            )
            .is_ok()
        );
    }

    #[cfg(unix)]
    #[test]
    fn a_hard_or_symbolic_link_to_the_input_is_the_input() {
        let dir = tempfile::tempdir().unwrap();
        let input = dir.path().join("model.toml");
        fs::write(&input, "x").unwrap();
        let hard = dir.path().join("hard.toml");
        fs::hard_link(&input, &hard).unwrap();
        let soft = dir.path().join("soft.toml");
        std::os::unix::fs::symlink(&input, &soft).unwrap();
        for output in [&hard, &soft] {
            assert!(
                check_outputs(&[named("MODEL", &input)], &[named("-o", output)], false).is_err(),
                "{}",
                output.display()
            );
        }
    }

    #[test]
    fn refuses_two_outputs_on_one_file_even_when_it_does_not_exist_yet() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("out.csv");
        let b = dir.path().join("sub").join("..").join("out.csv");
        let e = check_outputs(&[], &[named("-o", &a), named("--lines-out", &b)], true)
            .unwrap_err()
            .to_string();
        assert!(e.contains("--lines-out") && e.contains("-o"), "{e}");
        let c = dir.path().join("ritz.csv");
        assert!(check_outputs(&[], &[named("-o", &a), named("--lines-out", &c)], false).is_ok());
    }

    #[test]
    fn standard_input_and_devices_are_not_replaced_files() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("out.csv");
        assert!(
            check_outputs(
                &[named("LINES", Path::new("-"))],
                &[named("-o", &out)],
                false
            )
            .is_ok()
        );
        // A directory is no regular file: it is refused when written, not here.
        assert!(!could_be_replaced(dir.path()));
        assert!(could_be_replaced(&out));
    }
}
