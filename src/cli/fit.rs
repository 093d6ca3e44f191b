//! `termsight fit MODEL.toml --levels LEVELS.csv`: fit the free parameters of a
//! level model to experimental levels.

use std::io::Write;
use std::path::PathBuf;
use std::time::{Duration, Instant};

use super::CliError;
use super::input::{open_file, read_levels_file};
use super::output::{write_atomically, write_output};
use super::paths::{NamedPath, check_outputs};
use super::progress::ModelProgress;
use crate::fit::{Convergence, FitOptions, FitProgress, Weighting, fit_levels, simple_picture};
use crate::levels::{EMBEDDED_TABLES, LevelTable, embedded_table};
use crate::notation::Species;
use crate::report::figures::{fit_residuals_from, fit_residuals_svg};
use crate::report::{FitReport, fit_json, fit_table, fitted_model_toml};
use crate::structure::model::{LoadedModel, read_model_with_progress};

/// Long help of `termsight fit`.
pub const LONG_ABOUT: &str = "\
Fit the free parameters of a level model (E_av, F^k, G^k, zeta, R^k) to experimental
level energies by Levenberg–Marquardt least squares, with the model's analytic
(Hellmann–Feynman) derivatives.

Parameters are free, fixed (vary = \"fixed\") or tied to another with a ratio
(tie = \"…\", ratio = …) as the model file says; a tied group moves as one.
Each experimental level of the model's species is matched to a computed state of
the same parity and J by its configuration and LS term against the state's
composition (pair- and jj-coupling labels by energy order), and followed through the
iterations by eigenvector overlap, so crossing levels keep their labels. Levels whose
configuration is not in the model are reported and left out.

A level set that cannot determine the free parameters is refused before iterating,
naming them: a parameter no level depends on, more free parameters than levels, or
parameters the levels cannot tell apart.

Levels count equally by default (the custom for parametric fits: the model's own
shortcomings exceed the level uncertainties); --weights uncertainty weights each by
1/(u² + floor²).

The report gives the fitted values with standard errors (from the covariance
σ²(JᵀJ)⁻¹), fitted/initial, correlations above 0.95, σ of the fit with its degrees of
freedom, and every level with E_exp, E_calc, E_exp − E_calc and composition. For
two-electron ions each F^k, G^k is shown beside its first-order value from hydrogenic
orbitals of the bare nuclear charge.

Examples:
  termsight fit examples/level-models/he-1snl-fit.toml --species \"He I\"
  termsight fit model.toml --levels optimized.csv --model-out fitted.toml --format json";

/// Output formats of `termsight fit`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FitFormat {
    /// A report for the terminal.
    Table,
    /// JSON, with the whole correlation matrix.
    Json,
}

/// How levels are weighted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum WeightsArg {
    /// Every level alike.
    Equal,
    /// 1/(u² + floor²) from the level table's uncertainties.
    Uncertainty,
}

/// Arguments of `termsight fit`: the experimental levels come from --levels or
/// --species, one of the two.
#[derive(Debug, clap::Args)]
#[command(group(clap::ArgGroup::new("level_source").required(true).args(["levels", "species"])))]
pub struct FitArgs {
    /// The level model of the ion (TOML), whose free parameters are fitted.
    pub model: PathBuf,
    /// The experimental levels: a level table (CSV with the columns
    /// species,configuration,term,J,energy_cm1,uncertainty_cm1,source), such as
    /// `termsight optimize` writes.
    #[arg(long, value_name = "FILE", conflicts_with = "species")]
    pub levels: Option<PathBuf>,
    /// Fit to the compiled level table of this spectrum instead ("He I"); it must be
    /// the model's species (the 29 compiled spectra: `termsight assign --list-species`).
    #[arg(long, value_name = "SPECTRUM")]
    pub species: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = FitFormat::Table)]
    pub format: FitFormat,
    /// Write the report to this file (replaced in one step) instead of standard output.
    #[arg(long, short, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Write the fitted model (TOML, standard errors as uncertainties) to this file.
    #[arg(long, value_name = "FILE")]
    pub model_out: Option<PathBuf>,
    /// How levels are weighted.
    #[arg(long, value_enum, default_value_t = WeightsArg::Equal)]
    pub weights: WeightsArg,
    /// With --weights uncertainty: the floor added in quadrature to each level's
    /// uncertainty, in cm⁻¹, so that a level given with uncertainty 0 (the ground
    /// level) does not get infinite weight.
    #[arg(long, value_name = "CM-1", default_value_t = 0.001)]
    pub uncertainty_floor: f64,
    /// Stop after this many evaluations of the levels [default: 100 × (free
    /// parameters + 1)].
    #[arg(long, value_name = "N")]
    pub max_evaluations: Option<usize>,
    /// LS components shown per level in the table.
    #[arg(long, value_name = "N", default_value_t = 2)]
    pub components: usize,
    /// Print no progress lines on standard error.
    #[arg(long)]
    pub quiet: bool,
    /// Allow an output file to be one of the input files (replaced once the output
    /// is complete); without it such a run is refused.
    #[arg(long = "overwrite-input")]
    pub overwrite_input: bool,
    /// Also draw E_exp − E_calc of every fitted level against its energy as SVG to FILE.
    #[arg(long = "plot", value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
}

