//! Outputs of `termsight optimize`: the terminal tables, the optimised level table
//! (CSV in the level-table format, so `termsight fit --levels` reads it), the line
//! CSV with Ritz wavenumbers and wavelengths, and JSON.

use comfy_table::{CellAlignment, LineStyle, Table, TableStyle};
use serde::Serialize;

use super::csv_document::csv_document;
use super::digits::{
    Fixed, Uncertainty, WAVENUMBER_DECIMALS, push_uncertainty, push_wavenumber, wavelength_decimals,
};
use crate::levels::LEVEL_COLUMNS;
use crate::levels::optimize::{
    BlendLoss, BlendPolicy, LevelResult, LineResult, OptimizationReport, OptimizeOptions,
    SpeciesResult,
};
use crate::units::{AirFormula, LengthUnit, Medium, Wavelength, wavelength_uncertainty};

/// What the outputs say about the run besides the results.
#[derive(Debug, Clone, PartialEq)]
pub struct OptimizeContext<'a> {
    /// Name of the classified-line file.
    pub source: &'a str,
    /// The settings used.
    pub options: &'a OptimizeOptions,
    /// Air formula for the Ritz wavelengths in air.
    pub air_formula: AirFormula,
}

/// A table with a rule under the header and no other lines, cells one space apart.
fn plain_table() -> Table {
    let mut table = Table::new();
    table.load_style(TableStyle::new().header_separator(LineStyle::none().fill('─').junction('─')));
    table
}

/// An uncertainty with two significant digits in fixed notation; `0` for zero.
fn uncertainty_text(u: f64) -> String {
    if u == 0.0 {
        "0".to_string()
    } else {
        format!("{u:.*}", decimals_for(u))
    }
}

/// Decimals that show an uncertainty `u` with two significant digits (at most 8).
fn decimals_for(u: f64) -> usize {
    if u > 0.0 && u.is_finite() {
        (1 - u.log10().floor() as i32).clamp(0, 8) as usize
    } else {
        4
    }
}

/// A wavenumber or energy at the fixed resolution of 10⁻⁸ cm⁻¹ (see
/// [`super::digits`]).
fn position_text(value_cm1: f64) -> String {
    let mut out = Vec::new();
    push_wavenumber(&mut out, value_cm1);
    String::from_utf8(out).unwrap_or_default()
}

/// An uncertainty or a deviation in standard uncertainties to three significant
/// digits (see [`super::digits`]).
fn three_digits(value: f64) -> String {
    let mut out = Vec::new();
    push_uncertainty(&mut out, value);
    String::from_utf8(out).unwrap_or_default()
}

/// A wavelength in nm at the fixed resolution of 10⁻¹¹ nm.
fn wavelength_text(value_nm: f64) -> String {
    let mut out = Vec::new();
    super::digits::push_fixed(&mut out, value_nm, wavelength_decimals(1.0));
    String::from_utf8(out).unwrap_or_default()
}

fn cm1(value: f64) -> Fixed {
    Fixed(value, WAVENUMBER_DECIMALS)
}

/// The Ritz wavelength of a line in the conventional medium (air from 200 nm), in nm,
/// with its uncertainty; `None` when it cannot be expressed.
fn ritz_wavelength(line: &LineResult, formula: AirFormula) -> Option<(f64, f64, Medium)> {
    let sigma = line.fit.ritz_cm1;
    if sigma.is_nan() || sigma <= 0.0 {
        return None;
    }
    let medium = Medium::conventional(1e7 / sigma);
    let wavelength =
        Wavelength::from_wavenumber_cm1(sigma, LengthUnit::Nanometre, medium, formula).ok()?;
    let u = wavelength_uncertainty(
        sigma,
        line.fit.ritz_uncertainty_cm1,
        LengthUnit::Nanometre,
        medium,
        formula,
    )
    .ok()?;
    Some((wavelength.value, u, medium))
}

fn level_flags(level: &LevelResult) -> Vec<&'static str> {
    let mut flags = Vec::new();
    if level.is_reference {
        flags.push("reference");
    }
    if level.single_line() {
        flags.push("single-line");
    }
    flags
}

