//! `termsight optimize ASSIGNED.csv`: level energies from the accepted assignments,
//! by weighted least squares, with Ritz wavenumbers and wavelengths of every line.

use std::io::Write;
use std::path::PathBuf;

use clap::ValueEnum;

use super::CliError;
use super::assign::AirFormulaArg;
use super::input::open_input;
use super::output::{write_atomically, write_output};
use super::paths::{NamedPath, check_outputs};
use crate::levels::optimize::OptimizationReport;
use crate::levels::optimize::{
    BlendPolicy, ClassifiedLines, OptimizeOptions, SpectrumError, optimize_classified,
    read_classified_lines,
};
use crate::levels::{Level, LevelLabel, read_level_table};
use crate::notation::Species;
use crate::report::figures::{
    ExtraLevel, ritz_residuals_from, ritz_residuals_svg, term_diagram_from, term_diagram_svg,
};
use crate::report::{
    OptimizeContext, optimize_json, optimize_table, optimized_levels_csv, optimized_lines_csv,
};

/// The long description of `termsight optimize --help`.
const LONG_ABOUT: &str = "Find the level energies that best reproduce the accepted line \
assignments (weighted least squares, weights 1/u²), with each level's uncertainty, the \
number of lines that fix it, and every line's Ritz wavenumber and wavelength with their \
uncertainties from the covariance matrix.

The input is the CSV of `termsight assign --format csv`, after you have marked the \
assignments you accept: add a column `accept` (yes/no); without it, every rank-1 \
candidate that is not a blend is used. Any CSV with the columns lower_configuration, \
lower_term, lower_J, upper_configuration, upper_term, upper_J, observed_wavenumber_cm1 \
and observed_uncertainty_cm1 (and species, or --species) will do.

Levels that no chain of lines joins (in He I the singlets and the triplets, when no \
intercombination line is among the lines) form separate systems; each system's lowest \
tabulated level (or --fix-level) is held at its tabulated energy, and the others' \
uncertainties are relative to it.";

const AFTER_HELP: &str = "\
Examples:
  termsight assign lines.csv --format csv -o assigned.csv
  termsight optimize assigned.csv
  termsight optimize assigned.csv --blends widen --format csv -o levels.csv --lines-out ritz.csv
  termsight optimize assigned.csv --fix-level \"1s.2s 3S 1\" --show-lines

Flags: reference (the level held fixed in its system), single-line (a level fixed by
one line only: its value carries no check), outlier (|obs − Ritz| above --outlier-sigma
standard uncertainties), widened-blend (a blend kept with a widened uncertainty).
The CSV of levels (--format csv) is a level table that `termsight assign --levels`
and `termsight fit --levels` read.";

/// Output formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Tables for the terminal.
    Table,
    /// The optimised levels as a level table (CSV).
    Csv,
    /// Levels and lines as JSON.
    Json,
}

/// What to do with blended lines.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum BlendsArg {
    /// Leave accepted blends out.
    Omit,
    /// Keep them with the uncertainty multiplied by --blend-factor.
    Widen,
}

