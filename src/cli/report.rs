//! `termsight report LINES -o report.html`: assign → optimize (→ fit) on one line
//! list, written as one self-contained HTML page with every figure inline.

use std::path::PathBuf;

use super::CliError;
use super::assign::{
    AirFormulaArg, MediumArg, PlotAxis, UnitsArg, line_intensities, predictions, report_skipped,
};
use super::input::{open_file, open_input};
use super::output::write_atomically;
use crate::assign::{EvidenceConfig, MatchConfig, assign_lines, assign_with_evidence, records};
use crate::fit::{FitOptions, fit_levels, simple_picture};
use crate::levels::optimize::{
    BlendPolicy, OptimizeOptions, classified_from_records, optimize_classified,
};
use crate::levels::read_level_table;
use crate::levels::search::{LevelSearch, SearchConfig, SearchLine, find_levels};
use crate::linelist::{GlobalUncertainty, ReadOptions, read_line_list};
use crate::notation::Species;
use crate::plasma::IntensityUnits;
use crate::report::figures::{
    ExtraLevel, SpectrumAxis, StickWindow, boltzmann_from_report, boltzmann_svg,
    fit_residuals_from, fit_residuals_svg, ritz_residuals_from, ritz_residuals_svg,
    stick_spectrum_from, stick_spectrum_svg, term_diagram_from, term_diagram_svg,
};
use crate::report::{
    AnalysisPage, AssignReport, EvidenceView, FitReport, InputSummary, OptimizeContext, PageFigure,
    PageLevelSearch, analysis_html, optimize_description, optimized_levels_csv,
};
use crate::structure::model::{LoadedModel, read_model};
use crate::units::Medium;

/// The long description of `termsight report --help`.
const LONG_ABOUT: &str = "Run the whole analysis of one line list and write it as one HTML \
page: assign the lines (as `termsight assign`: ranked with the intensities as evidence, or by \
position alone with --position-only), optimise the level energies from the rank-1 \
candidates (as `termsight optimize`), and, with --fit-model, fit that level model to the \
optimised levels of its species (as `termsight fit --levels`).

The page holds the input summary, a summary per species, the tables of every stage and the \
figures (stick spectrum, term diagram, Boltzmann plot, residuals) as inline SVG. It needs \
nothing else: no scripts, no fonts or styles from elsewhere, no network, so it can be mailed \
or archived as it is. Blends are kept in the optimisation with their uncertainty doubled \
(--blends omit leaves them out, as `termsight optimize` does by default). With \
--candidate-levels, the lines left unassigned are searched for new levels of the term \
diagram's spectrum (as `termsight find-levels`), and the candidates are marked in the diagram \
and listed.";

const AFTER_HELP: &str = "\
Examples:
  termsight report lines.csv -o report.html
  termsight report lines.csv --species \"He I\" --species \"Ne I\" -o tube.html
  termsight report lines.csv --species \"He I\" --fit-model he-model.toml -o he.html
  termsight report lines.csv --species \"Ne I\" --candidate-levels -o ne.html";

/// What to do with blended lines in the optimisation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ReportBlends {
    /// Leave them out.
    Omit,
    /// Keep them with the uncertainty doubled.
    Widen,
}

/// Arguments of `termsight report`.
#[derive(Debug, clap::Args)]
#[command(long_about = LONG_ABOUT, after_help = AFTER_HELP)]
pub struct ReportArgs {
    /// The measured line list, or - for standard input (as for `termsight assign`).
    #[arg(value_name = "LINES")]
    pub lines: PathBuf,
    /// The HTML file to write (replaced in one step).
    #[arg(short = 'o', long, value_name = "FILE.html")]
    pub output: PathBuf,
    /// Match against this compiled spectrum, or every stage of an element; repeat for
    /// several. [default: every compiled spectrum, or with --levels none]
    #[arg(long = "species", value_name = "SPECTRUM")]
    pub species: Vec<String>,
    /// Predict lines from the levels in FILE too (repeatable), as for `assign`.
    #[arg(long = "levels", value_name = "FILE")]
    pub levels: Vec<PathBuf>,
    /// Fit this level model (TOML) to the optimised levels of its species.
    #[arg(long = "fit-model", value_name = "FILE")]
    pub fit_model: Option<PathBuf>,
    /// Accept a candidate within K combined standard uncertainties.
    #[arg(short = 'k', long = "within", value_name = "K", default_value_t = MatchConfig::DEFAULT_TOLERANCE_SIGMA)]
    pub within: f64,
    /// Blends in the optimisation.
    #[arg(long, value_enum, default_value_t = ReportBlends::Widen)]
    pub blends: ReportBlends,
    /// Medium of wavelengths whose row does not give one. [default: air at and above
    /// 200 nm, vacuum below]
    #[arg(long, value_enum)]
    pub medium: Option<MediumArg>,
    /// Standard uncertainty of lines that do not give one: 0.002nm, 0.02A, 0.05cm-1.
    #[arg(long, value_name = "VALUE")]
    pub uncertainty: Option<GlobalUncertainty>,
    /// Refractive index of standard air used to convert air wavelengths.
    #[arg(long = "air-formula", value_enum, default_value_t = AirFormulaArg::BirchDowns)]
    pub air_formula: AirFormulaArg,
    /// The stick spectrum's horizontal axis.
    #[arg(long = "plot-axis", value_enum, default_value_t = PlotAxis::Wavelength)]
    pub plot_axis: PlotAxis,
    /// The stick spectrum starts here, in the axis' unit (nm or cm⁻¹).
    #[arg(long = "plot-from", value_name = "X")]
    pub plot_from: Option<f64>,
    /// The stick spectrum ends here.
    #[arg(long = "plot-to", value_name = "X")]
    pub plot_to: Option<f64>,
    /// Leave out bad rows of the line list (reported on standard error).
    #[arg(long = "skip-bad")]
    pub skip_bad: bool,
    /// Rank by position and selection rules alone (as `assign --position-only`); by
    /// default the intensities are evidence too, as `termsight assign` ranks.
    #[arg(long = "position-only")]
    pub position_only: bool,
    /// What the intensity column measures (as for `assign`).
    #[arg(long = "intensity-units", value_enum, default_value_t = UnitsArg::Photon)]
    pub intensity_units: UnitsArg,
    /// Search the lines left unassigned for new levels of the term diagram's
    /// spectrum (as `termsight find-levels` with its defaults, against that
    /// spectrum's levels of the predictions), mark the candidates in the diagram and
    /// list them.
    #[arg(long = "candidate-levels")]
    pub candidate_levels: bool,
}

