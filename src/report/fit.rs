//! The outputs of `termsight fit`: a terminal report and JSON.
//!
//! Both say the same: the fit's statistics (σ and degrees of freedom, weighting,
//! convergence), every parameter (kind, initial, fitted, standard error,
//! fitted/initial, and for two-electron ions the hydrogenic first-order value),
//! correlations (|ρ| above the threshold in the table, the whole matrix in JSON),
//! the first-order picture of 1s nl configurations, every matched level (E_exp,
//! E_calc, E_exp − E_calc, composition) and the levels no state matched.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use comfy_table::{CellAlignment, Table, presets};
use serde::Serialize;

use super::significant;
use crate::fit::{
    Convergence, FitResult, MatchedBy, ParameterKind, SimplePicture, UnmatchedReason, Weighting,
};
use crate::structure::ParameterId;
use crate::structure::model::LevelModel;

/// What a fit report shows.
#[derive(Debug, Clone, Copy)]
pub struct FitReport<'a> {
    /// The fit.
    pub result: &'a FitResult,
    /// The model as fitted (for configuration labels).
    pub model: &'a LevelModel,
    /// Where the model came from (a path).
    pub model_source: &'a str,
    /// Where the levels came from (a path or `<embedded He I>`).
    pub levels_source: &'a str,
    /// Hydrogenic first-order values, for two-electron ions.
    pub simple_picture: Option<&'a SimplePicture>,
}

/// The fitted model as TOML (`fit --model-out`): a comment naming the levels fitted
/// to, the size of the fit and its σ, then the model with the standard errors as
/// uncertainties.
pub fn fitted_model_toml(report: &FitReport<'_>) -> String {
    let result = report.result;
    let mut toml = format!(
        "# Fitted by termsight fit to {} ({} levels, {} free parameters, {} degrees of \
         freedom{}).\n# Uncertainties are standard errors of the fit.\n",
        report.levels_source,
        result.levels.len(),
        result.free_parameters,
        result.degrees_of_freedom,
        result
            .sigma_cm1
            .map_or_else(String::new, |s| format!(", σ = {s:.6} cm⁻¹"))
    );
    toml.push_str(&crate::structure::model::write_model(report.model));
    toml
}

impl FitReport<'_> {
    fn hydrogenic(&self, id: &ParameterId) -> Option<f64> {
        self.simple_picture?
            .integrals
            .iter()
            .find(|i| i.parameter == *id)
            .map(|i| i.value_cm1)
    }

    fn fitted(&self, id: &ParameterId) -> Option<f64> {
        self.result
            .parameters
            .iter()
            .find(|p| p.id == *id)
            .map(|p| p.fitted_cm1)
    }
}

/// A value in cm⁻¹: parameters span 10⁻³ to 10⁵ cm⁻¹, so at least 1 in magnitude
/// to 10 significant digits but at most 6 decimals, below 1 to 6 significant
/// digits; below 10⁻⁹ cm⁻¹ (rounding of a zero) as 0.
fn value(v: f64) -> String {
    if v.abs() < 1e-9 {
        return "0".into();
    }
    if v.abs() < 1.0 {
        return significant(v, 6);
    }
    let magnitude = v.abs().log10().floor() as i32;
    let decimals = (9 - magnitude).clamp(0, 6) as usize;
    format!("{v:.decimals$}")
}

fn weighting_text(weighting: Weighting) -> String {
    match weighting {
        Weighting::Equal => "equal weights".into(),
        Weighting::Uncertainty { floor_cm1 } => format!(
            "weights 1/(u² + u_floor²) from the level uncertainties, u_floor = {floor_cm1} cm⁻¹"
        ),
    }
}

fn kind_text(kind: &ParameterKind) -> String {
    match kind {
        ParameterKind::Free => "free".into(),
        ParameterKind::Fixed => "fixed".into(),
        ParameterKind::Tied { to, ratio } => format!("{ratio} × {to}"),
    }
}

