//! The Boltzmann plot: ln(I/(g_k·A_ki)) (photon counts) or ln(I·λ/(g_k·A_ki))
//! (energy) against E_k with error bars, the library's fitted line, and the
//! excitation temperature of its slope.

use plotters::prelude::*;

use super::FigureError;
use super::boltzmann_data::BoltzmannPlot;
use super::style::{self, HEADER, INK, PREDICTED, SIZE, Sample, WARN, text};
use crate::plasma::{BoltzmannPoint, IntensityUnits};
use crate::units::constants::EV_CM1;

/// The ordinate's title for the intensity units.
fn ordinate(units: IntensityUnits) -> &'static str {
    match units {
        IntensityUnits::Photon => "ln(I/(g_k·A_ki)), I photon counts, g_k·A_ki in s⁻¹",
        IntensityUnits::Energy => "ln(I·λ/(g_k·A_ki)), I energy, λ in cm, g_k·A_ki in s⁻¹",
    }
}

/// Draw the Boltzmann plot as SVG: the points with their standard uncertainties as
/// error bars (filled circles; blends open squares; points the fit set aside
/// crosses), the fitted line and its T_exc ± σ, or the reason there is no fit.
pub fn boltzmann_svg(plot: &BoltzmannPlot) -> Result<String, FigureError> {
    if plot.points.is_empty() {
        return Err(FigureError::Empty(format!("no points of {}", plot.species)));
    }
    let bar = |p: &BoltzmannPoint| {
        if p.y_sigma.is_finite() && p.y_sigma > 0.0 {
            p.y_sigma
        } else {
            0.0
        }
    };
    let finite: Vec<&BoltzmannPoint> = plot
        .points
        .iter()
        .filter(|p| p.y.is_finite() && p.upper_energy_cm1.is_finite())
        .collect();
    if finite.is_empty() {
        return Err(FigureError::Empty(format!(
            "no finite points of {}",
            plot.species
        )));
    }
    let (x_lo, x_hi, y_lo, y_hi) = finite.iter().fold(
        (f64::MAX, f64::MIN, f64::MAX, f64::MIN),
        |(a, b, c, d), p| {
            (
                a.min(p.upper_energy_cm1),
                b.max(p.upper_energy_cm1),
                c.min(p.y - bar(p)),
                d.max(p.y + bar(p)),
            )
        },
    );
    let x_pad = ((x_hi - x_lo) * 0.06).max(50.0);
    let y_pad = ((y_hi - y_lo) * 0.08).max(0.1);
    let (x_lo, x_hi, y_lo, y_hi) = (x_lo - x_pad, x_hi + x_pad, y_lo - y_pad, y_hi + y_pad);
    let blend = |i: usize| plot.blends.get(i).copied().unwrap_or(false);

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
            .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)
            .map_err(FigureError::drawing)?;
        chart
            .configure_mesh()
            .light_line_style(RGBColor(235, 235, 235))
            .bold_line_style(RGBColor(215, 215, 215))
            .axis_style(style::AXIS)
            .x_desc("upper level energy E_k (cm⁻¹)")
            .y_desc(ordinate(plot.units))
            .x_label_formatter(&|v| style::tick(*v, 0))
            .y_label_formatter(&|v| style::tick(*v, 2))
            .label_style(text(13))
            .axis_desc_style(text(15))
            .draw()
            .map_err(FigureError::drawing)?;
        if let Some(fit) = &plot.fit {
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(x_lo, fit.y_at(x_lo)), (x_hi, fit.y_at(x_hi))],
                    PREDICTED.stroke_width(2),
                )))
                .map_err(FigureError::drawing)?;
        }
        chart
            .draw_series(finite.iter().filter(|p| bar(p) > 0.0).map(|p| {
                ErrorBar::new_vertical(
                    p.upper_energy_cm1,
                    p.y - bar(p),
                    p.y,
                    p.y + bar(p),
                    INK.stroke_width(1),
                    8,
                )
            }))
            .map_err(FigureError::drawing)?;
        let kind = |i: usize, p: &BoltzmannPoint| (p.used, blend(i));
        let at = |p: &BoltzmannPoint| (p.upper_energy_cm1, p.y);
        let marks = || {
            plot.points
                .iter()
                .enumerate()
                .filter(|(_, p)| p.y.is_finite() && p.upper_energy_cm1.is_finite())
        };
        chart
            .draw_series(
                marks()
                    .filter(|(i, p)| kind(*i, p) == (true, false))
                    .map(|(_, p)| Circle::new(at(p), 4, INK.filled())),
            )
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(
                marks()
                    .filter(|(i, p)| kind(*i, p) == (true, true))
                    .map(|(_, p)| {
                        EmptyElement::at(at(p))
                            + Rectangle::new([(-4, -4), (4, 4)], INK.stroke_width(1))
                    }),
            )
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(marks().filter(|(_, p)| !p.used).map(|(_, p)| {
                EmptyElement::at(at(p))
                    + PathElement::new(style::cross((0, 0), 5), WARN.stroke_width(2))
            }))
            .map_err(FigureError::drawing)?;

        let title = format!("Boltzmann plot of {}: {}", plot.species, plot.source);
        let blends = plot.blends.iter().filter(|b| **b).count();
        let aside = plot.points.iter().filter(|p| !p.used).count();
        let mut note = format!(
            "{} points ({blends} blends; {} rank-1 lines without intensity or gA left out) from {}",
            plot.points.len(),
            plot.left_out,
            plot.origin
        );
        let fit_text = match (&plot.fit, &plot.no_fit) {
            (Some(fit), _) => {
                note.push_str(&format!(
                    "; error bars σ_y; Birge ratio {}",
                    style::tick(fit.birge_ratio, 2)
                ));
                format!(
                    "fit: slope {} ± {} per cm⁻¹, T_exc = −c₂/slope = {} ± {} K (kT = {} eV)",
                    significant(fit.slope_per_cm1, 4),
                    significant(fit.slope_sigma_per_cm1, 2),
                    style::tick(fit.temperature_k, 0),
                    style::tick(fit.temperature_sigma_k, 0),
                    style::tick(fit.temperature_k / SECOND_CM_K_PER_EV, 3)
                )
            }
            (None, Some(why)) => format!("no fit: {why}"),
            (None, None) => "no fit".to_string(),
        };
        let legend = [
            (Sample::Dot(INK), "line".to_string()),
            (Sample::Square(INK), "blend".to_string()),
            (
                Sample::Cross(WARN),
                format!("set aside by the fit ({aside})"),
            ),
            (
                if plot.fit.is_some() {
                    Sample::Line(PREDICTED, 2)
                } else {
                    Sample::Nothing
                },
                fit_text,
            ),
        ];
        style::header(&top, &title, &note, &legend)?;
        root.present().map_err(FigureError::drawing)?;
    }
    Ok(svg)
}

/// Kelvin per eV of kT: c₂ (cm·K) × (cm⁻¹ per eV).
const SECOND_CM_K_PER_EV: f64 = super::SECOND_RADIATION_CONSTANT_CM_K * EV_CM1;

/// `value` to `digits` significant digits.
fn significant(value: f64, digits: usize) -> String {
    crate::report::significant(value, digits)
}
