//! `termsight levels MODEL.toml`: every level of an ion's level model, sorted by
//! energy, with J, parity, leading LS components and Landé g.

use std::path::PathBuf;

use super::CliError;
use super::input::open_file;
use super::output::write_output;
use super::paths::{NamedPath, check_outputs};
use super::progress::ModelProgress;
use crate::report::{level_rows, levels_csv, levels_json, levels_table};
use crate::structure::model::{LoadedModel, read_model_with_progress};

/// Output formats of `termsight levels`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum LevelsFormat {
    /// A table for the terminal.
    Table,
    /// Comma-separated values with a header.
    Csv,
    /// A JSON array of levels.
    Json,
}

/// Arguments of `termsight levels`.
#[derive(Debug, clap::Args)]
pub struct LevelsArgs {
    /// The level model of the ion (TOML: species, configurations, parameters).
    pub model: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value_t = LevelsFormat::Table)]
    pub format: LevelsFormat,
    /// Write to this file (replaced in one step) instead of standard output.
    #[arg(long, short)]
    pub output: Option<PathBuf>,
    /// How many further LS components to list after the leading one.
    #[arg(long, default_value_t = 2)]
    pub components: usize,
    /// Allow an output file to be one of the input files (replaced once the output
    /// is complete); without it such a run is refused.
    #[arg(long = "overwrite-input")]
    pub overwrite_input: bool,
}

/// Run `termsight levels`.
pub fn run(args: LevelsArgs) -> Result<(), CliError> {
    let outputs: Vec<NamedPath<'_>> = args
        .output
        .iter()
        .map(|path| NamedPath {
            option: "--output",
            path,
        })
        .collect();
    check_outputs(
        &[NamedPath {
            option: "MODEL",
            path: &args.model,
        }],
        &outputs,
        args.overwrite_input,
    )?;
    let (reader, path) = open_file(&args.model)?;
    let mut progress = ModelProgress::new("levels", false);
    let loaded = read_model_with_progress(reader, &path, |p| progress.build(p));
    progress.finish();
    let LoadedModel { model, structure } = loaded.map_err(|e| CliError::Message(e.to_string()))?;
    let values = model.values_for(&structure);
    let levels = structure.levels_with_progress(&values, |p| progress.levels(p));
    progress.finish();
    let levels = levels.map_err(|e| CliError::Message(format!("{path}: {e}")))?;
    let rows = level_rows(&structure, &levels, args.components);
    let text = match args.format {
        LevelsFormat::Table => levels_table(&model.species.to_string(), &rows),
        LevelsFormat::Csv => levels_csv(&rows),
        LevelsFormat::Json => levels_json(&rows),
    };
    write_output(args.output.as_deref(), text.as_bytes())
}