fn line_flags(line: &LineResult) -> Vec<&'static str> {
    let mut flags = Vec::new();
    if line.fit.outlier {
        flags.push("outlier");
    }
    if line.widened {
        flags.push("widened-blend");
    }
    flags
}

/// The description printed above the tables and as `#` lines of the CSVs.
pub fn optimize_description(
    report: &OptimizationReport,
    context: &OptimizeContext<'_>,
) -> Vec<String> {
    let s = &report.selection;
    let rule = if report.by_accept_column {
        "rows marked in the accept column"
    } else {
        "rank-1 candidates"
    };
    let blends = match context.options.blends {
        BlendPolicy::Omit => format!("{} blends left out", s.blends_omitted),
        BlendPolicy::Widen(f) => format!("{} blends kept with uncertainty ×{f}", s.blends_widened),
    };
    let mut lines = vec![
        format!(
            "Input: {} ({} classified rows, {} unassigned); used {} lines: {rule}, {blends}, {} rows not accepted.",
            context.source, s.classified_rows, s.unassigned_rows, s.used, s.not_accepted
        ),
        format!(
            "Method: weighted least squares of level energies (weights 1/u²); uncertainties relative to each \
             system's reference level, not scaled by χ²/ν; outliers beyond {} standard uncertainties.",
            context.options.outlier_sigma
        ),
        format!(
            "Ritz wavelengths: vacuum below 200 nm, air above ({}).",
            context.air_formula.citation()
        ),
    ];
    lines.extend(report.lost_to_blends.iter().map(blend_loss_text));
    for species in &report.species {
        let systems: Vec<String> = species
            .systems
            .iter()
            .map(|s| {
                format!(
                    "{} levels and {} lines relative to {} at {} cm⁻¹",
                    s.level_count, s.line_count, s.reference, s.reference_energy_cm1
                )
            })
            .collect();
        let reduced = if species.degrees_of_freedom > 0 {
            format!(
                "{:.3}",
                species.chi_squared / species.degrees_of_freedom as f64
            )
        } else {
            "–".to_string()
        };
        lines.push(format!(
            "{}: {} system{} ({}); χ² = {:.3} for ν = {} (χ²/ν = {reduced}).",
            species.species,
            species.systems.len(),
            if species.systems.len() == 1 {
                ""
            } else {
                "s not joined by any line"
            },
            systems.join("; "),
            species.chi_squared,
            species.degrees_of_freedom,
        ));
    }
    lines
}

/// Levels named in full in a [`BlendLoss`] message; more are counted.
const LOST_LEVELS_NAMED: usize = 12;

/// A species or levels that lost every line to the blends left out, in words, with
/// how to keep them.
pub fn blend_loss_text(loss: &BlendLoss) -> String {
    let mut names: Vec<String> = loss
        .levels
        .iter()
        .take(LOST_LEVELS_NAMED)
        .map(ToString::to_string)
        .collect();
    if loss.levels.len() > LOST_LEVELS_NAMED {
        names.push(format!("{} more", loss.levels.len() - LOST_LEVELS_NAMED));
    }
    let what = if loss.whole_species {
        format!(
            "{}: missing from the results: all of its {} accepted lines are blends, left out \
             (levels without a line: {})",
            loss.species,
            loss.blends,
            names.join(", ")
        )
    } else {
        format!(
            "{}: {} level{} lost every line to the blends left out: {}",
            loss.species,
            loss.levels.len(),
            if loss.levels.len() == 1 { "" } else { "s" },
            names.join(", ")
        )
    };
    format!(
        "{what}; keep blends with --blends widen (their uncertainty multiplied by \
         --blend-factor), or delete `blend` from the flags of the rows you trust."
    )
}

