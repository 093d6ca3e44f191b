//! `termsight assign`: match a measured line list against predicted lines.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use clap::ValueEnum;

use super::CliError;
use super::input::open_input;
use super::level_sets::{LevelSets, level_sets};
use super::output::{write_atomically, write_output, write_output_with};
use crate::assign::{
    EvidenceConfig, LineIntensity, MatchConfig, MatchProgress, Resolution,
    assign_lines_with_progress, assign_with_evidence,
};
use crate::levels::{
    EMBEDDED_TABLES, ListReach, Predictions, compiled_predictions, compiled_predictions_near,
    embedded_table, predict_from_table,
};
use crate::linelist::{GlobalUncertainty, LineList, ReadOptions, read_line_list};
use crate::notation::Species;
use crate::plasma::IntensityUnits;
use crate::report::figures::{
    SpectrumAxis, StickWindow, boltzmann_from_report, boltzmann_svg, stick_spectrum_from,
    stick_spectrum_svg,
};
use crate::report::{
    AssignReport, EvidenceView, InputSummary, TableOptions, write_assign_csv, write_assign_json,
    write_assign_table,
};
use crate::transitions::model_predictions;
use crate::units::{AirFormula, Medium};

/// Assign each measured line to the transitions that could have made it, ranked,
/// with the probability that each match is a chance coincidence.
///
/// Predicted lines are the E1 lines between the levels of the compiled reference
/// tables (29 spectra from the NIST ASD, 100 nm – 2.5 µm, with published transition
/// probabilities; --list-species shows them), of your own level tables (--levels),
/// or of a level model (--model). A prediction is a candidate when it lies within K
/// combined standard uncertainties of the observed line (--within). Every output
/// says how the input was read (medium, air formula) and which selection rules were
/// applied.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct AssignArgs {
    /// The measured line list, or - for standard input: CSV, TSV or whitespace
    /// columns with a header line naming the columns, such as
    /// wavelength_nm,uncertainty_nm,intensity (also wavelength_A, wavelength_um,
    /// wavenumber_cm1, medium; # starts a comment).
    #[arg(value_name = "LINES", required_unless_present = "list_species")]
    pub lines: Option<PathBuf>,

    /// Match against the compiled table of this spectrum (`He I`), or of every
    /// compiled stage of an element (`Ar`: Ar I and Ar II); repeat for several
    /// (--species "He I" --species Ne). With --levels, the compiled spectra named
    /// here are matched too; a table of yours for one of them replaces it.
    /// [default: every compiled spectrum, or with --levels none]
    #[arg(long = "species", value_name = "SPECTRUM")]
    pub species: Vec<String>,

    /// List the compiled spectra (levels, predicted lines, lines with a published
    /// transition probability, level energies, source) and stop.
    #[arg(long = "list-species")]
    pub list_species: bool,

    /// Predict lines from the levels in FILE; repeat for several files. Alone, only
    /// your tables are matched; with --species, the compiled spectra named there too.
    /// CSV with the columns
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
    #[arg(long = "model-uncertainty", value_name = "CM1", requires = "model")]
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
    #[arg(long, value_name = "VALUE", allow_hyphen_values = true)]
    pub uncertainty: Option<GlobalUncertainty>,

    /// Refractive index of standard air used to convert air wavelengths:
    /// Birch & Downs (1994) as given by Morton (2000), Edlén (1966) or Ciddor (1996).
    #[arg(long = "air-formula", value_enum, default_value_t = AirFormulaArg::BirchDowns)]
    pub air_formula: AirFormulaArg,

    /// Leave out bad rows of the line list (each is reported on standard error)
    /// instead of stopping at the first one.
    #[arg(long = "skip-bad")]
    pub skip_bad: bool,

    /// Allow an output file to be one of the input files (replaced once the output
    /// is complete); without it such a run is refused.
    #[arg(long = "overwrite-input")]
    pub overwrite_input: bool,
    /// Rank by position and selection rules alone, line by line, as without
    /// intensities (no temperatures, no species verdicts, no joint resolution).
    #[arg(long = "position-only")]
    pub position_only: bool,

    /// Rank each line's candidates by log-likelihood on their own, without the
    /// joint resolution (one transition, one line) over the whole list.
    #[arg(long = "per-line", conflicts_with = "position_only")]
    pub per_line: bool,

    /// Starting excitation temperature, K: `"Ar I=11000"` for one species (repeat
    /// for several), or a number alone for every other species. Each species'
    /// Boltzmann plot replaces it where the plot is meaningful.
    /// [default: 8000]
    #[arg(long = "temperature", value_name = "[SPECTRUM=]KELVIN")]
    pub temperature: Vec<String>,

    /// What the intensity column measures: photon counts (I ∝ gA e^(−E/kT)) or
    /// energy (I ∝ gA e^(−E/kT)/λ).
    #[arg(long = "intensity-units", value_enum, default_value_t = UnitsArg::Photon)]
    pub intensity_units: UnitsArg,

    /// Also draw the stick spectrum (observed lines above, predicted below, joined by
    /// their assignments) as SVG to FILE.
    #[arg(long = "plot", value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,

    /// The figure's horizontal axis.
    #[arg(long = "plot-axis", value_enum, default_value_t = PlotAxis::Wavelength)]
    pub plot_axis: PlotAxis,

    /// The figure's range starts here, in the axis' unit (nm or cm⁻¹). [default: the
    /// observed range]
    #[arg(long = "plot-from", value_name = "X")]
    pub plot_from: Option<f64>,

    /// The figure's range ends here, in the axis' unit.
    #[arg(long = "plot-to", value_name = "X")]
    pub plot_to: Option<f64>,

    /// Also draw the Boltzmann plot, ln(I/gA) (photon counts) or ln(Iλ/gA) (energy)
    /// against the upper level's energy, as SVG to FILE: the points, the line and the
    /// T_exc ± σ of the species' Boltzmann fit that this assignment reports (with
    /// --position-only, a fit of the rank-1 candidates with an intensity and a
    /// published gA).
    #[arg(long = "boltzmann-plot", value_name = "FILE.svg")]
    pub boltzmann_plot: Option<PathBuf>,

    /// The spectrum of the Boltzmann plot. [default: the one whose fit used most
    /// lines, else the one with most usable lines]
    #[arg(long = "boltzmann-species", value_name = "SPECTRUM")]
    pub boltzmann_species: Option<String>,
}

