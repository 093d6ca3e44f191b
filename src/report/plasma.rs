//! Outputs of `termsight plasma`: a terminal summary, a CSV of results (one row per
//! fit or width), a CSV of plot points (for figures), and JSON with everything.
//!
//! Every output says which lines were used: the rank-1 candidates of the assign CSV
//! with an observed intensity and a published g_k A_ki, blends left out.

use std::fmt::Write as _;

use serde::Serialize;

use crate::plasma::IntensityUnits;
use crate::plasma::diagnose::{Diagnosis, ElementResult, Outcome};
use crate::plasma::lte::{LteCheck, LteVerdict};
use crate::plasma::saha::{PlotPoint, SahaMode};
use crate::units::constants::EV_CM1;

use super::assign_csv::push_field;

/// How the lines of the input were chosen, for every output.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlasmaInput {
    /// The assign CSV (path or `<stdin>`).
    pub source: String,
    /// What the intensities measure.
    #[serde(serialize_with = "units_name")]
    pub intensity_units: IntensityUnits,
    /// Rank-1 rows of the file (one per assigned observed line).
    pub rank_one_rows: usize,
    /// Of them, used in the plots.
    pub lines_used: usize,
    /// Left out: no observed intensity (or one that is not positive).
    pub without_intensity: usize,
    /// Left out: no published g_k A_ki.
    pub without_ga: usize,
    /// Left out: flagged `blend`.
    pub blends: usize,
    /// Whether every used line had an intensity uncertainty
    /// (`uncertainty_intensity`), so that the fits are weighted by it.
    pub intensity_uncertainties: bool,
    /// Remarks on the input (widths not used, and why).
    pub notes: Vec<String>,
}

fn units_name<S: serde::Serializer>(units: &IntensityUnits, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(units.name())
}

impl PlasmaInput {
    /// The description every output starts with, one sentence a line.
    pub fn description(&self) -> Vec<String> {
        let mut out = vec![
            format!(
                "Input: {}: {} rank-1 lines; {} used (with an observed intensity and a published gA, not blends); left out: {} without intensity, {} without gA, {} blends.",
                self.source,
                self.rank_one_rows,
                self.lines_used,
                self.without_intensity,
                self.without_ga,
                self.blends
            ),
            format!(
                "Intensities read as {} ({}); {}.",
                self.intensity_units.name(),
                match self.intensity_units {
                    IntensityUnits::Photon => "photon counts: I ∝ gA e^(−E/kT)",
                    IntensityUnits::Energy => "energy: I ∝ gA e^(−E/kT)/λ",
                },
                if self.intensity_uncertainties {
                    "fits weighted by the column uncertainty_intensity"
                } else {
                    "no intensity uncertainty on every line: equal weights, the scatter sets the uncertainties"
                }
            ),
            "Assumes local thermodynamic equilibrium and optically thin lines; partition functions summed over the compiled levels below the lowered ionisation limit.".to_string(),
        ];
        out.extend(self.notes.iter().cloned());
        out
    }
}

/// The columns of the results CSV.
pub const PLASMA_COLUMNS: [&str; 16] = [
    "element",
    "fit",
    "stages",
    "lines",
    "given",
    "temperature_k",
    "temperature_sigma_k",
    "electron_density_cm3",
    "electron_density_sigma_cm3",
    "reduced_chi_square",
    "lte_minimum_cm3",
    "lte_gap",
    "lte_density_from",
    "lte_verdict",
    "note",
    "refused",
];

/// Column indices of [`PLASMA_COLUMNS`].
mod col {
    pub const ELEMENT: usize = 0;
    pub const FIT: usize = 1;
    pub const STAGES: usize = 2;
    pub const LINES: usize = 3;
    pub const GIVEN: usize = 4;
    pub const T: usize = 5;
    pub const T_SIGMA: usize = 6;
    pub const NE: usize = 7;
    pub const NE_SIGMA: usize = 8;
    pub const CHI2: usize = 9;
    pub const LTE_MIN: usize = 10;
    pub const LTE_GAP: usize = 11;
    pub const LTE_FROM: usize = 12;
    pub const LTE_VERDICT: usize = 13;
    pub const NOTE: usize = 14;
    pub const REFUSED: usize = 15;
}