/// Width that prose lines are wrapped to.
const LINE_WIDTH: usize = 100;

/// `text` broken at spaces into lines of at most [`LINE_WIDTH`] characters (longer
/// words stay whole), each starting with `indent`, each ending with a newline.
fn wrap(text: &str, indent: &str) -> String {
    let mut out = String::new();
    let mut line = String::from(indent);
    for word in text.split(' ') {
        let empty = line.len() == indent.len();
        if !empty && line.chars().count() + 1 + word.chars().count() > LINE_WIDTH {
            out.push_str(&line);
            out.push('\n');
            line = format!("{indent}  ");
        } else if !empty {
            line.push(' ');
        }
        line.push_str(word);
    }
    out.push_str(&line);
    out.push('\n');
    out
}

/// The header lines: what was fitted to what, and how well.
fn summary(report: &FitReport<'_>) -> String {
    let r = report.result;
    let mut text = String::new();
    let mut head = String::new();
    let _ = write!(
        head,
        "{}: {} free parameter{} fitted to {} level{} ({} configurations from {}, levels from \
         {}), {}.",
        r.species,
        r.free_parameters,
        if r.free_parameters == 1 { "" } else { "s" },
        r.levels.len(),
        if r.levels.len() == 1 { "" } else { "s" },
        report.model.configurations.len(),
        report.model_source,
        report.levels_source,
        weighting_text(r.weighting)
    );
    text.push_str(&wrap(&head, ""));
    let counted = |n: usize, word: &str| format!("{n} {word}{}", if n == 1 { "" } else { "s" });
    let _ = match r.convergence {
        Convergence::Converged => writeln!(
            text,
            "Converged after {} ({} of the levels).",
            counted(r.iterations, "iteration"),
            counted(r.evaluations, "evaluation")
        ),
        Convergence::StoppedAtLimit => writeln!(
            text,
            "WARNING: stopped at the evaluation limit ({} of the levels after {}) before \
             converging: not a converged fit; the values are the best found. Allow more with \
             --max-evaluations.",
            counted(r.evaluations, "evaluation"),
            counted(r.iterations, "iteration")
        ),
        Convergence::NothingToFit => {
            writeln!(
                text,
                "No free parameter: the levels are computed, not fitted."
            )
        }
    };
    if !r.assignment_settled {
        text.push_str(&wrap(
            "WARNING: matched afresh at the fitted values, the levels still changed states \
             after the last pass; check the labels of strongly mixed levels.",
            "",
        ));
    }
    match r.sigma_cm1 {
        Some(sigma) => {
            let _ = write!(
                text,
                "σ = {} cm⁻¹ with {} degree{} of freedom; rms of E_exp − E_calc {} cm⁻¹",
                significant(sigma, 4),
                r.degrees_of_freedom,
                if r.degrees_of_freedom == 1 { "" } else { "s" },
                significant(r.rms_cm1, 4)
            );
            if let Some(chi) = r.reduced_chi_square {
                let _ = write!(text, "; χ²/ν = {}", significant(chi, 4));
            }
            text.push_str(".\n");
        }
        None => {
            let _ = writeln!(
                text,
                "A determined fit (0 degrees of freedom): no σ and no standard errors; rms of \
                 E_exp − E_calc {} cm⁻¹.",
                significant(r.rms_cm1, 4)
            );
        }
    }
    if r.other_species_levels > 0 {
        let _ = writeln!(
            text,
            "{} levels of other species in the table were left out.",
            r.other_species_levels
        );
    }
    text
}

fn new_table(header: Vec<String>) -> Table {
    let mut table = Table::new();
    table.load_style(presets::UTF8_BORDERS_ONLY);
    table.set_header(header);
    table
}

fn right_align(table: &mut Table, columns: &[usize]) {
    for &c in columns {
        if let Some(column) = table.column_mut(c) {
            column.set_cell_alignment(CellAlignment::Right);
        }
    }
}

