//! The stick spectrum: observed lines (intensity up) above, predicted lines (gf down)
//! below, each observed line joined to its assignment by a connector, unassigned
//! lines marked with a cross, the strongest assignments labelled.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::FigureError;
use super::binning::{Thinning, strongest_per_bin};
use super::style::{self, CONNECTOR, FAINT, HEADER, INK, PREDICTED, SIZE, Sample, WARN, text};
use crate::levels::LevelLabel;
use crate::notation::Species;
use crate::report::AssignReport;
use crate::units::{AirFormula, Medium, air};

/// The horizontal axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SpectrumAxis {
    /// Wavelength in nm, in air at and above 200 nm (vacuum wavelength) and in vacuum
    /// below, the usual convention; air wavelengths from `air_formula`.
    Wavelength {
        /// The refractive index of air used.
        air_formula: AirFormula,
    },
    /// Vacuum wavenumber, cm⁻¹.
    Wavenumber,
}

impl SpectrumAxis {
    /// The position of a line of vacuum wavenumber `sigma_cm1` on this axis.
    pub fn position(&self, sigma_cm1: f64) -> f64 {
        match self {
            SpectrumAxis::Wavenumber => sigma_cm1,
            SpectrumAxis::Wavelength { air_formula } => {
                let vacuum_nm = 1e7 / sigma_cm1;
                match Medium::conventional(vacuum_nm) {
                    Medium::Air => {
                        air::vacuum_to_air_nm(vacuum_nm, *air_formula).unwrap_or(vacuum_nm)
                    }
                    Medium::Vacuum => vacuum_nm,
                }
            }
        }
    }

    /// The axis title for the range `[lo, hi]` of positions.
    fn title(&self, lo: f64, hi: f64) -> String {
        match self {
            SpectrumAxis::Wavenumber => "vacuum wavenumber (cm⁻¹)".to_string(),
            SpectrumAxis::Wavelength { air_formula } => {
                let medium = if lo >= 200.0 {
                    format!("in air, {}", air_formula.name())
                } else if hi < 200.0 {
                    "in vacuum".to_string()
                } else {
                    format!(
                        "in air from 200 nm ({}), in vacuum below",
                        air_formula.name()
                    )
                };
                format!("wavelength (nm, {medium})")
            }
        }
    }

    /// The unit of the axis.
    fn unit(&self) -> &'static str {
        match self {
            SpectrumAxis::Wavenumber => "cm⁻¹",
            SpectrumAxis::Wavelength { .. } => "nm",
        }
    }
}

/// An observed line.
#[derive(Debug, Clone, PartialEq)]
pub struct ObservedStick {
    /// Vacuum wavenumber, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// Intensity as given (any scale), `None` when the list gives none.
    pub intensity: Option<f64>,
    /// Its best candidate, `None` for an unassigned line.
    pub assignment: Option<AssignedStick>,
}

/// The assignment of an observed line.
#[derive(Debug, Clone, PartialEq)]
pub struct AssignedStick {
    /// Predicted vacuum wavenumber, cm⁻¹.
    pub predicted_wavenumber_cm1: f64,
    /// Species and transition, `He I 2s 3S 1 – 3p 3P° 2`.
    pub label: String,
}

/// A predicted line.
#[derive(Debug, Clone, PartialEq)]
pub struct PredictedStick {
    /// Vacuum wavenumber, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// gf, when the predictions give it.
    pub gf: Option<f64>,
}

/// What the stick spectrum shows.
#[derive(Debug, Clone, PartialEq)]
pub struct StickSpectrum {
    /// The line list's source, for the title.
    pub source: String,
    /// The species whose predicted lines are drawn.
    pub species: Vec<String>,
    /// The observed lines.
    pub observed: Vec<ObservedStick>,
    /// The predicted lines.
    pub predicted: Vec<PredictedStick>,
}

