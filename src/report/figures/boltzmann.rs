//! The Boltzmann plot: ln(I·λ/(g_k·A_ki)) against E_k with error bars, the fitted
//! line, and the excitation temperature of its slope.

use plotters::prelude::*;

use super::FigureError;
use super::boltzmann_data::BoltzmannPlot;
use super::style::{self, HEADER, INK, PREDICTED, SIZE, Sample, text};
use crate::units::constants::EV_CM1;

/// Draw the Boltzmann plot as SVG.
pub fn boltzmann_svg(plot: &BoltzmannPlot) -> Result<String, FigureError> {
    if plot.points.is_empty() {
        return Err(FigureError::Empty(format!("no points of {}", plot.species)));
    }
    let bar = |p: &super::BoltzmannPoint| {
        p.sigma
            .or(plot.fit.map(|f| f.scatter))
            .filter(|s| s.is_finite())
            .unwrap_or(0.0)
    };
    let (x_lo, x_hi, y_lo, y_hi) = plot.points.iter().fold(
        (f64::MAX, f64::MIN, f64::MAX, f64::MIN),
        |(a, b, c, d), p| {
            (
                a.min(p.upper_energy_cm1),
                b.max(p.upper_energy_cm1),
                c.min(p.ordinate - bar(p)),
                d.max(p.ordinate + bar(p)),
            )
        },
    );
    let x_pad = ((x_hi - x_lo) * 0.06).max(50.0);
    let y_pad = ((y_hi - y_lo) * 0.08).max(0.1);
    let (x_lo, x_hi, y_lo, y_hi) = (x_lo - x_pad, x_hi + x_pad, y_lo - y_pad, y_hi + y_pad);

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
            .y_desc("ln(I·λ/(g_k·A_ki)), λ in nm, g_k·A_ki in s⁻¹")
            .x_label_formatter(&|v| style::tick(*v, 0))
            .y_label_formatter(&|v| style::tick(*v, 2))
            .label_style(text(13))
            .axis_desc_style(text(15))
            .draw()
            .map_err(FigureError::drawing)?;
        if let Some(fit) = plot.fit {
            let line = |x: f64| fit.intercept + fit.slope_per_cm1 * x;
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(x_lo, line(x_lo)), (x_hi, line(x_hi))],
                    PREDICTED.stroke_width(2),
                )))
                .map_err(FigureError::drawing)?;
        }
        chart
            .draw_series(plot.points.iter().filter(|p| bar(p) > 0.0).map(|p| {
                ErrorBar::new_vertical(
                    p.upper_energy_cm1,
                    p.ordinate - bar(p),
                    p.ordinate,
                    p.ordinate + bar(p),
                    INK.stroke_width(1),
                    8,
                )
            }))
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(
                plot.points
                    .iter()
                    .filter(|p| !p.blend)
                    .map(|p| Circle::new((p.upper_energy_cm1, p.ordinate), 4, INK.filled())),
            )
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(plot.points.iter().filter(|p| p.blend).map(|p| {
                EmptyElement::at((p.upper_energy_cm1, p.ordinate))
                    + Rectangle::new([(-4, -4), (4, 4)], INK.stroke_width(1))
            }))
            .map_err(FigureError::drawing)?;

        let title = format!("Boltzmann plot of {}: {}", plot.species, plot.source);
        let blends = plot.points.iter().filter(|p| p.blend).count();
        let mut note = format!(
            "{} rank-1 lines with an intensity and a published gA, {blends} of them blends; {} without left out",
            plot.points.len(),
            plot.left_out
        );
        let fit_text = match plot.fit {
            Some(fit) => {
                let bars = if plot.points.iter().all(|p| p.sigma.is_some()) {
                    "error bars: the points' standard uncertainties".to_string()
                } else {
                    format!(
                        "error bars: ±{}, the scatter about the line (no intensity uncertainties given)",
                        style::tick(fit.scatter, 3)
                    )
                };
                note.push_str(&format!("; {bars}"));
                match (fit.temperature_k, fit.temperature_sigma_k) {
                    (Some(t), Some(st)) => format!(
                        "fit: slope {} ± {} per cm⁻¹, T_exc = −c₂/slope = {} ± {} K (kT = {} eV)",
                        significant(fit.slope_per_cm1, 4),
                        significant(fit.slope_sigma, 2),
                        style::tick(t, 0),
                        style::tick(st, 0),
                        style::tick(t / SECOND_CM_K_PER_EV, 3)
                    ),
                    _ => format!(
                        "fit: slope {} per cm⁻¹, not negative: no temperature",
                        significant(fit.slope_per_cm1, 4)
                    ),
                }
            }
            None => "no fit: fewer than three points or a single upper energy".to_string(),
        };
        let legend = [
            (Sample::Dot(INK), "line".to_string()),
            (
                Sample::Square(INK),
                "blend (more than one candidate)".to_string(),
            ),
            (Sample::Line(PREDICTED, 2), fit_text),
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
