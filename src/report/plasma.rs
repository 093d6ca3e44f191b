//! Outputs of `termsight plasma`: a terminal summary, a CSV of results (one row per
//! fit or width), a CSV of plot points, and JSON with everything.

use std::fmt::Write as _;

use crate::plasma::diagnose::{Diagnosis, Outcome};
use crate::plasma::saha::PlotPoint;
use crate::units::constants::EV_CM1;

use super::assign_csv::push_field;

/// The columns of the results CSV.
pub const PLASMA_COLUMNS: [&str; 12] = [
    "element",
    "fit",
    "stages",
    "lines",
    "temperature_k",
    "temperature_sigma_k",
    "electron_density_cm3",
    "electron_density_sigma_cm3",
    "reduced_chi_square",
    "lte_minimum_cm3",
    "lte_verdict",
    "refused",
];

fn rows(d: &Diagnosis) -> Vec<[String; 12]> {
    let mut out = Vec::new();
    let f = |v: f64| format!("{v:.4e}");
    for e in &d.elements {
        let (lte_min, lte_verdict) = e.lte.map_or((String::new(), String::new()), |c| {
            (f(c.minimum_cm3), c.verdict.name().to_string())
        });
        for s in &e.stages {
            let mut row: [String; 12] = Default::default();
            row[0] = e.element.to_string();
            row[1] = "boltzmann".into();
            row[2] = s.species.to_string();
            row[3] = s.lines.to_string();
            match &s.boltzmann {
                Outcome::Done { result } => {
                    row[4] = format!("{:.0}", result.temperature_k.value);
                    row[5] = format!("{:.0}", result.temperature_k.sigma);
                    row[8] = format!("{:.3}", result.reduced_chi_square);
                }
                Outcome::Refused { reason } => row[11] = reason.clone(),
            }
            out.push(row);
        }
        for p in &e.pairs {
            let mut row: [String; 12] = Default::default();
            row[0] = e.element.to_string();
            row[1] = "saha-boltzmann".into();
            row[2] = format!("{}+{}", p.neutral, p.ion);
            match &p.saha_boltzmann {
                Outcome::Done { result } => {
                    row[3] = (result.lines[0] + result.lines[1]).to_string();
                    row[4] = format!("{:.0}", result.temperature_k.value);
                    row[5] = format!("{:.0}", result.temperature_k.sigma);
                    row[6] = f(result.density_cm3.value);
                    row[7] = f(result.density_cm3.sigma);
                    row[8] = format!("{:.3}", result.reduced_chi_square);
                    row[9] = lte_min.clone();
                    row[10] = lte_verdict.clone();
                }
                Outcome::Refused { reason } => row[11] = reason.clone(),
            }
            out.push(row);
        }
    }
    for w in &d.widths {
        let mut row: [String; 12] = Default::default();
        row[0] = "H".into();
        row[1] = format!("stark-{}", w.measurement.balmer.name());
        row[2] = "H I".into();
        row[3] = "1".into();
        match &w.density {
            Outcome::Done { result } => {
                row[4] = format!("{:.0}", result.temperature_k);
                row[6] = f(result.density_cm3);
                row[7] = f(result.density_sigma_cm3);
            }
            Outcome::Refused { reason } => row[11] = reason.clone(),
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

/// The results CSV: [`PLASMA_COLUMNS`], one row per Boltzmann fit, Saha–Boltzmann
/// fit and Balmer width; a refused fit has its reason in `refused`.
pub fn plasma_csv(d: &Diagnosis) -> Vec<u8> {
    let mut out = Vec::new();
    csv_line(&mut out, PLASMA_COLUMNS);
    for row in rows(d) {
        csv_line(&mut out, row);
    }
    out
}

/// The columns of the points CSV.
pub const PLASMA_POINT_COLUMNS: [&str; 8] = [
    "element", "plot", "line", "species", "x_cm1", "x_ev", "y", "residual",
];

/// The points of every plot: `plot` is `boltzmann` (x = E_k) or `saha-boltzmann`
/// (the ion's points at x = E_k + χ − Δχ with the Saha-corrected y).
pub fn plasma_points_csv(d: &Diagnosis) -> Vec<u8> {
    let mut out = Vec::new();
    csv_line(&mut out, PLASMA_POINT_COLUMNS);
    let mut push = |element: &str, plot: &str, p: &PlotPoint| {
        csv_line(
            &mut out,
            [
                element.to_string(),
                plot.to_string(),
                p.line.to_string(),
                p.species.to_string(),
                format!("{:.3}", p.x_cm1),
                format!("{:.5}", p.x_cm1 / EV_CM1),
                format!("{:.5}", p.y),
                format!("{:.5}", p.residual),
            ],
        );
    };
    for e in &d.elements {
        for s in &e.stages {
            if let Some(fit) = s.boltzmann.result() {
                fit.points
                    .iter()
                    .for_each(|p| push(e.element, "boltzmann", p));
            }
        }
        for pair in &e.pairs {
            if let Some(fit) = pair.saha_boltzmann.result() {
                fit.points
                    .iter()
                    .for_each(|p| push(e.element, "saha-boltzmann", p));
            }
        }
    }
    out
}

/// JSON: the whole diagnosis (fits with their points, refusals with reasons).
pub fn plasma_json(d: &Diagnosis, source: &str) -> String {
    let document = serde_json::json!({ "source": source, "diagnosis": d });
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_else(|_| "{}".into());
    text.push('\n');
    text
}

/// The terminal summary.
pub fn plasma_table(d: &Diagnosis, source: &str, used: usize, skipped: usize) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{source}: {used} rank-1 lines with intensity and gA used, {skipped} rank-1 lines without them left out."
    );
    let _ = writeln!(
        out,
        "Assumes LTE and optically thin lines; intensities in energy units on one relative scale."
    );
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
        let t = if r[4].is_empty() {
            String::new()
        } else if r[5].is_empty() {
            r[4].clone()
        } else {
            format!("{} ± {}", r[4], r[5])
        };
        let n = if r[6].is_empty() {
            String::new()
        } else {
            format!("{} ± {}", r[6], r[7])
        };
        let lte = if r[10].is_empty() {
            String::new()
        } else {
            format!("{} (min {})", r[10], r[9])
        };
        table.add_row([
            r[0].clone(),
            r[1].clone(),
            r[2].clone(),
            r[3].clone(),
            t,
            n,
            r[8].clone(),
            lte,
            r[11].clone(),
        ]);
    }
    let _ = writeln!(out, "{table}");
    for e in &d.elements {
        if let Some(c) = e.lte {
            let _ = writeln!(
                out,
                "{}: McWhirter minimum n_e = {:.2e} cm-3 at {:.0} K for the largest gap of {} ({:.1} → {:.1} cm-1, {:.2} eV): {}.",
                e.element,
                c.minimum_cm3,
                c.temperature_k,
                c.gap_species,
                c.gap_cm1.0,
                c.gap_cm1.1,
                (c.gap_cm1.1 - c.gap_cm1.0) / EV_CM1,
                match c.verdict {
                    crate::plasma::lte::LteVerdict::Met => "the necessary condition for LTE holds",
                    crate::plasma::lte::LteVerdict::NotMet =>
                        "LTE does NOT hold: the Boltzmann and Saha–Boltzmann temperatures are not those of an equilibrium plasma",
                    crate::plasma::lte::LteVerdict::Marginal => "marginal (within 2σ of n_e)",
                    crate::plasma::lte::LteVerdict::Unknown => "no electron density to compare",
                }
            );
        }
    }
    out
}