fn parameter_table(report: &FitReport<'_>) -> String {
    let r = report.result;
    let z = report.simple_picture.map(|p| p.nuclear_charge);
    let mut header: Vec<String> = [
        "parameter",
        "kind",
        "initial",
        "fitted",
        "standard\nerror",
        "fitted/\ninitial",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    if let Some(z) = z {
        header.push(format!("hydrogenic\nZ = {z}"));
    }
    let mut table = new_table(header);
    for p in &r.parameters {
        let mut row = vec![
            p.name.clone(),
            kind_text(&p.kind),
            value(p.initial_cm1),
            value(p.fitted_cm1),
            p.standard_error_cm1
                .map_or_else(|| "—".into(), |e| significant(e, 2)),
            p.ratio_to_initial()
                .map_or_else(|| "—".into(), |x| format!("{x:.4}")),
        ];
        if z.is_some() {
            row.push(report.hydrogenic(&p.id).map_or_else(String::new, value));
        }
        table.add_row(row);
    }
    right_align(&mut table, &[2, 3, 4, 5, 6]);
    format!("Parameters (cm⁻¹)\n{table}\n")
}

fn correlation_text(report: &FitReport<'_>) -> String {
    let r = report.result;
    let strong = r.strong_correlations();
    if r.free_parameters < 2 {
        return String::new();
    }
    if strong.is_empty() {
        return format!(
            "No two free parameters are correlated above |ρ| = {} (full matrix in --format json).\n",
            r.correlation_warning
        );
    }
    let mut text = format!(
        "WARNING: {} pair{} of free parameters correlated above |ρ| = {} (the level set hardly \
         tells them apart; fix or tie one, or add levels):\n",
        strong.len(),
        if strong.len() == 1 { "" } else { "s" },
        r.correlation_warning
    );
    for (a, b, rho) in strong {
        let _ = writeln!(text, "  ρ({a}, {b}) = {rho:+.4}");
    }
    text
}

fn simple_picture_table(report: &FitReport<'_>) -> String {
    let Some(picture) = report.simple_picture else {
        return String::new();
    };
    if picture.one_s_nl.is_empty() {
        return String::new();
    }
    let mut table = new_table(
        [
            "configuration",
            "J = F⁰(1s,nl)",
            "K = G^l/(2l+1)",
            "K fitted",
            "fitted/hydrogenic",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect(),
    );
    for row in &picture.one_s_nl {
        let fitted_k = row
            .exchange_parameter
            .and_then(|id| report.fitted(&id))
            .map(|g| g / (2 * row.orbital.l + 1) as f64);
        table.add_row(vec![
            report.model.configurations[row.configuration].to_string(),
            value(row.direct_cm1),
            value(row.exchange_cm1),
            fitted_k.map_or_else(|| "—".into(), value),
            fitted_k.map_or_else(|| "—".into(), |k| format!("{:.4}", k / row.exchange_cm1)),
        ]);
    }
    right_align(&mut table, &[1, 2, 3, 4]);
    format!(
        "First-order picture (cm⁻¹): both electrons in hydrogenic orbitals of the bare \
         nucleus, Z = {},\nwhere E(¹L) − E(³L) = 2K; the fitted K show how far screening and \
         correlation move it.\n{table}\n",
        picture.nuclear_charge
    )
}

fn level_table(report: &FitReport<'_>, components: usize) -> String {
    let r = report.result;
    let mut table = new_table(
        ["level", "E_exp", "E_calc", "exp − calc", "composition (%)"]
            .iter()
            .map(|s| s.to_string())
            .collect(),
    );
    let mut by_energy_order = false;
    for level in &r.levels {
        let mut label = level.experimental.label.to_string();
        if level.matched_by == MatchedBy::EnergyOrder {
            label.push_str(" †");
            by_energy_order = true;
        }
        let composition = level
            .composition
            .iter()
            .take(components.max(1))
            .map(|c| format!("{:.1} {}", c.percent, c.label))
            .collect::<Vec<_>>()
            .join(" + ");
        table.add_row(vec![
            label,
            format!("{:.4}", level.experimental.energy_cm1),
            format!("{:.4}", level.calculated_cm1),
            format!("{:.4}", level.difference_cm1),
            composition,
        ]);
    }
    right_align(&mut table, &[1, 2, 3]);
    let mut text = format!("Levels (cm⁻¹)\n{table}\n");
    if by_energy_order {
        text.push_str(
            "† a pair- or jj-coupling label, which LS composition cannot check: matched by \
             energy order within its parity, J and configuration.\n",
        );
    }
    text
}

fn unmatched_text(report: &FitReport<'_>) -> String {
    let r = report.result;
    if r.unmatched.is_empty() {
        return String::new();
    }
    let mut text = format!(
        "{} level{} of {} matched no level of the model (not used):\n",
        r.unmatched.len(),
        if r.unmatched.len() == 1 { "" } else { "s" },
        r.species
    );
    // Levels of configurations outside the model: one line per configuration.
    let mut outside: BTreeMap<String, usize> = BTreeMap::new();
    for u in &r.unmatched {
        if u.reason == UnmatchedReason::ConfigurationNotInModel {
            *outside
                .entry(
                    u.experimental
                        .label
                        .configuration
                        .without_intermediates()
                        .to_string(),
                )
                .or_default() += 1;
        }
    }
    if !outside.is_empty() {
        let list: Vec<String> = outside.iter().map(|(c, n)| format!("{c} ({n})")).collect();
        text.push_str(&wrap(
            &format!("configurations not in the model: {}", list.join(", ")),
            "  ",
        ));
    }
    for u in &r.unmatched {
        if u.reason != UnmatchedReason::ConfigurationNotInModel {
            let _ = writeln!(
                text,
                "  {} at {} cm⁻¹: {}",
                u.experimental.label,
                u.experimental.energy_cm1,
                u.reason.describe()
            );
        }
    }
    text
}

/// The terminal report; `components` LS components are shown per level.
pub fn fit_table(report: &FitReport<'_>, components: usize) -> String {
    [
        summary(report),
        parameter_table(report),
        correlation_text(report),
        simple_picture_table(report),
        level_table(report, components),
        unmatched_text(report),
    ]
    .into_iter()
    .filter(|s| !s.is_empty())
    .collect::<Vec<_>>()
    .join("\n")
}

#[derive(Serialize)]
struct Document<'a> {
    species: String,
    model: &'a str,
    levels_source: &'a str,
    weighting: Weighting,
    convergence: Convergence,
    passes: usize,
    assignment_settled: bool,
    iterations: usize,
    evaluations: usize,
    free_parameters: usize,
    matched_levels: usize,
    degrees_of_freedom: usize,
    sigma_cm1: Option<f64>,
    rms_cm1: f64,
    reduced_chi_square: Option<f64>,
    parameters: Vec<ParameterJson<'a>>,
    correlation: &'a crate::fit::Correlation,
    correlation_warning: f64,
    strong_correlations: Vec<PairJson>,
    simple_picture: Option<PictureJson>,
    levels: Vec<LevelJson<'a>>,
    unmatched_levels: Vec<UnmatchedJson>,
    other_species_levels: usize,
}

#[derive(Serialize)]
struct ParameterJson<'a> {
    #[serde(flatten)]
    parameter: &'a crate::fit::FittedParameter,
    ratio_to_initial: Option<f64>,
    hydrogenic_cm1: Option<f64>,
}

