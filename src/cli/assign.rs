//! `termsight assign`: match a measured line list against predicted lines.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use clap::ValueEnum;

use super::CliError;
use super::input::{open_input, read_levels_file};
use super::output::write_output_with;
use crate::assign::{MatchConfig, MatchProgress, assign_lines_with_progress};
use crate::levels::{EMBEDDED_TABLES, LevelTable, Predictions, embedded_table, predict_from_table};
use crate::linelist::{GlobalUncertainty, LineList, ReadOptions, read_line_list};
use crate::notation::Species;
use crate::report::{
    AssignReport, InputSummary, TableOptions, write_assign_csv, write_assign_json,
    write_assign_table,
};
use crate::transitions::model_predictions;
use crate::units::{AirFormula, Medium};

/// Assign each measured line to the transitions that could have made it, ranked,
/// with the probability that each match is a chance coincidence.
///
/// Predicted lines are the E1 lines between the levels of the compiled reference
/// tables (NIST ASD 2014: H I, He I, Ne I, Ar I, Cd I, Hg I), of your own level
/// tables (--levels), or of a level model (--model). A prediction is a candidate
/// when it lies within K combined standard uncertainties of the observed line
/// (--within). Every output says how the input was read (medium, air formula) and
/// which selection rules were applied.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct AssignArgs {
    /// The measured line list, or - for standard input: CSV, TSV or whitespace
    /// columns with a header line naming the columns, such as
    /// wavelength_nm,uncertainty_nm,intensity (also wavelength_A, wavelength_um,
    /// wavenumber_cm1, medium; # starts a comment).
    #[arg(value_name = "LINES")]
    pub lines: PathBuf,

    /// Match against the compiled table of this spectrum; repeat for several
    /// (--species "He I" --species "Ne I"). Compiled: H I, He I, Ne I, Ar I, Cd I,
    /// Hg I. With --levels, picks species from your tables instead. [default: all]
    #[arg(long = "species", value_name = "SPECTRUM")]
    pub species: Vec<String>,

    /// Predict lines from the levels in FILE instead of the compiled tables; repeat
    /// for several files. CSV with the columns
    /// species,configuration,term,J,energy_cm1,uncertainty_cm1,source.
    #[arg(long = "levels", value_name = "FILE")]
    pub levels: Vec<PathBuf>,

    /// Predict lines from the level model in FILE (TOML, with a `[dipole]` table; see
    /// `termsight lines`), with their gf values; repeat for several species. Without
    /// --species or --levels, only the models' lines are matched.
    #[arg(long = "model", value_name = "FILE")]
    pub model: Vec<PathBuf>,

    /// Standard uncertainty of the model's level energies, cm⁻¹, combined in
    /// quadrature with each observed line's uncertainty when matching its lines.
    /// [default: model_uncertainty_cm1 of the model file]
    #[arg(long = "model-uncertainty", value_name = "CM1")]
    pub model_uncertainty: Option<f64>,

    /// Accept a candidate when it lies within K combined standard uncertainties of the
    /// observed line.
    #[arg(short = 'k', long = "within", value_name = "K", default_value_t = MatchConfig::DEFAULT_TOLERANCE_SIGMA)]
    pub within: f64,

    /// In ranking, count a line that breaks an LS or one-electron selection rule
    /// (intercombination, L-forbidden, jump-forbidden, two-electron-jump) as if it
    /// lay this many
    /// standard uncertainties further off; 0 ranks by deviation alone.
    #[arg(long = "rule-penalty", value_name = "SIGMAS", default_value_t = MatchConfig::DEFAULT_RULE_PENALTY_SIGMA)]
    pub rule_penalty: f64,

    /// Count the density of predicted lines for the chance probability within
    /// FACTOR times the tolerance on either side of the observed line.
    #[arg(long = "density-window", value_name = "FACTOR", default_value_t = MatchConfig::DEFAULT_DENSITY_WINDOW_FACTOR)]
    pub density_window: f64,

    /// List every candidate in the table, not only the best one of each line.
    #[arg(long)]
    pub all: bool,

    /// Output format: a table to read, or CSV or JSON for other programs (these
    /// always hold every candidate).
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,

    /// Write the results to FILE instead of standard output. The file appears
    /// complete or not at all (written to a temporary file, then renamed).
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,

    /// Medium of wavelengths whose row does not give one (no medium column, or a
    /// blank cell). [default: air at and above 200 nm, vacuum below]
    #[arg(long, value_enum)]
    pub medium: Option<MediumArg>,

    /// Standard uncertainty of lines that do not give one, with its unit: 0.002nm,
    /// 0.02A, 0.05cm-1.
    #[arg(long, value_name = "VALUE")]
    pub uncertainty: Option<GlobalUncertainty>,

    /// Refractive index of standard air used to convert air wavelengths:
    /// Birch & Downs (1994) as given by Morton (2000), Edlén (1966) or Ciddor (1996).
    #[arg(long = "air-formula", value_enum, default_value_t = AirFormulaArg::BirchDowns)]
    pub air_formula: AirFormulaArg,

    /// Leave out bad rows of the line list (each is reported on standard error)
    /// instead of stopping at the first one.
    #[arg(long = "skip-bad")]
    pub skip_bad: bool,
}