/// The horizontal axis of the stick spectrum.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PlotAxis {
    /// Wavelength, nm: in air at and above 200 nm, in vacuum below.
    Wavelength,
    /// Vacuum wavenumber, cm⁻¹.
    Wavenumber,
}

/// The intensity units, as typed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum UnitsArg {
    /// Photon counts.
    Photon,
    /// Energy.
    Energy,
}

/// The long description of `termsight assign --help`.
pub(crate) const LONG_ABOUT: &str = "Assign each measured line to the transitions that could \
have made it, ranked, with the probability that each match is a chance coincidence.

Predicted lines are the electric-dipole lines between the levels of the compiled reference \
tables (29 spectra from the NIST Atomic Spectra Database: H I, He I, Li I, C I, C II, N I, \
N II, O I, O II, Ne I, Ne II, Na I, Mg I, Mg II, Al I, Si I, Ar I, Ar II, K I, Ca I, Ca II, \
Fe I, Fe II, Cu I, Zn I, Kr II, Cd I, W I, Hg I; lines from 100 nm to 2.5 µm, with the \
published transition probabilities, shown as gA; see --list-species), of your own level \
tables (--levels), or of a level model (--model, with predicted gf values shown beside \
each candidate). A prediction is a candidate when it lies within K combined standard \
uncertainties of the observed line (--within). Every output says how the input was read \
(medium, air formula) and which selection rules were applied.";