/// The terminal output: the description, a level table per species and the lines
/// (all of them with `all_lines`, else only the outliers).
pub fn optimize_table(
    report: &OptimizationReport,
    context: &OptimizeContext<'_>,
    all_lines: bool,
) -> String {
    let mut out = optimize_description(report, context).join("\n");
    out.push('\n');
    for species in &report.species {
        out.push_str(&format!("\n{} levels\n", species.species));
        out.push_str(&levels_table(species).to_string());
        out.push('\n');
        let shown: Vec<&LineResult> = species
            .lines
            .iter()
            .filter(|l| all_lines || l.fit.outlier)
            .collect();
        if shown.is_empty() {
            out.push_str(&format!(
                "\n{} lines: no outliers ({} lines; --show-lines lists them all)\n",
                species.species,
                species.lines.len()
            ));
        } else {
            let what = if all_lines { "lines" } else { "outlier lines" };
            out.push_str(&format!("\n{} {what}\n", species.species));
            out.push_str(&lines_table(&shown, context.air_formula).to_string());
            out.push('\n');
        }
    }
    out
}

fn levels_table(species: &SpeciesResult) -> Table {
    let mut table = plain_table();
    table.set_header(vec![
        "level",
        "energy\ncm⁻¹",
        "uncertainty\ncm⁻¹",
        "tabulated\ncm⁻¹",
        "opt − tab\ncm⁻¹",
        "lines",
        "system",
        "flags",
    ]);
    for level in &species.levels {
        let decimals = decimals_for(level.uncertainty_cm1);
        let (prior, difference) = match level.prior_energy_cm1 {
            Some(p) => (
                format!("{p}"),
                if level.uncertainty_cm1 > 0.0 {
                    format!("{:+.decimals$}", level.energy_cm1 - p)
                } else {
                    format!("{:+}", level.energy_cm1 - p)
                },
            ),
            None => ("–".into(), "–".into()),
        };
        table.add_row(vec![
            level.label.to_string(),
            if level.uncertainty_cm1 > 0.0 {
                format!("{:.decimals$}", level.energy_cm1)
            } else {
                level.energy_cm1.to_string()
            },
            uncertainty_text(level.uncertainty_cm1),
            prior,
            difference,
            level.line_count.to_string(),
            (level.system + 1).to_string(),
            level_flags(level).join(" "),
        ]);
    }
    for column in 1..6 {
        if let Some(c) = table.column_mut(column) {
            c.set_cell_alignment(CellAlignment::Right);
        }
    }
    table
}

fn lines_table(lines: &[&LineResult], formula: AirFormula) -> Table {
    let mut table = plain_table();
    table.set_header(vec![
        "line",
        "lower level",
        "upper level",
        "observed\ncm⁻¹",
        "Ritz\ncm⁻¹",
        "Ritz λ\nnm",
        "obs − Ritz\ncm⁻¹",
        "(obs − Ritz)/u",
        "flags",
    ]);
    for line in lines {
        let decimals = decimals_for(line.uncertainty_cm1);
        let wavelength = match ritz_wavelength(line, formula) {
            Some((value, u, medium)) => {
                let d = decimals_for(u.max(1e-9));
                format!("{value:.d$} ± {} {medium}", uncertainty_text(u))
            }
            None => "–".into(),
        };
        table.add_row(vec![
            line.line.to_string(),
            line.lower.to_string(),
            line.upper.to_string(),
            format!("{:.decimals$}", line.observed_cm1),
            format!(
                "{:.decimals$} ± {}",
                line.fit.ritz_cm1,
                uncertainty_text(line.fit.ritz_uncertainty_cm1)
            ),
            wavelength,
            format!("{:+.decimals$}", line.fit.residual_cm1),
            format!("{:+.2}", line.fit.residual_sigma),
            line_flags(line).join(" "),
        ]);
    }
    for column in [0, 3, 4, 5, 6, 7] {
        if let Some(c) = table.column_mut(column) {
            c.set_cell_alignment(CellAlignment::Right);
        }
    }
    table
}

/// Extra columns of the optimised level table, after [`LEVEL_COLUMNS`].
pub const OPTIMIZED_LEVEL_EXTRA_COLUMNS: [&str; 5] = [
    "line_count",
    "system",
    "tabulated_energy_cm1",
    "optimized_minus_tabulated_cm1",
    "flags",
];