/// The long description of `termsight assign --help`.
pub(crate) const LONG_ABOUT: &str = "Assign each measured line to the transitions that could \
have made it, ranked, with the probability that each match is a chance coincidence.

Predicted lines are the electric-dipole lines between the levels of the compiled reference \
tables (NIST ASD 2014: H I, He I, Ne I, Ar I, Cd I, Hg I), of your own level tables \
(--levels), or of a level model (--model, with predicted gf values shown beside each \
candidate). A prediction is a candidate when it lies within K combined standard \
uncertainties of the observed line (--within). Every output says how the input was read \
(medium, air formula) and which selection rules were applied.";

const AFTER_HELP: &str = "\
Examples:
  termsight assign lines.csv
  termsight assign lines.csv --species \"He I\" --species \"Ne I\" --all
  termsight assign scan.txt --uncertainty 0.002nm --format csv -o assigned.csv
  termsight assign lines.csv --levels my-levels.csv --within 4
  termsight assign lines.csv --model ca-model.toml --model-uncertainty 150 --species \"He I\"

Flags in the output: intercombination (ΔS ≠ 0), L-forbidden (ΔL > 1 or L 0–0),
jump-forbidden (one electron with Δl ≠ ±1), two-electron-jump, blend (more than one
candidate), unassigned (none). LS rules are applied only where both levels carry LS
labels; pair-coupled labels (Ne I, Ar I) get the parity and J rules only.";

/// Output formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// A table for the terminal.
    Table,
    /// CSV, one row per candidate.
    Csv,
    /// JSON, one object per observed line.
    Json,
}

/// The medium, as typed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MediumArg {
    /// Standard air.
    Air,
    /// Vacuum.
    Vacuum,
}

/// The air formula, as typed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum AirFormulaArg {
    /// Birch & Downs (1994) as given by Morton (2000).
    BirchDowns,
    /// Edlén (1966).
    Edlen,
    /// Ciddor (1996).
    Ciddor,
}

impl From<AirFormulaArg> for AirFormula {
    fn from(arg: AirFormulaArg) -> Self {
        match arg {
            AirFormulaArg::BirchDowns => AirFormula::BirchDowns1994,
            AirFormulaArg::Edlen => AirFormula::Edlen1966,
            AirFormulaArg::Ciddor => AirFormula::Ciddor1996,
        }
    }
}

/// Lines above which progress is reported on standard error.
const PROGRESS_ABOVE: usize = 200_000;