type Row = [String; 16];

fn sci(v: f64) -> String {
    format!("{v:.3e}")
}

fn lte_fields(row: &mut Row, check: &LteCheck) {
    row[col::LTE_MIN] = sci(check.minimum_cm3);
    row[col::LTE_GAP] = gap_text(check);
    row[col::LTE_FROM] = check
        .density_source
        .map_or(String::new(), |s| s.name().to_string());
    row[col::LTE_VERDICT] = check.verdict.name().to_string();
}

/// `Ar I 0.0–93143.8 cm-1 (11.55 eV)`.
fn gap_text(check: &LteCheck) -> String {
    format!(
        "{} {:.1}–{:.1} cm-1 ({:.2} eV)",
        check.gap_species,
        check.gap_cm1.0,
        check.gap_cm1.1,
        (check.gap_cm1.1 - check.gap_cm1.0) / EV_CM1
    )
}

/// Which row of an element carries its LTE check: its first Saha–Boltzmann result,
/// else its first Boltzmann result (as [`crate::plasma::diagnose`] chooses).
fn lte_row(e: &ElementResult) -> Option<(bool, usize)> {
    if let Some(i) = e
        .pairs
        .iter()
        .position(|p| p.saha_boltzmann.result().is_some())
    {
        return Some((true, i));
    }
    e.stages
        .iter()
        .position(|s| s.boltzmann.result().is_some())
        .map(|i| (false, i))
}

fn rows(d: &Diagnosis) -> Vec<Row> {
    let mut out = Vec::new();
    for e in &d.elements {
        let lte_at = lte_row(e);
        for (i, s) in e.stages.iter().enumerate() {
            let mut row: Row = Default::default();
            row[col::ELEMENT] = e.element.to_string();
            row[col::FIT] = "boltzmann".into();
            row[col::STAGES] = s.species.to_string();
            row[col::LINES] = s.lines.to_string();
            match &s.boltzmann {
                Outcome::Done { result } => {
                    row[col::T] = format!("{:.0}", result.temperature_k.value);
                    row[col::T_SIGMA] = format!("{:.0}", result.temperature_k.sigma);
                    row[col::CHI2] = format!("{:.3}", result.reduced_chi_square);
                    if lte_at == Some((false, i))
                        && let Some(check) = &e.lte
                    {
                        lte_fields(&mut row, check);
                    }
                }
                Outcome::Refused { reason } => row[col::REFUSED] = reason.clone(),
            }
            out.push(row);
        }
        for (i, p) in e.pairs.iter().enumerate() {
            let mut row: Row = Default::default();
            row[col::ELEMENT] = e.element.to_string();
            row[col::FIT] = "saha-boltzmann".into();
            row[col::STAGES] = format!("{}+{}", p.neutral, p.ion);
            match &p.saha_boltzmann {
                Outcome::Done { result } => {
                    row[col::LINES] = (result.lines[0] + result.lines[1]).to_string();
                    row[col::GIVEN] = match result.mode {
                        SahaMode::Joint => String::new(),
                        SahaMode::GivenDensity { .. } => "electron_density".into(),
                        SahaMode::GivenTemperature { .. } => "temperature".into(),
                    };
                    row[col::T] = format!("{:.0}", result.temperature_k.value);
                    row[col::T_SIGMA] = format!("{:.0}", result.temperature_k.sigma);
                    row[col::NE] = sci(result.density_cm3.value);
                    row[col::NE_SIGMA] = sci(result.density_cm3.sigma);
                    row[col::CHI2] = format!("{:.3}", result.reduced_chi_square);
                    let [u0, u1] = &result.partition;
                    row[col::NOTE] = format!(
                        "chi {:.4} eV lowered by {:.1} cm-1; U({}) = {:.3} ({} levels), U({}) = {:.3} ({} levels); N+/N0 = {:.3e}",
                        result.ionization_cm1 / EV_CM1,
                        result.lowering_cm1,
                        result.neutral,
                        u0.value,
                        u0.levels_summed,
                        result.ion,
                        u1.value,
                        u1.levels_summed,
                        result.ionization_ratio
                    );
                    if lte_at == Some((true, i))
                        && let Some(check) = &e.lte
                    {
                        lte_fields(&mut row, check);
                    }
                }
                Outcome::Refused { reason } => row[col::REFUSED] = reason.clone(),
            }
            out.push(row);
        }
    }
    for w in &d.widths {
        let mut row: Row = Default::default();
        row[col::ELEMENT] = "H".into();
        row[col::FIT] = format!("stark-{}", w.measurement.balmer.name());
        row[col::STAGES] = "H I".into();
        row[col::LINES] = "1".into();
        match &w.density {
            Outcome::Done { result } => {
                row[col::NE] = sci(result.density_cm3);
                row[col::NE_SIGMA] = sci(result.density_sigma_cm3);
                row[col::NOTE] = format!(
                    "line {}: measured FWHM {} nm; Stark FWHM {:.4} nm after instrument {} nm and Doppler {:.4} nm at {:.0} K",
                    w.measurement.line,
                    w.measurement.fwhm_nm,
                    result.stark_nm,
                    result.instrument_nm,
                    result.doppler_nm,
                    result.temperature_k
                );
            }
            Outcome::Refused { reason } => {
                row[col::REFUSED] = format!("line {}: {reason}", w.measurement.line);
            }
        }
        out.push(row);
    }
    out
}