#[derive(Serialize)]
struct PairJson {
    first: String,
    second: String,
    rho: f64,
}

#[derive(Serialize)]
struct PictureJson {
    nuclear_charge: u32,
    one_s_nl: Vec<OneSNlJson>,
}

#[derive(Serialize)]
struct OneSNlJson {
    configuration: String,
    direct_j_cm1: f64,
    exchange_k_cm1: f64,
    exchange_parameter: Option<String>,
    fitted_exchange_k_cm1: Option<f64>,
}

#[derive(Serialize)]
struct LevelJson<'a> {
    label: String,
    configuration: String,
    term: String,
    #[serde(rename = "J")]
    j: String,
    energy_cm1: f64,
    uncertainty_cm1: f64,
    calculated_cm1: f64,
    difference_cm1: f64,
    weight: f64,
    matched_by: MatchedBy,
    composition: &'a [crate::fit::Share],
    lande_g: f64,
}

#[derive(Serialize)]
struct UnmatchedJson {
    label: String,
    energy_cm1: f64,
    reason: UnmatchedReason,
}

/// The JSON document: everything in the table, plus the whole correlation matrix.
pub fn fit_json(report: &FitReport<'_>) -> String {
    let r = report.result;
    let document = Document {
        species: r.species.to_string(),
        model: report.model_source,
        levels_source: report.levels_source,
        weighting: r.weighting,
        convergence: r.convergence,
        passes: r.passes,
        assignment_settled: r.assignment_settled,
        iterations: r.iterations,
        evaluations: r.evaluations,
        free_parameters: r.free_parameters,
        matched_levels: r.levels.len(),
        degrees_of_freedom: r.degrees_of_freedom,
        sigma_cm1: r.sigma_cm1,
        rms_cm1: r.rms_cm1,
        reduced_chi_square: r.reduced_chi_square,
        parameters: r
            .parameters
            .iter()
            .map(|p| ParameterJson {
                parameter: p,
                ratio_to_initial: p.ratio_to_initial(),
                hydrogenic_cm1: report.hydrogenic(&p.id),
            })
            .collect(),
        correlation: &r.correlation,
        correlation_warning: r.correlation_warning,
        strong_correlations: r
            .strong_correlations()
            .into_iter()
            .map(|(first, second, rho)| PairJson { first, second, rho })
            .collect(),
        simple_picture: report.simple_picture.map(|p| PictureJson {
            nuclear_charge: p.nuclear_charge,
            one_s_nl: p
                .one_s_nl
                .iter()
                .map(|row| {
                    let fitted = row.exchange_parameter.and_then(|id| report.fitted(&id));
                    OneSNlJson {
                        configuration: report.model.configurations[row.configuration].to_string(),
                        direct_j_cm1: row.direct_cm1,
                        exchange_k_cm1: row.exchange_cm1,
                        exchange_parameter: row
                            .exchange_parameter
                            .map(|id| report.model.full_name(&id)),
                        fitted_exchange_k_cm1: fitted.map(|g| g / (2 * row.orbital.l + 1) as f64),
                    }
                })
                .collect(),
        }),
        levels: r
            .levels
            .iter()
            .map(|l| LevelJson {
                label: l.experimental.label.to_string(),
                configuration: l.experimental.label.configuration.to_string(),
                term: l.experimental.label.term.to_string(),
                j: l.experimental.label.j.to_string(),
                energy_cm1: l.experimental.energy_cm1,
                uncertainty_cm1: l.experimental.uncertainty_cm1,
                calculated_cm1: l.calculated_cm1,
                difference_cm1: l.difference_cm1,
                weight: l.weight,
                matched_by: l.matched_by,
                composition: &l.composition,
                lande_g: l.lande_g,
            })
            .collect(),
        unmatched_levels: r
            .unmatched
            .iter()
            .map(|u| UnmatchedJson {
                label: u.experimental.label.to_string(),
                energy_cm1: u.experimental.energy_cm1,
                reason: u.reason,
            })
            .collect(),
        other_species_levels: r.other_species_levels,
    };
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_else(|_| "{}".into());
    text.push('\n');
    text
}