/// Run `termsight report`.
pub fn run(args: ReportArgs) -> Result<(), CliError> {
    let config = MatchConfig::default()
        .with_tolerance_sigma(args.within)
        .map_err(|e| CliError::Message(format!("--within: {e}")))?;
    // Read the model first: a broken model file stops before any work.
    let model = match &args.fit_model {
        Some(path) => {
            let (reader, name) = open_file(path)?;
            let loaded = read_model(reader, &name).map_err(|e| CliError::Message(e.to_string()))?;
            Some((loaded, name))
        }
        None => None,
    };
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
    let (reader, name) = open_input(&args.lines)?;
    let list =
        read_line_list(reader, &name, &options).map_err(|e| CliError::Message(e.to_string()))?;
    report_skipped(&list);
    let predictions = predictions(
        &args.levels,
        &args.species,
        &[],
        None,
        Some(&config.reach_of(&list.lines)),
    )?;
    // Ranked as `assign` ranks: the intensities as evidence, unless --position-only.
    let evidence_config = EvidenceConfig {
        units: match args.intensity_units {
            UnitsArg::Photon => IntensityUnits::Photon,
            UnitsArg::Energy => IntensityUnits::Energy,
        },
        ..EvidenceConfig::default()
    };
    let intensities = if args.position_only {
        Vec::new()
    } else {
        line_intensities(&list)?
    };
    let (position_only, evidence) = if args.position_only {
        (assign_lines(&list.lines, &predictions, &config), None)
    } else {
        let result = assign_with_evidence(
            &list.lines,
            &intensities,
            &predictions,
            &config,
            &evidence_config,
            &mut |_| {},
        );
        (Vec::new(), Some(result))
    };
    let assignments = match &evidence {
        Some(result) => &result.assignments,
        None => &position_only,
    };
    let input = InputSummary::from_line_list(&list);
    let assign = AssignReport {
        input: &input,
        config: &config,
        list: &list,
        predictions: &predictions,
        assignments,
        evidence: evidence.as_ref().map(|r| EvidenceView {
            config: &evidence_config,
            species: &r.species,
            rounds: r.rounds,
            converged: r.converged,
            lines_with_intensity: intensities.iter().flatten().count(),
        }),
    };
    let rows = records(&list, &predictions, assignments);

    // Optimise from the rank-1 candidates.
    let classified = classified_from_records(&name, &rows);
    let optimize_options = OptimizeOptions {
        blends: match args.blends {
            ReportBlends::Omit => BlendPolicy::Omit,
            ReportBlends::Widen => BlendPolicy::Widen(2.0),
        },
        ..OptimizeOptions::default()
    };
    let context = OptimizeContext {
        source: &name,
        options: &optimize_options,
        air_formula: args.air_formula.into(),
    };
    let optimization = if classified.lines.is_empty() {
        Err("no line has a candidate".to_string())
    } else {
        optimize_classified(&classified, &optimize_options).map_err(|e| e.to_string())
    };

    // Fit the model to the optimised levels of its species, read back from the
    // level table that `optimize --format csv` writes.
    let mut fit_parts = None;
    if let (Some((LoadedModel { model, structure }, model_name)), Ok(report)) =
        (&model, &optimization)
    {
        let csv = optimized_levels_csv(report, &context);
        let table = read_level_table(csv.as_slice(), &format!("levels optimised from {name}"))
            .map_err(|e| CliError::Message(e.to_string()))?;
        let outcome = fit_levels(
            model,
            structure,
            &table.levels,
            &FitOptions::default(),
            |_| {},
        )
        .map_err(|e| format!("{model_name} with {}: {e}", table.source))
        .and_then(|result| {
            let fitted = result.fitted_model(model);
            let picture =
                simple_picture(&fitted).map_err(|e| format!("hydrogenic estimates: {e}"))?;
            Ok((result, fitted, picture))
        });
        fit_parts = Some((outcome, model_name.clone(), table.source));
    } else if let (Some(_), Err(why)) = (&model, &optimization) {
        fit_parts = Some((
            Err(format!("no optimised levels to fit to ({why})")),
            String::new(),
            String::new(),
        ));
    }

    let mut figures = Vec::new();
    let mut missing = Vec::new();
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
    let mut add = |caption: &str, svg: Result<String, String>| match svg {
        Ok(svg) => figures.push(PageFigure {
            caption: caption.to_string(),
            svg,
        }),
        Err(e) => missing.push(format!("{caption}: not drawn, {e}.")),
    };
    add(
        "Observed lines (above) against predicted lines (below), joined by their best candidates.",
        stick_spectrum_svg(&stick_spectrum_from(&assign), &window).map_err(|e| e.to_string()),
    );
    let mut level_search = None;
    if let Ok(report) = &optimization {
        if let Some(species) = report.species.iter().rev().max_by_key(|s| s.levels.len()) {
            let extra = if args.candidate_levels {
                let search = search_levels(&rows, &predictions, species.species);
                let extra = search
                    .candidates
                    .iter()
                    .map(|c| ExtraLevel {
                        energy_cm1: c.energy_cm1,
                        parity: c.parity,
                        j: c.allowed_j.clone(),
                        label: format!("{:.2}", c.energy_cm1),
                    })
                    .collect();
                level_search = Some(PageLevelSearch {
                    species: species.species,
                    search,
                });
                extra
            } else {
                Vec::new()
            };
            let diagram = term_diagram_from(&name, species, &classified, extra);
            add(
                &format!(
                    "Term diagram of {} (the spectrum with most optimised levels).",
                    species.species
                ),
                term_diagram_svg(&diagram).map_err(|e| e.to_string()),
            );
        }
        add(
            "Observed − Ritz wavenumbers of the lines used, in standard uncertainties.",
            ritz_residuals_svg(&ritz_residuals_from(
                &name,
                report,
                optimize_options.outlier_sigma,
            ))
            .map_err(|e| e.to_string()),
        );
    }
    add(
        "Boltzmann plot: the species whose excitation temperature was fitted from most lines (the fit the assignment reports), else the one with most lines that have an intensity and a published gA.",
        boltzmann_from_report(&assign, None)
            .map_err(|e| e.to_string())
            .and_then(|plot| boltzmann_svg(&plot).map_err(|e| e.to_string())),
    );
    if let Some((Ok((result, _, _)), model_name, levels_source)) = &fit_parts {
        add(
            "E_exp − E_calc of the fitted levels.",
            fit_residuals_svg(&fit_residuals_from(
                &format!("{model_name} with {levels_source}"),
                result,
            ))
            .map_err(|e| e.to_string()),
        );
    }

    let fit = fit_parts
        .as_ref()
        .map(|(outcome, model_name, levels_source)| {
            outcome
                .as_ref()
                .map(|(result, fitted, picture)| FitReport {
                    result,
                    model: fitted,
                    model_source: model_name,
                    levels_source,
                    simple_picture: picture.as_ref(),
                })
                .map_err(|e| e.clone())
        });
    let page = AnalysisPage {
        assign: &assign,
        records: &rows,
        optimization: optimization
            .as_ref()
            .map(|r| (r, optimize_description(r, &context)))
            .map_err(|e| e.clone()),
        fit,
        figures,
        missing_figures: missing,
        level_search: level_search.as_ref(),
    };
    write_atomically(&args.output, analysis_html(&page).as_bytes())
}

/// The level search of `species` over the lines without a candidate, against that
/// spectrum's levels in the predictions, with the search's default settings.
fn search_levels(
    rows: &[crate::assign::AssignmentRecord],
    predictions: &crate::levels::Predictions,
    species: Species,
) -> LevelSearch {
    let mut seen = std::collections::HashSet::new();
    let lines: Vec<SearchLine> = rows
        .iter()
        .filter(|r| r.rank.is_none() && seen.insert(r.line))
        .map(|r| SearchLine {
            row: r.line,
            wavenumber_cm1: r.observed_wavenumber_cm1,
            uncertainty_cm1: r.observed_uncertainty_cm1,
            intensity: r.observed_intensity,
        })
        .collect();
    let levels: Vec<crate::levels::Level> = predictions
        .levels()
        .iter()
        .filter(|l| l.species == species)
        .cloned()
        .collect();
    find_levels(&lines, &levels, &SearchConfig::default(), &mut |_| {})
}