/// Arguments of `termsight optimize`.
#[derive(Debug, clap::Args)]
#[command(long_about = LONG_ABOUT, after_help = AFTER_HELP)]
pub struct OptimizeArgs {
    /// Classified lines: the CSV of `termsight assign`, or any CSV naming both levels
    /// and the observed wavenumber with its uncertainty; `-` reads standard input.
    #[arg(value_name = "ASSIGNED")]
    pub assigned: PathBuf,
    /// The spectrum of every line, for a file without a `species` column.
    #[arg(long, value_name = "SPECTRUM")]
    pub species: Option<String>,
    /// Hold this level fixed at its tabulated energy, e.g. "1s.2s 3S 1" (configuration,
    /// term, J). Default: the lowest tabulated level of each system.
    #[arg(long = "fix-level", value_name = "LEVEL")]
    pub fix_level: Option<String>,
    /// Accepted lines flagged `blend`: leave them out, or keep them with a widened
    /// uncertainty.
    #[arg(long, value_enum, default_value_t = BlendsArg::Omit)]
    pub blends: BlendsArg,
    /// Factor by which the uncertainty of a kept blend is multiplied (with --blends widen).
    #[arg(long = "blend-factor", value_name = "FACTOR", default_value_t = 2.0)]
    pub blend_factor: f64,
    /// Flag a line whose |observed − Ritz| exceeds this many of its standard uncertainties.
    #[arg(long = "outlier-sigma", value_name = "SIGMAS", default_value_t = 3.0)]
    pub outlier_sigma: f64,
    /// The air formula for Ritz wavelengths in air (above 200 nm).
    #[arg(long = "air-formula", value_enum, default_value_t = AirFormulaArg::BirchDowns)]
    pub air_formula: AirFormulaArg,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Write the output to this file (replaced in one step) instead of standard output.
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Also write every line with its Ritz wavenumber and wavelength to this CSV file.
    #[arg(long = "lines-out", value_name = "FILE")]
    pub lines_out: Option<PathBuf>,
    /// List every line in the terminal output, not only the outliers.
    #[arg(long = "show-lines")]
    pub show_lines: bool,
    /// Allow an output file to be one of the input files (replaced once the output
    /// is complete); without it such a run is refused.
    #[arg(long = "overwrite-input")]
    pub overwrite_input: bool,
    /// Also draw every line's (observed − Ritz)/u against its wavenumber as SVG to FILE.
    #[arg(long = "plot", value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Also draw the term diagram of one spectrum (its optimised levels and the lines
    /// used) as SVG to FILE.
    #[arg(long = "term-diagram", value_name = "FILE.svg")]
    pub term_diagram: Option<PathBuf>,
    /// The spectrum of the term diagram. [default: the one with most levels]
    #[arg(long = "diagram-species", value_name = "SPECTRUM")]
    pub diagram_species: Option<String>,
    /// Mark in the term diagram the candidate new levels in FILE: the CSV that
    /// `termsight find-levels --format csv` writes (a level table, one row per
    /// candidate and possible J); rows of other spectra are left out.
    #[arg(
        long = "candidate-levels",
        value_name = "FILE",
        requires = "term_diagram"
    )]
    pub candidate_levels: Option<PathBuf>,
}

/// Run `termsight optimize`.
pub fn run(args: OptimizeArgs) -> Result<(), CliError> {
    let mut outputs = Vec::new();
    if let Some(path) = &args.output {
        outputs.push(NamedPath {
            option: "--output",
            path,
        });
    }
    if let Some(path) = &args.lines_out {
        outputs.push(NamedPath {
            option: "--lines-out",
            path,
        });
    }
    for (option, path) in [
        ("--plot", &args.plot),
        ("--term-diagram", &args.term_diagram),
    ] {
        if let Some(path) = path {
            outputs.push(NamedPath { option, path });
        }
    }
    let mut inputs = vec![NamedPath {
        option: "ASSIGNED",
        path: &args.assigned,
    }];
    if let Some(path) = &args.candidate_levels {
        inputs.push(NamedPath {
            option: "--candidate-levels",
            path,
        });
    }
    check_outputs(&inputs, &outputs, args.overwrite_input)?;
    let options = options(&args)?;
    let default_species = args
        .species
        .as_deref()
        .map(|s| {
            s.parse::<Species>()
                .map_err(|e| CliError::Message(format!("--species: {e}")))
        })
        .transpose()?;
    let input = read_input(&args, default_species)?;
    // Read before the work, so that a broken file stops at once.
    let candidates = match &args.candidate_levels {
        Some(path) => {
            let (reader, name) = open_input(path)?;
            read_level_table(reader, &name)
                .map_err(|e| CliError::Message(format!("--candidate-levels: {e}")))?
                .levels
        }
        None => Vec::new(),
    };
    let report = optimize_classified(&input, &options).map_err(|e| match e {
        // Already names the file, line and column.
        SpectrumError::WidenedTooFar { .. } => CliError::Message(e.to_string()),
        _ => CliError::Message(format!("{}: {e}", input.source)),
    })?;
    // The description says it too; the terminal hears of it when the report goes
    // elsewhere.
    if args.format != Format::Table || args.output.is_some() {
        for loss in &report.lost_to_blends {
            let _ = writeln!(
                std::io::stderr(),
                "termsight: warning: {}",
                crate::report::blend_loss_text(loss)
            );
        }
    }
    let context = OptimizeContext {
        source: &input.source,
        options: &options,
        air_formula: args.air_formula.into(),
    };
    if let Some(path) = &args.lines_out {
        write_atomically(path, &optimized_lines_csv(&report, &context))?;
    }
    let bytes = match args.format {
        Format::Table => optimize_table(&report, &context, args.show_lines).into_bytes(),
        Format::Csv => optimized_levels_csv(&report, &context),
        Format::Json => optimize_json(&report, &context).into_bytes(),
    };
    write_output(args.output.as_deref(), &bytes)?;
    if let Some(path) = &args.plot {
        let data = ritz_residuals_from(&input.source, &report, options.outlier_sigma);
        let svg =
            ritz_residuals_svg(&data).map_err(|e| CliError::Message(format!("--plot: {e}")))?;
        write_atomically(path, svg.as_bytes())?;
    }
    if let Some(path) = &args.term_diagram {
        let species = args
            .diagram_species
            .as_deref()
            .map(|s| {
                s.parse::<Species>()
                    .map_err(|e| CliError::Message(format!("--diagram-species: {e}")))
            })
            .transpose()?;
        let svg = diagram_of(&input, &report, species, &candidates)?;
        write_atomically(path, svg.as_bytes())?;
    }
    Ok(())
}

