//! `termsight levels MODEL.toml`: every level of an ion's level model, sorted by
//! energy, with J, parity, leading LS components and Landé g.

use std::path::PathBuf;

use super::CliError;
use super::input::open_file;
use super::output::write_output;
use crate::report::{level_rows, levels_csv, levels_json, levels_table};
use crate::structure::model::{LoadedModel, read_model};

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
}

/// Run `termsight levels`.
pub fn run(args: LevelsArgs) -> Result<(), CliError> {
    let (reader, path) = open_file(&args.model)?;
    let LoadedModel { model, structure } =
        read_model(reader, &path).map_err(|e| CliError::Message(e.to_string()))?;
    let values = model.values_for(&structure);
    let levels = structure
        .levels(&values)
        .map_err(|e| CliError::Message(format!("{path}: {e}")))?;
    let rows = level_rows(&structure, &levels, args.components);
    let text = match args.format {
        LevelsFormat::Table => levels_table(&model.species.to_string(), &rows),
        LevelsFormat::Csv => levels_csv(&rows),
        LevelsFormat::Json => levels_json(&rows),
    };
    write_output(args.output.as_deref(), text.as_bytes())
}