/// The optimised levels as a level table (`species,configuration,term,J,energy_cm1,
/// uncertainty_cm1,source` and [`OPTIMIZED_LEVEL_EXTRA_COLUMNS`]), readable by
/// [`crate::levels::read_level_table`]. Energies are printed to 10⁻⁸ cm⁻¹ and
/// uncertainties to three significant digits (see [`super::digits`]).
pub fn optimized_levels_csv(report: &OptimizationReport, context: &OptimizeContext<'_>) -> Vec<u8> {
    let header: Vec<String> = LEVEL_COLUMNS
        .iter()
        .chain(OPTIMIZED_LEVEL_EXTRA_COLUMNS.iter())
        .map(|c| c.to_string())
        .collect();
    let mut rows = Vec::new();
    for species in &report.species {
        for level in &species.levels {
            let system = &species.systems[level.system];
            rows.push(vec![
                species.species.to_string(),
                level.label.configuration.to_string(),
                level.label.term.to_string(),
                level.label.j.to_string(),
                position_text(level.energy_cm1),
                three_digits(level.uncertainty_cm1),
                format!(
                    "optimised from {} ({} lines), relative to {}",
                    context.source, level.line_count, system.reference
                ),
                level.line_count.to_string(),
                (level.system + 1).to_string(),
                level.prior_energy_cm1.map_or(String::new(), position_text),
                level
                    .prior_energy_cm1
                    .map_or(String::new(), |p| position_text(level.energy_cm1 - p)),
                level_flags(level).join(";"),
            ]);
        }
    }
    csv_document(&optimize_description(report, context), header, rows)
}

/// Columns of the line CSV.
pub const OPTIMIZED_LINE_COLUMNS: [&str; 18] = [
    "species",
    "line",
    "lower_configuration",
    "lower_term",
    "lower_J",
    "upper_configuration",
    "upper_term",
    "upper_J",
    "observed_wavenumber_cm1",
    "uncertainty_cm1",
    "ritz_wavenumber_cm1",
    "ritz_uncertainty_cm1",
    "ritz_wavelength_nm",
    "ritz_wavelength_uncertainty_nm",
    "ritz_medium",
    "residual_cm1",
    "residual_sigma",
    "flags",
];

/// Every line with its Ritz wavenumber and wavelength (conventional medium) and their
/// uncertainties from the covariance matrix, and its residual; positions to
/// 10⁻⁸ cm⁻¹ and 10⁻¹¹ nm, uncertainties and residuals in standard uncertainties to
/// three significant digits (see [`super::digits`]).
pub fn optimized_lines_csv(report: &OptimizationReport, context: &OptimizeContext<'_>) -> Vec<u8> {
    let header: Vec<String> = OPTIMIZED_LINE_COLUMNS
        .iter()
        .map(|c| c.to_string())
        .collect();
    let mut rows = Vec::new();
    for species in &report.species {
        for line in &species.lines {
            let (wavelength, u, medium) = match ritz_wavelength(line, context.air_formula) {
                Some((w, u, m)) => (wavelength_text(w), three_digits(u), m.to_string()),
                None => (String::new(), String::new(), String::new()),
            };
            rows.push(vec![
                species.species.to_string(),
                line.line.to_string(),
                line.lower.configuration.to_string(),
                line.lower.term.to_string(),
                line.lower.j.to_string(),
                line.upper.configuration.to_string(),
                line.upper.term.to_string(),
                line.upper.j.to_string(),
                position_text(line.observed_cm1),
                three_digits(line.uncertainty_cm1),
                position_text(line.fit.ritz_cm1),
                three_digits(line.fit.ritz_uncertainty_cm1),
                wavelength,
                u,
                medium,
                position_text(line.fit.residual_cm1),
                three_digits(line.fit.residual_sigma),
                line_flags(line).join(";"),
            ]);
        }
    }
    csv_document(&optimize_description(report, context), header, rows)
}

#[derive(Serialize)]
struct Document<'a> {
    description: Vec<String>,
    selection: SelectionJson,
    species: Vec<SpeciesJson<'a>>,
}

#[derive(Serialize)]
struct SelectionJson {
    classified_rows: usize,
    unassigned_rows: usize,
    not_accepted: usize,
    blends_omitted: usize,
    blends_widened: usize,
    used: usize,
    by_accept_column: bool,
}

