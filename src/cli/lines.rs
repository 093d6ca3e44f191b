//! `termsight lines MODEL.toml`: the E1 lines a level model predicts, with
//! wavelengths, line strengths, gf, A and flags.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use super::CliError;
use super::assign::AirFormulaArg;
use super::input::open_file;
use super::output::{write_atomically, write_output};
use super::paths::{NamedPath, check_outputs};
use super::progress::ModelProgress;
use crate::report::figures::{model_spectrum_from, model_spectrum_svg};
use crate::report::{LineSelection, LinesReport, lines_csv, lines_json, lines_table};
use crate::structure::DipoleIntegral;
use crate::structure::model::{LoadedModel, read_model_with_progress};
use crate::transitions::{
    DipoleOperator, DipoleProgress, ModelSpectrum, model_spectrum_with_pairs,
};

/// Predict the electric-dipole lines of a level model: every pair of levels of
/// opposite parity with ΔJ = 0, ±1 (not 0–0), with its wavelength, line strength,
/// gf, transition probability and flags.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct LinesArgs {
    /// The level model (TOML) with configurations of both parities and a `[dipole]`
    /// table of radial dipole integrals, such as "P(3s,3p)" = -2.6 (bohr).
    #[arg(value_name = "MODEL")]
    pub model: PathBuf,

    /// Show only lines at this wavelength or longer, in nm (as printed: air at and
    /// above 200 nm, vacuum below, unless --vacuum).
    #[arg(long = "from", value_name = "NM")]
    pub from_nm: Option<f64>,

    /// Show only lines at this wavelength or shorter, in nm (as printed).
    #[arg(long = "to", value_name = "NM")]
    pub to_nm: Option<f64>,

    /// Show only lines with gf at least this (weighted oscillator strength).
    #[arg(long = "min-gf", value_name = "GF")]
    pub min_gf: Option<f64>,

    /// Write every wavelength in vacuum, not in air above 200 nm.
    #[arg(long)]
    pub vacuum: bool,

    /// Refractive index of standard air for air wavelengths:
    /// Birch & Downs (1994) as given by Morton (2000), Edlén (1966) or Ciddor (1996).
    #[arg(long = "air-formula", value_enum, default_value_t = AirFormulaArg::BirchDowns)]
    pub air_formula: AirFormulaArg,

    /// Output format: a table to read, or CSV or JSON for other programs.
    #[arg(long, value_enum, default_value_t = LinesFormat::Table)]
    pub format: LinesFormat,

    /// Write to FILE instead of standard output (it appears complete or not at all).
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,

    /// Allow an output file to be one of the input files (replaced once the output
    /// is complete); without it such a run is refused.
    #[arg(long = "overwrite-input")]
    pub overwrite_input: bool,
    /// Also draw the selected lines as sticks of log gf (intercombination lines
    /// marked) as SVG to FILE.
    #[arg(long = "plot", value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
}

const AFTER_HELP: &str = "\
Examples:
  termsight lines examples/level-models/alkaline-earth-4s.toml
  termsight lines model.toml --from 300 --to 700 --min-gf 0.01
  termsight lines model.toml --vacuum --format csv -o lines.csv

Every line is listed by wavelength with its lower and upper level (named by their
leading LS components), the line strength S (e²a₀²), gf, log gf, the transition
probability A (s⁻¹) and flags: LS-allowed, or the rules it breaks in LS coupling —
intercombination (ΔS ≠ 0), L-forbidden (ΔL > 1 or L 0–0), jump-forbidden (one
electron with Δl ≠ ±1), two-electron-jump. Such lines get exactly the strength the
model's spin–orbit and configuration mixing lends them.";

/// Output formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum LinesFormat {
    /// A table for the terminal.
    Table,
    /// CSV with a header, the description as # lines above it.
    Csv,
    /// JSON.
    Json,
}

/// Odd LS states above which the dipole build reports progress on standard error.
const PROGRESS_ABOVE: usize = 2_000;

/// A model read from a file and its predicted spectrum.
pub(crate) struct ModelLines {
    /// The model and its structure.
    pub loaded: LoadedModel,
    /// Its levels and lines.
    pub spectrum: ModelSpectrum,
    /// The dipole integrals used, by name (`P(3s,3p)`, `P(3s,3p)@3s.3p~3p2` for one
    /// configuration pair), with their values.
    pub dipole: Vec<(String, f64)>,
}