const AFTER_HELP: &str = "\
Examples:
  termsight assign lines.csv
  termsight assign lines.csv --species \"He I\" --species \"Ne I\" --all
  termsight assign scan.txt --uncertainty 0.002nm --format csv -o assigned.csv
  termsight assign lines.csv --species Ar --species N --species O
  termsight assign lines.csv --levels my-levels.csv --within 4
  termsight assign lines.csv --species \"He I\" --levels my-fe.csv
  termsight assign --list-species
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
    if args.list_species {
        return list_species(&args);
    }
    check_paths(&args)?;
    let config = match_config(&args)?;
    // The list first: the compiled spectra are predicted only where its lines reach.
    let list = read_lines(&args)?;
    report_skipped(&list);
    let predictions = predictions(
        &args.levels,
        &args.species,
        &args.model,
        args.model_uncertainty,
        Some(&config.reach_of(&list.lines)),
    )?;
    warn_wide_windows(&list, &predictions, &config);

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
    let evidence_config = evidence_config(&args, &predictions)?;
    let intensities = if args.position_only {
        Vec::new()
    } else {
        line_intensities(&list)?
    };
    let (assignments, result) = if args.position_only {
        (
            assign_lines_with_progress(&list.lines, &predictions, &config, &mut progress),
            None,
        )
    } else {
        let result = assign_with_evidence(
            &list.lines,
            &intensities,
            &predictions,
            &config,
            &evidence_config,
            &mut progress,
        );
        (Vec::new(), Some(result))
    };
    let assignments = match &result {
        Some(r) => &r.assignments,
        None => &assignments,
    };
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
        assignments,
        evidence: result.as_ref().map(|r| EvidenceView {
            config: &evidence_config,
            species: &r.species,
            rounds: r.rounds,
            converged: r.converged,
            lines_with_intensity: intensities.iter().flatten().count(),
        }),
    };
    let options = TableOptions {
        all: args.all,
        ..TableOptions::default()
    };
    write_output_with(args.output.as_deref(), |out| match args.format {
        Format::Table => write_assign_table(&report, &options, out),
        Format::Csv => write_assign_csv(&report, out),
        Format::Json => write_assign_json(&report, out),
    })?;
    write_figures(&args, &report)
}

/// Refuse an output onto an input (see [`super::paths`]).
fn check_paths(args: &AssignArgs) -> Result<(), CliError> {
    use super::paths::{NamedPath, check_outputs};
    let mut inputs: Vec<NamedPath<'_>> = Vec::new();
    if let Some(path) = &args.lines {
        inputs.push(NamedPath {
            option: "LINES",
            path,
        });
    }
    inputs.extend(args.levels.iter().map(|path| NamedPath {
        option: "--levels",
        path,
    }));
    inputs.extend(args.model.iter().map(|path| NamedPath {
        option: "--model",
        path,
    }));
    let outputs: Vec<NamedPath<'_>> = [
        ("--output", &args.output),
        ("--plot", &args.plot),
        ("--boltzmann-plot", &args.boltzmann_plot),
    ]
    .into_iter()
    .filter_map(|(option, path)| path.as_ref().map(|path| NamedPath { option, path }))
    .collect();
    check_outputs(&inputs, &outputs, args.overwrite_input)
}

