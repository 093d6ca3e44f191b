//! The spectrum of a level model (`termsight lines`): one stick per line, its height
//! log gf, intercombination lines marked.

use plotters::prelude::*;

use super::FigureError;
use super::binning::strongest_per_bin;
use super::style::{self, CONNECTOR, HEADER, INK, SIZE, Sample, text};
use crate::report::LinesReport;
use crate::units::Medium;

/// One line of the model.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelStick {
    /// Wavelength, nm, as printed (in air at and above 200 nm unless all in vacuum).
    pub wavelength_nm: f64,
    /// gf.
    pub gf: f64,
    /// Flagged `intercombination`.
    pub intercombination: bool,
}

/// What the model-spectrum figure shows.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelSpectrumFigure {
    /// The spectrum.
    pub species: String,
    /// The model file.
    pub source: String,
    /// How the wavelengths are written (for the axis).
    pub all_vacuum: bool,
    /// The selection applied, in words.
    pub selection: String,
    /// The lines.
    pub lines: Vec<ModelStick>,
}

/// The figure of the lines a [`LinesReport`] selected.
pub fn model_spectrum_from(report: &LinesReport) -> ModelSpectrumFigure {
    ModelSpectrumFigure {
        species: report.species.clone(),
        source: report.model.clone(),
        all_vacuum: report.rows.iter().all(|r| r.medium == Medium::Vacuum),
        selection: report.selection.clone(),
        lines: report
            .rows
            .iter()
            .map(|r| ModelStick {
                wavelength_nm: r.wavelength_nm,
                gf: r.gf,
                intercombination: r.flags.contains(&"intercombination"),
            })
            .collect(),
    }
}

/// Draw the model's spectrum as SVG.
pub fn model_spectrum_svg(data: &ModelSpectrumFigure) -> Result<String, FigureError> {
    let lines: Vec<&ModelStick> = data
        .lines
        .iter()
        .filter(|l| l.gf > 0.0 && l.gf.is_finite() && l.wavelength_nm.is_finite())
        .collect();
    if lines.is_empty() {
        return Err(FigureError::Empty(format!(
            "no line of {} with gf > 0 in the selection",
            data.species
        )));
    }
    let (x_lo, x_hi, g_lo, g_hi) = lines.iter().fold(
        (f64::MAX, f64::MIN, f64::MAX, f64::MIN),
        |(a, b, c, d), l| {
            let g = l.gf.log10();
            (
                a.min(l.wavelength_nm),
                b.max(l.wavelength_nm),
                c.min(g),
                d.max(g),
            )
        },
    );
    let x_pad = ((x_hi - x_lo) * 0.03).max(x_hi * 1e-4);
    let (x_lo, x_hi) = (x_lo - x_pad, x_hi + x_pad);
    let bottom = (g_lo.floor() - 0.0).max(g_hi.ceil() - 8.0);
    let top = g_hi.ceil() + 0.3;

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(FigureError::drawing)?;
        let (head, body) = root.split_vertically(HEADER);
        let mut chart = ChartBuilder::on(&body)
            .margin_left(10)
            .margin_right(24)
            .margin_bottom(8)
            .x_label_area_size(48)
            .y_label_area_size(78)
            .build_cartesian_2d(x_lo..x_hi, bottom..top)
            .map_err(FigureError::drawing)?;
        let columns = chart.plotting_area().dim_in_pixel().0 as usize;
        let (shown, thinning) =
            strongest_per_bin(&lines, |l| l.wavelength_nm, |l| l.gf, (x_lo, x_hi), columns);
        let axis = if data.all_vacuum {
            "wavelength in vacuum (nm)"
        } else {
            "wavelength (nm, in air at and above 200 nm, in vacuum below)"
        };
        chart
            .configure_mesh()
            .disable_x_mesh()
            .light_line_style(RGBColor(238, 238, 238))
            .bold_line_style(RGBColor(218, 218, 218))
            .axis_style(style::AXIS)
            .x_desc(axis)
            .y_desc("log₁₀ gf")
            .x_label_formatter(&|v| style::tick(*v, 2))
            .y_label_formatter(&|v| style::tick(*v, 1))
            .label_style(text(13))
            .axis_desc_style(text(15))
            .draw()
            .map_err(FigureError::drawing)?;
        let stick = |l: &ModelStick| {
            let g = l.gf.log10().max(bottom);
            let colour = if l.intercombination { CONNECTOR } else { INK };
            PathElement::new(
                vec![(l.wavelength_nm, bottom), (l.wavelength_nm, g)],
                colour.stroke_width(1),
            )
        };
        chart
            .draw_series(shown.iter().filter_map(|&i| lines.get(i)).map(|l| stick(l)))
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(
                shown
                    .iter()
                    .filter_map(|&i| lines.get(i))
                    .filter(|l| l.intercombination)
                    .map(|l| {
                        EmptyElement::at((l.wavelength_nm, l.gf.log10().max(bottom)))
                            + Circle::new((0, -4), 3, CONNECTOR.stroke_width(1))
                    }),
            )
            .map_err(FigureError::drawing)?;
        let intercombination = lines.iter().filter(|l| l.intercombination).count();
        let mut note = format!(
            "{} lines with gf > 0 ({intercombination} intercombination); {}",
            lines.len(),
            data.selection
        );
        if thinning.thinned() {
            note.push_str(&format!(
                "; binned to {} columns of {} nm, each showing its strongest line ({} drawn)",
                thinning.bins,
                style::tick(thinning.bin_width, 4),
                thinning.kept
            ));
        }
        let legend = [
            (
                Sample::Stick(INK, 1),
                "E1 line (LS-allowed or other rule broken)".to_string(),
            ),
            (
                Sample::Stick(CONNECTOR, 1),
                "intercombination (ΔS ≠ 0), open circle on top".to_string(),
            ),
        ];
        style::header(
            &head,
            &format!(
                "Lines of the level model of {}: {}",
                data.species, data.source
            ),
            &note,
            &legend,
        )?;
        root.present().map_err(FigureError::drawing)?;
    }
    Ok(svg)
}