fn csv_line(out: &mut Vec<u8>, fields: impl IntoIterator<Item = impl AsRef<str>>) {
    for (i, field) in fields.into_iter().enumerate() {
        if i > 0 {
            out.push(b',');
        }
        push_field(out, field.as_ref());
    }
    out.push(b'\n');
}

fn comments(out: &mut Vec<u8>, input: &PlasmaInput) {
    for line in input.description() {
        out.extend_from_slice(b"# ");
        out.extend_from_slice(line.replace('\n', " ").as_bytes());
        out.push(b'\n');
    }
}

/// The results CSV: the description as `#` lines, then [`PLASMA_COLUMNS`], one row
/// per Boltzmann fit, Saha–Boltzmann fit and Balmer width; a refused fit has its
/// reason in `refused`.
pub fn plasma_csv(d: &Diagnosis, input: &PlasmaInput) -> Vec<u8> {
    let mut out = Vec::new();
    comments(&mut out, input);
    csv_line(&mut out, PLASMA_COLUMNS);
    for row in rows(d) {
        csv_line(&mut out, row);
    }
    out
}

/// The columns of the points CSV.
pub const PLASMA_POINT_COLUMNS: [&str; 11] = [
    "element", "plot", "stages", "line", "species", "x_cm1", "x_ev", "y", "y_sigma", "fitted_y",
    "residual",
];

/// The points of every plot, with the description as `#` lines: `plot` is
/// `boltzmann` (x = E_k) or `saha-boltzmann` (the ion's points at x = E_k + χ − Δχ
/// with the Saha-corrected y); `fitted_y` is the fitted line at x (y − residual),
/// so that a figure can draw the line through the points.
pub fn plasma_points_csv(d: &Diagnosis, input: &PlasmaInput) -> Vec<u8> {
    let mut out = Vec::new();
    comments(&mut out, input);
    csv_line(&mut out, PLASMA_POINT_COLUMNS);
    let mut push = |element: &str, plot: &str, stages: &str, p: &PlotPoint| {
        csv_line(
            &mut out,
            [
                element.to_string(),
                plot.to_string(),
                stages.to_string(),
                p.line.to_string(),
                p.species.to_string(),
                format!("{:.3}", p.x_cm1),
                format!("{:.5}", p.x_cm1 / EV_CM1),
                format!("{:.5}", p.y),
                p.y_sigma.map_or(String::new(), |s| format!("{s:.5}")),
                format!("{:.5}", p.y - p.residual),
                format!("{:.5}", p.residual),
            ],
        );
    };
    for e in &d.elements {
        for s in &e.stages {
            if let Some(fit) = s.boltzmann.result() {
                let stages = s.species.to_string();
                for p in &fit.points {
                    push(e.element, "boltzmann", &stages, p);
                }
            }
        }
        for pair in &e.pairs {
            if let Some(fit) = pair.saha_boltzmann.result() {
                let stages = format!("{}+{}", pair.neutral, pair.ion);
                for p in &fit.points {
                    push(e.element, "saha-boltzmann", &stages, p);
                }
            }
        }
    }
    out
}