/// Read `path` and predict its lines; errors name the file.
pub(crate) fn model_lines(path: &Path) -> Result<ModelLines, CliError> {
    let (reader, name) = open_file(path)?;
    let mut progress = ModelProgress::new("lines", false);
    let loaded = read_model_with_progress(reader, &name, |p| progress.build(p));
    progress.finish();
    let loaded = loaded.map_err(|e| CliError::Message(e.to_string()))?;
    let structure = &loaded.structure;
    let message =
        |e: crate::transitions::TransitionError| CliError::Message(format!("{name}: {e}"));
    let mut report = |p: DipoleProgress| {
        if p.total > PROGRESS_ABOVE && p.done.is_multiple_of((p.total / 10).max(1)) {
            let _ = writeln!(
                io::stderr(),
                "termsight: dipole matrix, {} of {} odd LS states",
                p.done,
                p.total
            );
        }
    };
    let operator = DipoleOperator::build_with_progress(structure, &mut report).map_err(message)?;
    if operator.blocks().is_none() {
        let parity = structure
            .blocks()
            .first()
            .map_or("one".to_string(), |b| b.parity.to_string());
        return Err(CliError::Message(format!(
            "{name}: every configuration of the model is {parity}; E1 lines join \
             configurations of opposite parity, so add some of the other parity"
        )));
    }
    let pairs: Vec<(DipoleIntegral, (usize, usize), f64)> = loaded
        .model
        .pair_dipole
        .iter()
        .map(|p| (p.integral, p.configurations, p.value))
        .collect();
    let (dipole_values, pair_values) = operator
        .values_with_pairs_from(structure, &loaded.model.dipole, &pairs)
        .map_err(message)?;
    let values = loaded.model.values_for(structure);
    let spectrum =
        model_spectrum_with_pairs(structure, &operator, &values, &dipole_values, &pair_values)
            .map_err(message)?;
    // The plain values that some configuration pair uses, then the pairs' own.
    let configurations = &loaded.model.configurations;
    let mut dipole: Vec<(String, f64)> = Vec::new();
    for (slot, (integral, value)) in operator.integrals().iter().zip(&dipole_values).enumerate() {
        let own = |u: &crate::transitions::IntegralUse| {
            pair_values
                .iter()
                .any(|p| p.slot == slot && (p.even, p.odd) == (u.even, u.odd))
        };
        if operator.all_uses()[slot].iter().any(|u| !own(u)) {
            dipole.push((integral.to_string(), *value));
        }
    }
    for p in &pair_values {
        let (a, b) = (p.even.min(p.odd), p.even.max(p.odd));
        dipole.push((
            format!(
                "{}@{}",
                operator.integrals()[p.slot],
                crate::structure::scope_name(
                    crate::structure::Scope::Interaction(a, b),
                    configurations
                )
            ),
            p.value,
        ));
    }
    Ok(ModelLines {
        loaded,
        spectrum,
        dipole,
    })
}

/// Run `termsight lines`.
pub fn run(args: LinesArgs) -> Result<(), CliError> {
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
    for (flag, value) in [("from", args.from_nm), ("to", args.to_nm)] {
        if value.is_some_and(|v| !(v.is_finite() && v > 0.0)) {
            return Err(CliError::Message(format!(
                "--{flag}: give a wavelength in nm greater than 0"
            )));
        }
    }
    if let (Some(from), Some(to)) = (args.from_nm, args.to_nm)
        && from > to
    {
        return Err(CliError::Message(format!(
            "--from {from} is longer than --to {to}: give the shorter wavelength first"
        )));
    }
    if args.min_gf.is_some_and(|g| !g.is_finite()) {
        return Err(CliError::Message("--min-gf: give a number".into()));
    }
    let lines = model_lines(&args.model)?;
    let selection = LineSelection {
        from_nm: args.from_nm,
        to_nm: args.to_nm,
        min_gf: args.min_gf,
        all_vacuum: args.vacuum,
        air_formula: args.air_formula.into(),
    };
    let report = LinesReport::new(
        lines.loaded.model.species.to_string(),
        args.model.display().to_string(),
        &lines.spectrum,
        &lines.dipole,
        &selection,
    );
    let bytes = match args.format {
        LinesFormat::Table => lines_table(&report).into_bytes(),
        LinesFormat::Csv => lines_csv(&report),
        LinesFormat::Json => lines_json(&report).into_bytes(),
    };
    write_output(args.output.as_deref(), &bytes)?;
    if let Some(path) = &args.plot {
        let svg = model_spectrum_svg(&model_spectrum_from(&report))
            .map_err(|e| CliError::Message(format!("--plot: {e}")))?;
        write_atomically(path, svg.as_bytes())?;
    }
    Ok(())
}