/// Progress lines start once a fit has run this long.
const PROGRESS_AFTER: Duration = Duration::from_secs(1);

/// Run `termsight fit`.
pub fn run(args: FitArgs) -> Result<(), CliError> {
    let mut inputs = vec![NamedPath {
        option: "MODEL",
        path: &args.model,
    }];
    if let Some(path) = &args.levels {
        inputs.push(NamedPath {
            option: "--levels",
            path,
        });
    }
    let mut outputs = Vec::new();
    if let Some(path) = &args.output {
        outputs.push(NamedPath {
            option: "--output",
            path,
        });
    }
    if let Some(path) = &args.model_out {
        outputs.push(NamedPath {
            option: "--model-out",
            path,
        });
    }
    check_outputs(&inputs, &outputs, args.overwrite_input)?;
    let (reader, model_path) = open_file(&args.model)?;
    let mut progress = ModelProgress::new("fit", args.quiet);
    let loaded = read_model_with_progress(reader, &model_path, |p| progress.build(p));
    progress.finish();
    let LoadedModel { model, structure } = loaded.map_err(|e| CliError::Message(e.to_string()))?;
    let table = level_table(&args, model.species)?;

    let mut options = FitOptions::default();
    if args.weights == WeightsArg::Uncertainty {
        options = options
            .with_weighting(Weighting::Uncertainty {
                floor_cm1: args.uncertainty_floor,
            })
            .map_err(|e| CliError::Message(format!("--uncertainty-floor: {e}")))?;
    }
    if let Some(n) = args.max_evaluations {
        options = options
            .with_max_evaluations(n)
            .map_err(|e| CliError::Message(format!("--max-evaluations: {e}")))?;
    }

    let start = Instant::now();
    let quiet = args.quiet;
    let report_progress = |p: FitProgress| {
        if !quiet && start.elapsed() >= PROGRESS_AFTER {
            let _ = writeln!(
                std::io::stderr(),
                "fit: iteration {}, rms of E_exp − E_calc {:.6} cm⁻¹ ({} evaluation{}, {:.1} s)",
                p.iteration,
                p.rms_cm1,
                p.evaluations,
                if p.evaluations == 1 { "" } else { "s" },
                start.elapsed().as_secs_f64()
            );
        }
    };
    let result = fit_levels(&model, &structure, &table.levels, &options, report_progress)
        .map_err(|e| CliError::Message(format!("{model_path} with {}: {e}", table.source)))?;
    let fitted = result.fitted_model(&model);
    let picture = simple_picture(&fitted)
        .map_err(|e| CliError::Message(format!("hydrogenic estimates: {e}")))?;
    let report = FitReport {
        result: &result,
        model: &fitted,
        model_source: &model_path,
        levels_source: &table.source,
        simple_picture: picture.as_ref(),
    };
    let text = match args.format {
        FitFormat::Table => fit_table(&report, args.components),
        FitFormat::Json => fit_json(&report),
    };

    if let Some(path) = &args.model_out {
        write_atomically(path, fitted_model_toml(&report).as_bytes())?;
    }
    if let Some(path) = &args.plot {
        let source = format!("{model_path} with {}", table.source);
        let svg = fit_residuals_svg(&fit_residuals_from(&source, &result))
            .map_err(|e| CliError::Message(format!("--plot: {e}")))?;
        write_atomically(path, svg.as_bytes())?;
    }
    // Warnings also reach the terminal when the report does not.
    if args.format != FitFormat::Table || args.output.is_some() {
        for (a, b, rho) in result.strong_correlations() {
            let _ = writeln!(
                std::io::stderr(),
                "termsight: warning: ρ({a}, {b}) = {rho:+.4}, above {}",
                result.correlation_warning
            );
        }
        if result.convergence == Convergence::StoppedAtLimit {
            let _ = writeln!(
                std::io::stderr(),
                "termsight: warning: the fit stopped at the evaluation limit before converging"
            );
        }
    }
    write_output(args.output.as_deref(), text.as_bytes())
}

/// The level table: the file of --levels, or the compiled table of --species.
fn level_table(args: &FitArgs, model_species: Species) -> Result<LevelTable, CliError> {
    if let Some(path) = &args.levels {
        return read_levels_file(path);
    }
    let name = args.species.as_deref().unwrap_or_default();
    let species: Species = name
        .parse()
        .map_err(|e| CliError::Message(format!("--species: {e}")))?;
    if species != model_species {
        return Err(CliError::Message(format!(
            "--species {species}: the model is of {model_species}"
        )));
    }
    let table = embedded_table(species).ok_or_else(|| {
        CliError::Message(format!(
            "--species: no compiled table of {species}; compiled: {} (give your own with --levels)",
            EMBEDDED_TABLES.map(|t| t.species).join(", ")
        ))
    })?;
    table.load().map_err(|e| CliError::Message(e.to_string()))
}