/// The settings of the intensity-aware assignment from --temperature,
/// --intensity-units and --per-line.
fn evidence_config(
    args: &AssignArgs,
    predictions: &Predictions,
) -> Result<EvidenceConfig, CliError> {
    let mut config = EvidenceConfig {
        units: match args.intensity_units {
            UnitsArg::Photon => IntensityUnits::Photon,
            UnitsArg::Energy => IntensityUnits::Energy,
        },
        resolution: if args.per_line {
            Resolution::PerLine
        } else {
            Resolution::Joint
        },
        ..EvidenceConfig::default()
    };
    for text in &args.temperature {
        let bad = |why: String| CliError::Message(format!("--temperature '{text}': {why}"));
        let (species, value) = match text.rsplit_once('=') {
            Some((species, value)) => (Some(species.trim()), value.trim()),
            None => (None, text.trim()),
        };
        let kelvin: f64 = value
            .parse()
            .ok()
            .filter(|t: &f64| t.is_finite() && *t > 0.0)
            .ok_or_else(|| bad(format!("'{value}' is not a number of kelvin above 0")))?;
        match species {
            None => config.default_temperature_k = kelvin,
            Some(name) => {
                let species: Species = name.parse().map_err(|e| bad(format!("{e}")))?;
                if predictions.summary(species).is_none() {
                    return Err(bad(format!(
                        "{species} is not among the spectra matched (add it with --species)"
                    )));
                }
                config.temperatures.retain(|(s, _)| *s != species);
                config.temperatures.push((species, kelvin));
            }
        }
    }
    config
        .validate()
        .map_err(|e| CliError::Message(format!("--temperature: {e}")))?;
    Ok(config)
}

/// Name of the optional column of intensity uncertainties.
const UNCERTAINTY_INTENSITY: &str = "uncertainty_intensity";

/// The intensity of each line with its uncertainty from the `uncertainty_intensity`
/// column (a pass-through column of the list, same unit as the intensity), when
/// there is one.
pub(crate) fn line_intensities(list: &LineList) -> Result<Vec<Option<LineIntensity>>, CliError> {
    let column = list
        .extra_columns
        .iter()
        .position(|c| c.trim().eq_ignore_ascii_case(UNCERTAINTY_INTENSITY));
    list.lines
        .iter()
        .map(|line| {
            let uncertainty = match column.and_then(|c| line.extra.get(c)) {
                Some(text) if !text.trim().is_empty() => {
                    let value: f64 = text
                        .trim()
                        .parse()
                        .ok()
                        .filter(|v: &f64| v.is_finite() && *v >= 0.0)
                        .ok_or_else(|| {
                            CliError::Message(format!(
                                "{}: column '{UNCERTAINTY_INTENSITY}': '{}' is not a number ≥ 0",
                                crate::location::Location::line(&list.source, line.source_line),
                                text.trim()
                            ))
                        })?;
                    Some(value)
                }
                _ => None,
            };
            Ok(line
                .intensity
                .and_then(|i| LineIntensity::new(i, uncertainty)))
        })
        .collect()
}

/// The figures asked for with --plot and --boltzmann-plot.
fn write_figures(args: &AssignArgs, report: &AssignReport<'_>) -> Result<(), CliError> {
    if let Some(path) = &args.plot {
        let window = StickWindow {
            axis: match args.plot_axis {
                PlotAxis::Wavelength => SpectrumAxis::Wavelength {
                    air_formula: args.air_formula.into(),
                },
                PlotAxis::Wavenumber => SpectrumAxis::Wavenumber,
            },
            from: args.plot_from,
            to: args.plot_to,
            ..StickWindow::default()
        };
        let svg = stick_spectrum_svg(&stick_spectrum_from(report), &window)
            .map_err(|e| CliError::Message(format!("--plot: {e}")))?;
        write_atomically(path, svg.as_bytes())?;
    }
    if let Some(path) = &args.boltzmann_plot {
        let species = args
            .boltzmann_species
            .as_deref()
            .map(|s| {
                s.parse::<Species>()
                    .map_err(|e| CliError::Message(format!("--boltzmann-species: {e}")))
            })
            .transpose()?;
        let plot = boltzmann_from_report(report, species)
            .map_err(|e| CliError::Message(format!("--boltzmann-plot: {e}")))?;
        let svg = boltzmann_svg(&plot)
            .map_err(|e| CliError::Message(format!("--boltzmann-plot: {e}")))?;
        write_atomically(path, svg.as_bytes())?;
    }
    Ok(())
}