/// JSON: how the input was read, and the whole diagnosis (fits with their points,
/// refusals with reasons).
pub fn plasma_json(d: &Diagnosis, input: &PlasmaInput) -> String {
    let document = serde_json::json!({
        "input": input,
        "description": input.description(),
        "diagnosis": d,
    });
    // Serialising plain data with string keys cannot fail; an empty object if it
    // ever did.
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_else(|_| "{}".into());
    text.push('\n');
    text
}

/// The terminal summary: the description, a table of the fits, and one sentence per
/// element on local thermodynamic equilibrium.
pub fn plasma_table(d: &Diagnosis, input: &PlasmaInput) -> String {
    let mut out = String::new();
    for line in input.description() {
        let _ = writeln!(out, "{line}");
    }
    let mut table = comfy_table::Table::new();
    table.set_header([
        "element",
        "fit",
        "stages",
        "lines",
        "T (K)",
        "n_e (cm-3)",
        "χ²/ν",
        "LTE",
        "note",
    ]);
    for r in rows(d) {
        let with_sigma = |value: &str, sigma: &str| match (value.is_empty(), sigma.is_empty()) {
            (true, _) => String::new(),
            (false, true) => value.to_string(),
            (false, false) => format!("{value} ± {sigma}"),
        };
        let mut t = with_sigma(&r[col::T], &r[col::T_SIGMA]);
        let mut n = with_sigma(&r[col::NE], &r[col::NE_SIGMA]);
        match r[col::GIVEN].as_str() {
            "temperature" => t.push_str(" (given)"),
            "electron_density" => n.push_str(" (given)"),
            _ => {}
        }
        let lte = if r[col::LTE_VERDICT].is_empty() {
            String::new()
        } else {
            format!("{} (min {})", r[col::LTE_VERDICT], r[col::LTE_MIN])
        };
        let note = if r[col::REFUSED].is_empty() {
            r[col::NOTE].clone()
        } else {
            format!("refused: {}", r[col::REFUSED])
        };
        table.add_row([
            r[col::ELEMENT].clone(),
            r[col::FIT].clone(),
            r[col::STAGES].clone(),
            r[col::LINES].clone(),
            t,
            n,
            r[col::CHI2].clone(),
            lte,
            note,
        ]);
    }
    let _ = writeln!(out, "{table}");
    if let Some(m) = d.stark_density_cm3 {
        let _ = writeln!(
            out,
            "Stark density (weighted mean of the Balmer widths): n_e = {:.3e} ± {:.3e} cm-3.",
            m.value, m.sigma
        );
    }
    for e in &d.elements {
        if let Some(c) = &e.lte {
            let density = match (c.density_cm3, c.density_source) {
                (Some((n, s)), Some(from)) => {
                    format!("n_e = {n:.2e} ± {s:.2e} cm-3 ({})", from.name())
                }
                _ => "no electron density".to_string(),
            };
            let _ = writeln!(
                out,
                "{}: McWhirter minimum n_e = {:.2e} cm-3 at {:.0} K for the largest gap, {}; {}: {}.",
                e.element,
                c.minimum_cm3,
                c.temperature_k,
                gap_text(c),
                density,
                match c.verdict {
                    LteVerdict::Met => "the necessary condition for LTE holds",
                    LteVerdict::NotMet =>
                        "LTE does NOT hold: the Boltzmann and Saha–Boltzmann temperatures are not those of an equilibrium plasma",
                    LteVerdict::Marginal => "marginal (the minimum lies within 2σ of n_e)",
                    LteVerdict::Unknown => "no verdict without an electron density",
                }
            );
        }
    }
    out
}