/// The window of the figure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StickWindow {
    /// The horizontal axis.
    pub axis: SpectrumAxis,
    /// The lower end of the range, in the axis' unit; `None`: from the observed lines.
    pub from: Option<f64>,
    /// The upper end; `None`: from the observed lines.
    pub to: Option<f64>,
    /// How many of the strongest assigned lines are labelled.
    pub labels: usize,
}

impl Default for StickWindow {
    fn default() -> Self {
        StickWindow {
            axis: SpectrumAxis::Wavelength {
                air_formula: AirFormula::BirchDowns1994,
            },
            from: None,
            to: None,
            labels: 12,
        }
    }
}

/// `He I 2s 3S 1 – 3p 3P° 2`: the species and both levels by their outer subshell,
/// term and J.
pub fn transition_label(species: Species, lower: &LevelLabel, upper: &LevelLabel) -> String {
    let short = |l: &LevelLabel| {
        let outer = l
            .configuration
            .subshells()
            .last()
            .map(|s| format!("{s} "))
            .unwrap_or_default();
        format!("{outer}{} {}", l.term, l.j)
    };
    format!("{species} {} – {}", short(lower), short(upper))
}

/// The stick spectrum of an assignment: every observed line with its rank-1
/// candidate, and the predicted lines of every species with at least one candidate,
/// within the observed range widened by 2 % on either side.
pub fn stick_spectrum_from(report: &AssignReport<'_>) -> StickSpectrum {
    let predictions = report.predictions;
    let mut species: Vec<Species> = Vec::new();
    let mut observed = Vec::with_capacity(report.assignments.len());
    for assignment in report.assignments {
        let Some(line) = report.list.lines.get(assignment.observed) else {
            continue;
        };
        let best = assignment
            .candidates
            .first()
            .and_then(|c| predictions.lines().get(c.prediction));
        let assignment = best.and_then(|p| {
            let (lower, upper) = predictions.levels_of(p)?;
            if !species.contains(&p.species) {
                species.push(p.species);
            }
            Some(AssignedStick {
                predicted_wavenumber_cm1: p.wavenumber_cm1,
                label: transition_label(p.species, &lower.label, &upper.label),
            })
        });
        observed.push(ObservedStick {
            wavenumber_cm1: line.wavenumber_cm1,
            intensity: line.intensity,
            assignment,
        });
    }
    for assignment in report.assignments {
        for c in &assignment.candidates {
            if let Some(p) = predictions.lines().get(c.prediction)
                && !species.contains(&p.species)
            {
                species.push(p.species);
            }
        }
    }
    let (lo, hi) = observed.iter().fold((f64::MAX, f64::MIN), |(lo, hi), o| {
        (lo.min(o.wavenumber_cm1), hi.max(o.wavenumber_cm1))
    });
    let (lo, hi) = (lo * 0.98, hi * 1.02);
    let predicted = predictions
        .lines()
        .iter()
        .filter(|p| species.contains(&p.species) && (lo..=hi).contains(&p.wavenumber_cm1))
        .map(|p| PredictedStick {
            wavenumber_cm1: p.wavenumber_cm1,
            gf: p.relative_strength,
        })
        .collect();
    StickSpectrum {
        source: report.input.source.clone(),
        species: species.iter().map(|s| s.to_string()).collect(),
        observed,
        predicted,
    }
}

/// Height of the sticks of lines without an intensity or gf.
const UNKNOWN_HEIGHT: f64 = 0.25;
/// Decades of gf shown below the axis.
const GF_DECADES: f64 = 4.0;
/// Gap between the observed and predicted sides, in the ordinate's unit.
const GAP: f64 = 0.04;
/// The top of the ordinate (room for the labels above the strongest lines).
const TOP: f64 = 2.2;

