//! The command-line front end: clap definitions ([`args`]) and one module per
//! command that reads the inputs, calls the library and writes the outputs.
//!
//! This is the only module that touches files. Outputs go through
//! [`output::write_atomically`]: a temporary file in the target directory, renamed
//! into place, so an interrupted run never leaves half a file.

pub mod args;
pub mod assign;
pub mod find_levels;
pub mod fit;
pub mod input;
pub mod level_sets;
pub mod levels;
pub mod lines;
pub mod optimize;
pub mod output;
pub mod paths;
pub mod plasma;
mod progress;
pub mod radial;
pub mod report;

use std::io::{self, Write};
use std::process::ExitCode;

use clap::Parser;

use args::{Cli, Command};

/// Run the command line and turn any error into a message on stderr and exit code 2.
/// A closed pipe on stdout (`termsight … | head`) counts as success.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            if is_broken_pipe(&error) {
                return ExitCode::SUCCESS;
            }
            let _ = writeln!(io::stderr(), "termsight: error: {error:#}");
            ExitCode::from(2)
        }
    }
}

/// Dispatch a parsed command line.
pub fn run(cli: Cli) -> Result<(), CliError> {
    match cli.command {
        Command::Assign(args) => assign::run(args),
        Command::FindLevels(args) => find_levels::run(args),
        Command::Fit(args) => fit::run(args),
        Command::Levels(args) => levels::run(args),
        Command::Lines(args) => lines::run(args),
        Command::Optimize(args) => optimize::run(args),
        Command::Plasma(args) => plasma::run(args),
        Command::Radial(args) => radial::run(args),
        Command::Report(args) => report::run(args),
    }
}

/// Errors of the command line: each carries a message that names the file, line
/// and field where one applies.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum CliError {
    /// A message ready to print.
    #[error("{0}")]
    Message(String),
    /// An I/O error on a named file.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: String,
        /// What went wrong.
        source: io::Error,
    },
}

fn is_broken_pipe(error: &CliError) -> bool {
    matches!(error, CliError::Io { source, .. } if source.kind() == io::ErrorKind::BrokenPipe)
}