#[derive(Serialize)]
struct SpeciesJson<'a> {
    species: String,
    chi_squared: f64,
    degrees_of_freedom: usize,
    systems: Vec<SystemJson>,
    levels: Vec<LevelJson<'a>>,
    lines: Vec<LineJson<'a>>,
}

#[derive(Serialize)]
struct SystemJson {
    reference: String,
    reference_energy_cm1: Fixed,
    levels: usize,
    lines: usize,
}

#[derive(Serialize)]
struct LevelJson<'a> {
    label: String,
    energy_cm1: Fixed,
    uncertainty_cm1: Uncertainty,
    tabulated_energy_cm1: Option<Fixed>,
    line_count: usize,
    system: usize,
    flags: Vec<&'a str>,
}

#[derive(Serialize)]
struct LineJson<'a> {
    line: usize,
    lower: String,
    upper: String,
    observed_wavenumber_cm1: Fixed,
    uncertainty_cm1: Uncertainty,
    ritz_wavenumber_cm1: Fixed,
    ritz_uncertainty_cm1: Uncertainty,
    ritz_wavelength_nm: Option<Fixed>,
    ritz_wavelength_uncertainty_nm: Option<Uncertainty>,
    ritz_medium: Option<Medium>,
    residual_cm1: Fixed,
    residual_sigma: Uncertainty,
    flags: Vec<&'a str>,
}

/// The whole result as JSON.
pub fn optimize_json(report: &OptimizationReport, context: &OptimizeContext<'_>) -> String {
    let s = report.selection;
    let document = Document {
        description: optimize_description(report, context),
        selection: SelectionJson {
            classified_rows: s.classified_rows,
            unassigned_rows: s.unassigned_rows,
            not_accepted: s.not_accepted,
            blends_omitted: s.blends_omitted,
            blends_widened: s.blends_widened,
            used: s.used,
            by_accept_column: report.by_accept_column,
        },
        species: report
            .species
            .iter()
            .map(|species| SpeciesJson {
                species: species.species.to_string(),
                chi_squared: species.chi_squared,
                degrees_of_freedom: species.degrees_of_freedom,
                systems: species
                    .systems
                    .iter()
                    .map(|s| SystemJson {
                        reference: s.reference.to_string(),
                        reference_energy_cm1: cm1(s.reference_energy_cm1),
                        levels: s.level_count,
                        lines: s.line_count,
                    })
                    .collect(),
                levels: species
                    .levels
                    .iter()
                    .map(|l| LevelJson {
                        label: l.label.to_string(),
                        energy_cm1: cm1(l.energy_cm1),
                        uncertainty_cm1: Uncertainty(l.uncertainty_cm1),
                        tabulated_energy_cm1: l.prior_energy_cm1.map(cm1),
                        line_count: l.line_count,
                        system: l.system + 1,
                        flags: level_flags(l),
                    })
                    .collect(),
                lines: species
                    .lines
                    .iter()
                    .map(|l| {
                        let wavelength = ritz_wavelength(l, context.air_formula);
                        LineJson {
                            line: l.line,
                            lower: l.lower.to_string(),
                            upper: l.upper.to_string(),
                            observed_wavenumber_cm1: cm1(l.observed_cm1),
                            uncertainty_cm1: Uncertainty(l.uncertainty_cm1),
                            ritz_wavenumber_cm1: cm1(l.fit.ritz_cm1),
                            ritz_uncertainty_cm1: Uncertainty(l.fit.ritz_uncertainty_cm1),
                            ritz_wavelength_nm: wavelength
                                .map(|w| Fixed(w.0, wavelength_decimals(1.0))),
                            ritz_wavelength_uncertainty_nm: wavelength.map(|w| Uncertainty(w.1)),
                            ritz_medium: wavelength.map(|w| w.2),
                            residual_cm1: cm1(l.fit.residual_cm1),
                            residual_sigma: Uncertainty(l.fit.residual_sigma),
                            flags: line_flags(l),
                        }
                    })
                    .collect(),
            })
            .collect(),
    };
    serde_json::to_string_pretty(&document).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}