/// Draw the stick spectrum as SVG.
pub fn stick_spectrum_svg(
    data: &StickSpectrum,
    window: &StickWindow,
) -> Result<String, FigureError> {
    if data.observed.is_empty() {
        return Err(FigureError::Empty("no observed lines".into()));
    }
    let axis = window.axis;
    let positions: Vec<f64> = data
        .observed
        .iter()
        .map(|o| axis.position(o.wavenumber_cm1))
        .collect();
    let (min, max) = positions
        .iter()
        .fold((f64::MAX, f64::MIN), |(lo, hi), &x| (lo.min(x), hi.max(x)));
    let pad = ((max - min) * 0.02).max(max.abs() * 1e-6).max(1e-9);
    let lo = window.from.unwrap_or(min - pad);
    let hi = window.to.unwrap_or(max + pad);
    if lo.is_nan() || hi.is_nan() || lo >= hi {
        return Err(FigureError::Empty(format!(
            "the range {lo} to {hi} {} is empty",
            axis.unit()
        )));
    }

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(FigureError::drawing)?;
        let (top, body) = root.split_vertically(HEADER);
        let mut chart = ChartBuilder::on(&body)
            .margin_left(10)
            .margin_right(24)
            .margin_bottom(8)
            .x_label_area_size(48)
            .y_label_area_size(78)
            .build_cartesian_2d(lo..hi, -1.15..TOP)
            .map_err(FigureError::drawing)?;
        let columns = chart.plotting_area().dim_in_pixel().0 as usize;

        // Observed: relative to the strongest in the window.
        let (shown, observed_thinning) = strongest_per_bin(
            &data.observed,
            |o| axis.position(o.wavenumber_cm1),
            |o| o.intensity.unwrap_or(0.0),
            (lo, hi),
            columns,
        );
        let strongest = shown
            .iter()
            .filter_map(|&i| data.observed.get(i)?.intensity)
            .fold(0.0_f64, f64::max);
        let height = |o: &ObservedStick| match o.intensity {
            Some(i) if strongest > 0.0 && i > 0.0 => GAP + (1.0 - GAP) * i / strongest,
            _ => UNKNOWN_HEIGHT,
        };
        let (predicted_shown, predicted_thinning) = strongest_per_bin(
            &data.predicted,
            |p| axis.position(p.wavenumber_cm1),
            |p| p.gf.unwrap_or(0.0),
            (lo, hi),
            columns,
        );
        let strongest_gf = predicted_shown
            .iter()
            .filter_map(|&i| data.predicted.get(i)?.gf)
            .fold(0.0_f64, f64::max);
        let depth = |p: &PredictedStick| match p.gf {
            Some(gf) if strongest_gf > 0.0 && gf > 0.0 => {
                GAP + (1.0 - GAP) * (1.0 + (gf / strongest_gf).log10() / GF_DECADES).max(0.03)
            }
            _ => UNKNOWN_HEIGHT,
        };

        chart
            .configure_mesh()
            .disable_mesh()
            .axis_style(style::AXIS)
            .x_desc(axis.title(lo, hi))
            .y_desc("predicted gf, log (below) · observed intensity (above)")
            .y_labels(14)
            .y_label_formatter(&|v| {
                if *v > 1.0 + 1e-9 {
                    String::new()
                } else if *v >= 0.0 {
                    style::tick(*v, 2)
                } else {
                    format!("{:.0e}", 10f64.powf(GF_DECADES * (v.abs() - 1.0)))
                }
            })
            .x_label_formatter(&|v| style::tick(*v, 3))
            .label_style(text(13))
            .axis_desc_style(text(15))
            .draw()
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(lo, 0.0), (hi, 0.0)],
                style::AXIS.stroke_width(1),
            )))
            .map_err(FigureError::drawing)?;

        // Predicted sticks (down), then observed (up), connectors and crosses.
        chart
            .draw_series(predicted_shown.iter().filter_map(|&i| {
                let p = data.predicted.get(i)?;
                let x = axis.position(p.wavenumber_cm1);
                let colour = if p.gf.is_some() { PREDICTED } else { FAINT };
                Some(PathElement::new(
                    vec![(x, -GAP), (x, -depth(p))],
                    colour.stroke_width(1),
                ))
            }))
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(shown.iter().filter_map(|&i| {
                let o = data.observed.get(i)?;
                let x = axis.position(o.wavenumber_cm1);
                Some(PathElement::new(
                    vec![(x, GAP), (x, height(o))],
                    INK.stroke_width(2),
                ))
            }))
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(shown.iter().filter_map(|&i| {
                let o = data.observed.get(i)?;
                let a = o.assignment.as_ref()?;
                Some(PathElement::new(
                    vec![
                        (axis.position(o.wavenumber_cm1), GAP),
                        (axis.position(a.predicted_wavenumber_cm1), -GAP),
                    ],
                    CONNECTOR.stroke_width(1),
                ))
            }))
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(shown.iter().filter_map(|&i| {
                let o = data.observed.get(i)?;
                if o.assignment.is_some() {
                    return None;
                }
                let at = (axis.position(o.wavenumber_cm1), height(o));
                Some(
                    EmptyElement::at(at)
                        + PathElement::new(style::cross((0, -9), 5), WARN.stroke_width(2)),
                )
            }))
            .map_err(FigureError::drawing)?;

        // Labels on the strongest assigned lines, skipping those too close to one
        // already placed.
        let mut labelled: Vec<usize> = shown
            .iter()
            .copied()
            .filter(|&i| data.observed.get(i).is_some_and(|o| o.assignment.is_some()))
            .collect();
        labelled.sort_by(|&a, &b| {
            let w = |i: usize| {
                data.observed
                    .get(i)
                    .and_then(|o| o.intensity)
                    .unwrap_or(0.0)
            };
            w(b).total_cmp(&w(a))
        });
        let mut placed: Vec<i32> = Vec::new();
        let label_style = text(11)
            .transform(FontTransform::Rotate270)
            .pos(Pos::new(HPos::Left, VPos::Center));
        for i in labelled {
            if placed.len() >= window.labels {
                break;
            }
            let Some(o) = data.observed.get(i) else {
                continue;
            };
            let Some(a) = &o.assignment else { continue };
            let x = axis.position(o.wavenumber_cm1);
            let (px, _) = chart.backend_coord(&(x, 0.0));
            if placed.iter().any(|&q| (q - px).abs() < 14) {
                continue;
            }
            placed.push(px);
            chart
                .draw_series(std::iter::once(Text::new(
                    a.label.clone(),
                    (x, height(o) + 0.04),
                    label_style.clone(),
                )))
                .map_err(FigureError::drawing)?;
        }

        let assigned = data
            .observed
            .iter()
            .filter(|o| o.assignment.is_some())
            .count();
        let title = format!("Observed against predicted lines: {}", data.source);
        let note = note(
            data,
            &observed_thinning,
            &predicted_thinning,
            assigned,
            axis.unit(),
        );
        let legend = [
            (Sample::Stick(INK, 2), "observed line".to_string()),
            (
                Sample::Line(CONNECTOR, 1),
                "assignment (best candidate)".to_string(),
            ),
            (Sample::Cross(WARN), "unassigned".to_string()),
            (Sample::Stick(PREDICTED, 1), "predicted, gf".to_string()),
            (
                Sample::Stick(FAINT, 1),
                "predicted, no gf (short)".to_string(),
            ),
        ];
        style::header(&top, &title, &note, &legend)?;
        root.present().map_err(FigureError::drawing)?;
    }
    Ok(svg)
}

/// The note under the title: what is drawn, and what thinning left out.
fn note(
    data: &StickSpectrum,
    observed: &Thinning,
    predicted: &Thinning,
    assigned: usize,
    unit: &str,
) -> String {
    let species = if data.species.is_empty() {
        "no species".to_string()
    } else {
        data.species.join(", ")
    };
    let mut note = format!(
        "{} observed lines ({assigned} assigned) and {} predicted lines of {species} in the range",
        observed.total, predicted.total
    );
    if observed.thinned() || predicted.thinned() {
        note.push_str(&format!(
            "; binned to {} columns of {} {unit}, each showing its strongest line ({} observed and {} predicted drawn)",
            observed.bins,
            style::tick(observed.bin_width, 4),
            observed.kept,
            predicted.kept
        ));
    }
    note.push_str("; intensities relative to the strongest shown");
    note
}