/// Run `termsight assign`.
pub fn run(args: AssignArgs) -> Result<(), CliError> {
    let config = match_config(&args)?;
    let predictions = predictions(
        &args.levels,
        &args.species,
        &args.model,
        args.model_uncertainty,
    )?;
    let list = read_lines(&args)?;
    report_skipped(&list);

    let total = list.lines.len();
    let mut progress = |p: MatchProgress| {
        if total > PROGRESS_ABOVE && p.done < p.total {
            let _ = writeln!(
                io::stderr(),
                "termsight: matched {} of {} lines",
                p.done,
                p.total
            );
        }
    };
    let assignments = assign_lines_with_progress(&list.lines, &predictions, &config, &mut progress);
    if total > PROGRESS_ABOVE {
        let _ = writeln!(
            io::stderr(),
            "termsight: matched all {total} lines; writing the results"
        );
    }
    let input = InputSummary::from_line_list(&list);
    let report = AssignReport {
        input: &input,
        config: &config,
        list: &list,
        predictions: &predictions,
        assignments: &assignments,
    };
    let options = TableOptions {
        all: args.all,
        ..TableOptions::default()
    };
    write_output_with(args.output.as_deref(), |out| match args.format {
        Format::Table => write_assign_table(&report, &options, out),
        Format::Csv => write_assign_csv(&report, out),
        Format::Json => write_assign_json(&report, out),
    })
}

fn match_config(args: &AssignArgs) -> Result<MatchConfig, CliError> {
    fn flag(name: &'static str) -> impl Fn(crate::assign::MatchConfigError) -> CliError {
        move |e| CliError::Message(format!("--{name}: {e}"))
    }
    MatchConfig::default()
        .with_tolerance_sigma(args.within)
        .map_err(flag("within"))?
        .with_rule_penalty_sigma(args.rule_penalty)
        .map_err(flag("rule-penalty"))?
        .with_density_window_factor(args.density_window)
        .map_err(flag("density-window"))
}

/// The predictions: from the user's level tables if any, else from the compiled
/// ones (none when only models are given); restricted to the species asked for;
/// and the lines of every model.
fn predictions(
    level_files: &[PathBuf],
    species_names: &[String],
    models: &[PathBuf],
    model_uncertainty: Option<f64>,
) -> Result<Predictions, CliError> {
    let mut wanted: Vec<Species> = Vec::new();
    for name in species_names {
        let species = name
            .parse::<Species>()
            .map_err(|e| CliError::Message(format!("--species: {e}")))?;
        // The same species named twice is asked for once (not "given twice").
        if !wanted.contains(&species) {
            wanted.push(species);
        }
    }
    let tables: Vec<LevelTable> = if level_files.is_empty() {
        if models.is_empty() || !wanted.is_empty() {
            compiled_tables(&wanted)?
        } else {
            Vec::new()
        }
    } else {
        let tables = level_files
            .iter()
            .map(|path| read_levels_file(path))
            .collect::<Result<Vec<_>, _>>()?;
        for species in &wanted {
            if !tables.iter().any(|t| t.species().contains(species)) {
                return Err(CliError::Message(format!(
                    "--species: no level of {species} in the tables given with --levels"
                )));
            }
        }
        tables
            .into_iter()
            .map(|t| t.retain_species(|s| wanted.is_empty() || wanted.contains(&s)))
            .filter(|t| !t.levels.is_empty())
            .collect()
    };
    let mut sets = tables
        .iter()
        .map(|table| {
            predict_from_table(table)
                .map_err(|e| CliError::Message(format!("{}: {e}", table.source)))
        })
        .collect::<Result<Vec<_>, _>>()?;
    for path in models {
        sets.push(model_predictions_from(path, model_uncertainty)?);
    }
    Predictions::combine(sets).map_err(|e| {
        CliError::Message(format!(
            "{e}; each species may come from one level table or model only"
        ))
    })
}