/// The term diagram of `species`, or of the spectrum with most levels, with the
/// `candidates` of that spectrum marked (rows of one energy taken as one candidate
/// with several possible J, as `find-levels` writes them).
pub(crate) fn diagram_of(
    input: &ClassifiedLines,
    report: &OptimizationReport,
    species: Option<Species>,
    candidates: &[Level],
) -> Result<String, CliError> {
    let result = match species {
        Some(s) => report
            .species
            .iter()
            .find(|r| r.species == s)
            .ok_or_else(|| {
                CliError::Message(format!(
                    "--diagram-species: no line of {s} was used; the optimisation has {}",
                    report
                        .species
                        .iter()
                        .map(|r| r.species.to_string())
                        .collect::<Vec<_>>()
                        .join(", ")
                ))
            })?,
        None => report
            .species
            .iter()
            .rev()
            .max_by_key(|r| r.levels.len())
            .ok_or_else(|| CliError::Message("--term-diagram: no levels were optimised".into()))?,
    };
    let mut extra: Vec<ExtraLevel> = Vec::new();
    for level in candidates.iter().filter(|l| l.species == result.species) {
        let parity = level.label.parity();
        match extra
            .iter_mut()
            .find(|e| e.energy_cm1 == level.energy_cm1 && e.parity == parity)
        {
            Some(e) if !e.j.contains(&level.label.j) => e.j.push(level.label.j),
            Some(_) => {}
            None => extra.push(ExtraLevel {
                energy_cm1: level.energy_cm1,
                parity,
                j: vec![level.label.j],
                label: format!("{:.2}", level.energy_cm1),
            }),
        }
    }
    let diagram = term_diagram_from(&input.source, result, input, extra);
    term_diagram_svg(&diagram).map_err(|e| CliError::Message(format!("--term-diagram: {e}")))
}

fn options(args: &OptimizeArgs) -> Result<OptimizeOptions, CliError> {
    if !(args.outlier_sigma.is_finite() && args.outlier_sigma > 0.0) {
        return Err(CliError::Message(format!(
            "--outlier-sigma: {} is not a positive number",
            args.outlier_sigma
        )));
    }
    let blends = match args.blends {
        BlendsArg::Omit => BlendPolicy::Omit,
        BlendsArg::Widen if args.blend_factor.is_finite() && args.blend_factor >= 1.0 => {
            BlendPolicy::Widen(args.blend_factor)
        }
        BlendsArg::Widen => {
            return Err(CliError::Message(format!(
                "--blend-factor: {} must be a number ≥ 1",
                args.blend_factor
            )));
        }
    };
    let reference = args
        .fix_level
        .as_deref()
        .map(|text| {
            text.parse::<LevelLabel>().map_err(|e| {
                CliError::Message(format!(
                    "--fix-level: {e} (write configuration, term and J, as in \"1s.2s 3S 1\")"
                ))
            })
        })
        .transpose()?;
    Ok(OptimizeOptions {
        reference,
        blends,
        outlier_sigma: args.outlier_sigma,
    })
}

fn read_input(
    args: &OptimizeArgs,
    default_species: Option<Species>,
) -> Result<ClassifiedLines, CliError> {
    let read_error =
        |e: crate::levels::optimize::ClassifiedReadError| CliError::Message(e.to_string());
    let (reader, name) = open_input(&args.assigned)?;
    read_classified_lines(reader, &name, default_species).map_err(read_error)
}