pub(crate) fn match_config(args: &AssignArgs) -> Result<MatchConfig, CliError> {
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

/// The predictions: from the compiled tables named with --species (all of them
/// when neither --species, --levels nor --model is given), from every level table
/// given with --levels (a table of a compiled species replaces the compiled one, and
/// the outputs say so), and from every model. With `reach`, the compiled spectra
/// keep only the lines its observed lines can reach (the same results, sooner).
pub(crate) fn predictions(
    level_files: &[PathBuf],
    species_names: &[String],
    models: &[PathBuf],
    model_uncertainty: Option<f64>,
    reach: Option<&ListReach>,
) -> Result<Predictions, CliError> {
    let LevelSets {
        wanted,
        compiled,
        tables,
    } = level_sets(level_files, species_names, !models.is_empty())?;
    let mut sets = Vec::new();
    for table in &tables {
        let mut set = predict_from_table(table)
            .map_err(|e| CliError::Message(format!("{}: {e}", table.source)))?;
        for species in table.species() {
            if !table.warnings.is_empty() {
                set.add_note(
                    species,
                    format!(
                        "{} warnings on {} (kept as given; listed on standard error)",
                        table.warnings.len(),
                        table.source
                    ),
                );
            }
            if wanted.contains(&species)
                && let Some(compiled) = embedded_table(species)
            {
                set.add_note(
                    species,
                    format!(
                        "this table replaces the compiled {species} table ({})",
                        compiled.citation()
                    ),
                );
            }
        }
        sets.push(set);
    }
    for path in models {
        sets.push(model_predictions_from(path, model_uncertainty)?);
    }
    // The largest uncertainty of the other predictions widens the reach of the list
    // (a broad candidate widens the density window of its line).
    let other_uncertainty = sets
        .iter()
        .flat_map(|set| {
            set.lines().iter().map(|line| {
                line.uncertainty_cm1
                    .hypot(set.model_uncertainty_cm1(line.species))
            })
        })
        .fold(0.0, f64::max);
    let compiled = match reach {
        Some(reach) => compiled_predictions_near(&compiled, reach, other_uncertainty),
        None => compiled_predictions(&compiled),
    }
    .map_err(|e| CliError::Message(e.to_string()))?;
    // The compiled spectra first, as the outputs list them.
    sets.insert(0, compiled);
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

/// `--list-species`: the compiled spectra, as a table.
fn list_species(args: &AssignArgs) -> Result<(), CliError> {
    let rows = EMBEDDED_TABLES
        .iter()
        .map(|t| {
            let levels = t.load().map_err(|e| CliError::Message(e.to_string()))?;
            let predictions = t
                .predictions()
                .map_err(|e| CliError::Message(e.to_string()))?;
            let summary = predictions.species().first().cloned();
            let (low, high) = levels
                .levels
                .iter()
                .fold((f64::MAX, f64::MIN), |(lo, hi), l| {
                    (lo.min(l.energy_cm1), hi.max(l.energy_cm1))
                });
            Ok(crate::report::CompiledSpectrum {
                species: t.species.to_string(),
                levels: levels.levels.len(),
                lines: predictions.lines().len(),
                lines_with_transition_probability: summary
                    .as_ref()
                    .map_or(0, |s| s.lines_with_transition_probability),
                lowest_level_cm1: low,
                highest_level_cm1: high,
                file: t.file.to_string(),
                source: t.citation().to_string(),
            })
        })
        .collect::<Result<Vec<_>, CliError>>()?;
    let text = crate::report::compiled_spectra_table(&rows);
    write_output(args.output.as_deref(), text.as_bytes())
}

/// How to read a line list, from the reading flags (shared with `find-levels`).
pub(crate) fn read_options(
    medium: Option<MediumArg>,
    uncertainty: Option<GlobalUncertainty>,
    air_formula: AirFormulaArg,
    skip_bad: bool,
) -> ReadOptions {
    ReadOptions {
        medium: medium.map(|m| match m {
            MediumArg::Air => Medium::Air,
            MediumArg::Vacuum => Medium::Vacuum,
        }),
        uncertainty,
        air_formula: air_formula.into(),
        skip_bad,
        ..ReadOptions::default()
    }
}

fn read_lines(args: &AssignArgs) -> Result<LineList, CliError> {
    let options = read_options(
        args.medium,
        args.uncertainty,
        args.air_formula,
        args.skip_bad,
    );
    let read_error = |e: crate::linelist::LineListError| CliError::Message(e.to_string());
    let path = args
        .lines
        .as_deref()
        .ok_or_else(|| CliError::Message("give the line list to assign (LINES)".into()))?;
    let (reader, name) = open_input(path)?;
    read_line_list(reader, &name, &options).map_err(read_error)
}

/// Lines warned about for a window wider than every prediction, at most.
const WIDE_WINDOWS_SHOWN: usize = 20;

/// Warn, naming the row, about each line whose acceptance window ±K·u already spans
/// every predicted line: its uncertainty is surely wrong (a unit or a column mixed
/// up), and every prediction becomes its candidate.
fn warn_wide_windows(list: &LineList, predictions: &Predictions, config: &MatchConfig) {
    // The span of every line predicted (those beyond the list's reach included).
    let Some((low, high)) = predictions.span_cm1() else {
        return;
    };
    if predictions.lines().len() < 2 || high <= low {
        return;
    }
    let k = config.tolerance_sigma();
    let wide = list.lines.iter().filter(|line| {
        line.wavenumber_cm1 - k * line.uncertainty_cm1 <= low
            && line.wavenumber_cm1 + k * line.uncertainty_cm1 >= high
    });
    let mut stderr = io::stderr().lock();
    for (shown, line) in wide.enumerate() {
        if shown == WIDE_WINDOWS_SHOWN {
            let _ = writeln!(
                stderr,
                "termsight: warning: more such lines in {}",
                list.source
            );
            break;
        }
        let _ = writeln!(
            stderr,
            "termsight: warning: {}:{}: the uncertainty {:.4e} cm-1 (×{k} = --within) spans \
             every predicted line ({low:.3}–{high:.3} cm-1): every prediction is a \
             candidate; check the uncertainty's unit and column",
            list.source, line.source_line, line.uncertainty_cm1
        );
    }
}

/// The rows left out under --skip-bad, on standard error.
pub(crate) fn report_skipped(list: &LineList) {
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
        let e = predictions(&[], &["Xe III".to_string()], &[], None, None).unwrap_err();
        assert!(e.to_string().contains("no compiled table of Xe III"), "{e}");
        assert!(e.to_string().contains("H I, He I, Li I"), "{e}");
        let e = predictions(&[], &["Xe".to_string()], &[], None, None).unwrap_err();
        assert!(e.to_string().contains("no compiled spectrum of Xe"), "{e}");
        let e = predictions(&[], &["Xx I".to_string()], &[], None, None).unwrap_err();
        assert!(
            e.to_string().starts_with("--species: cannot read species"),
            "{e}"
        );
    }

    #[test]
    fn default_is_every_compiled_table() {
        let p = predictions(&[], &[], &[], None, None).unwrap();
        assert_eq!(p.species().len(), EMBEDDED_TABLES.len());
        let p = predictions(&[], &["He I".into(), "Ne I".into()], &[], None, None).unwrap();
        let names: Vec<String> = p.species().iter().map(|s| s.species.to_string()).collect();
        assert_eq!(names, vec!["He I", "Ne I"]);
    }

    #[test]
    fn an_element_symbol_asks_for_every_compiled_stage() {
        let p = predictions(
            &[],
            &["Ar".into(), "He I".into(), "Ar II".into()],
            &[],
            None,
            None,
        )
        .unwrap();
        let names: Vec<String> = p.species().iter().map(|s| s.species.to_string()).collect();
        assert_eq!(names, vec!["Ar I", "Ar II", "He I"]);
    }
}