/// The predictions of the level model in `path`, with the model uncertainty from
/// the flag or else from the file.
fn model_predictions_from(path: &Path, flag: Option<f64>) -> Result<Predictions, CliError> {
    if let Some(u) = flag
        && !(0.0..=1e150).contains(&u)
    {
        return Err(CliError::Message(format!(
            "--model-uncertainty: give a number of cm⁻¹ from 0 to 1e150, not {u}"
        )));
    }
    let name = path.display().to_string();
    let lines = super::lines::model_lines(path)?;
    let model = &lines.loaded.model;
    let uncertainty = flag.or(model.model_uncertainty_cm1).ok_or_else(|| {
        CliError::Message(format!(
            "{name}: the model gives no model_uncertainty_cm1; give the uncertainty of its \
             level energies with --model-uncertainty CM1"
        ))
    })?;
    model_predictions(model.species, &lines.spectrum, &name, uncertainty)
        .map_err(|e| CliError::Message(format!("{name}: {e}")))
}

fn compiled_tables(wanted: &[Species]) -> Result<Vec<LevelTable>, CliError> {
    let chosen: Vec<_> = if wanted.is_empty() {
        EMBEDDED_TABLES.iter().collect()
    } else {
        wanted
            .iter()
            .map(|species| {
                embedded_table(*species).ok_or_else(|| {
                    CliError::Message(format!(
                        "--species: no compiled table of {species}; compiled: {} (give your \
                         own with --levels FILE)",
                        EMBEDDED_TABLES.map(|t| t.species).join(", ")
                    ))
                })
            })
            .collect::<Result<_, _>>()?
    };
    chosen
        .into_iter()
        .map(|t| t.load().map_err(|e| CliError::Message(e.to_string())))
        .collect()
}

fn read_lines(args: &AssignArgs) -> Result<LineList, CliError> {
    let options = ReadOptions {
        medium: args.medium.map(|m| match m {
            MediumArg::Air => Medium::Air,
            MediumArg::Vacuum => Medium::Vacuum,
        }),
        uncertainty: args.uncertainty,
        air_formula: args.air_formula.into(),
        skip_bad: args.skip_bad,
        ..ReadOptions::default()
    };
    let read_error = |e: crate::linelist::LineListError| CliError::Message(e.to_string());
    let (reader, name) = open_input(&args.lines)?;
    read_line_list(reader, &name, &options).map_err(read_error)
}

fn report_skipped(list: &LineList) {
    let mut stderr = io::stderr().lock();
    for skipped in &list.skipped {
        let _ = writeln!(
            stderr,
            "termsight: skipped {}: {}",
            skipped.location, skipped.reason
        );
    }
    if list.skipped_total > list.skipped.len() {
        let _ = writeln!(
            stderr,
            "termsight: skipped {} more bad rows",
            list.skipped_total - list.skipped.len()
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn help_lists_every_compiled_table() {
        let help = crate::cli::args::Cli::command()
            .find_subcommand_mut("assign")
            .unwrap()
            .render_long_help()
            .to_string();
        for table in EMBEDDED_TABLES {
            assert!(help.contains(table.species), "{}", table.species);
        }
    }

    #[test]
    fn unknown_species_names_the_compiled_ones() {
        let e = predictions(&[], &["Fe II".to_string()], &[], None).unwrap_err();
        assert!(e.to_string().contains("no compiled table of Fe II"), "{e}");
        assert!(e.to_string().contains("He I, Ne I"), "{e}");
        let e = predictions(&[], &["Xx I".to_string()], &[], None).unwrap_err();
        assert!(
            e.to_string().starts_with("--species: cannot read species"),
            "{e}"
        );
    }

    #[test]
    fn default_is_every_compiled_table() {
        let p = predictions(&[], &[], &[], None).unwrap();
        assert_eq!(p.species().len(), EMBEDDED_TABLES.len());
        let p = predictions(&[], &["He I".into(), "Ne I".into()], &[], None).unwrap();
        let names: Vec<String> = p.species().iter().map(|s| s.species.to_string()).collect();
        assert_eq!(names, vec!["He I", "Ne I"]);
    }
}
