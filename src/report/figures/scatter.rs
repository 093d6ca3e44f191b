//! The residual charts' common form: points against a zero line, with optional
//! dashed limits at ±k, thinned to the strongest |y| per pixel column when there are
//! more points than columns.

use plotters::element::DashedPathElement;
use plotters::prelude::*;

use super::FigureError;
use super::binning::{Thinning, strongest_per_bin};
use super::style::{self, HEADER, INK, SIZE, Sample, WARN, text};

/// The shape of a point: filled circle, open square, or cross.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// A filled black circle.
    Dot,
    /// An open black square.
    Square,
    /// An orange cross (outliers).
    Cross,
}

/// One point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// Its marker.
    pub marker: Marker,
}

/// A residual chart.
pub struct Scatter<'a> {
    /// Title.
    pub title: String,
    /// The note under it (the thinning is added to it).
    pub note: String,
    /// Axis titles.
    pub x_desc: &'a str,
    /// Axis titles.
    pub y_desc: &'a str,
    /// Decimals of the x tick labels.
    pub x_digits: usize,
    /// Dashed horizontal limits at ±this, when given.
    pub limit: Option<f64>,
    /// Legend entries per marker shown.
    pub legend: Vec<(Marker, String)>,
}

/// Draw the chart of `points`.
pub fn scatter_svg(chart_spec: &Scatter<'_>, points: &[Point]) -> Result<String, FigureError> {
    let finite: Vec<Point> = points
        .iter()
        .copied()
        .filter(|p| p.x.is_finite() && p.y.is_finite())
        .collect();
    if finite.is_empty() {
        return Err(FigureError::Empty("no points".into()));
    }
    let (x_lo, x_hi, y_max) = finite
        .iter()
        .fold((f64::MAX, f64::MIN, 0.0_f64), |(a, b, c), p| {
            (a.min(p.x), b.max(p.x), c.max(p.y.abs()))
        });
    let y_max = y_max.max(chart_spec.limit.unwrap_or(0.0)).max(1e-12) * 1.15;
    let x_pad = ((x_hi - x_lo) * 0.03).max(x_hi.abs() * 1e-6).max(1e-9);
    let (x_lo, x_hi) = (x_lo - x_pad, x_hi + x_pad);

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
            .build_cartesian_2d(x_lo..x_hi, -y_max..y_max)
            .map_err(FigureError::drawing)?;
        let columns = chart.plotting_area().dim_in_pixel().0 as usize;
        let (shown, thinning) =
            strongest_per_bin(&finite, |p| p.x, |p| p.y.abs(), (x_lo, x_hi), columns);
        let x_digits = chart_spec.x_digits;
        chart
            .configure_mesh()
            .light_line_style(RGBColor(238, 238, 238))
            .bold_line_style(RGBColor(218, 218, 218))
            .axis_style(style::AXIS)
            .x_desc(chart_spec.x_desc)
            .y_desc(chart_spec.y_desc)
            .x_label_formatter(&|v| style::tick(*v, x_digits))
            .y_label_formatter(&|v| style::tick(*v, 3))
            .label_style(text(13))
            .axis_desc_style(text(15))
            .draw()
            .map_err(FigureError::drawing)?;
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(x_lo, 0.0), (x_hi, 0.0)],
                style::AXIS.stroke_width(1),
            )))
            .map_err(FigureError::drawing)?;
        if let Some(k) = chart_spec.limit {
            for y in [k, -k] {
                chart
                    .draw_series(std::iter::once(DashedPathElement::new(
                        vec![(x_lo, y), (x_hi, y)],
                        8,
                        6,
                        WARN.stroke_width(1),
                    )))
                    .map_err(FigureError::drawing)?;
            }
        }
        for marker in [Marker::Dot, Marker::Square, Marker::Cross] {
            let these = shown
                .iter()
                .filter_map(|&i| finite.get(i))
                .filter(|p| p.marker == marker);
            match marker {
                Marker::Dot => chart
                    .draw_series(these.map(|p| Circle::new((p.x, p.y), 4, INK.filled())))
                    .map(|_| ()),
                Marker::Square => chart
                    .draw_series(these.map(|p| {
                        EmptyElement::at((p.x, p.y))
                            + Rectangle::new([(-4, -4), (4, 4)], INK.stroke_width(1))
                    }))
                    .map(|_| ()),
                Marker::Cross => chart
                    .draw_series(these.map(|p| {
                        EmptyElement::at((p.x, p.y))
                            + PathElement::new(style::cross((0, 0), 5), WARN.stroke_width(2))
                    }))
                    .map(|_| ()),
            }
            .map_err(FigureError::drawing)?;
        }
        let note = with_thinning(&chart_spec.note, &thinning);
        let legend: Vec<(Sample, String)> = chart_spec
            .legend
            .iter()
            .map(|(m, t)| {
                let sample = match m {
                    Marker::Dot => Sample::Dot(INK),
                    Marker::Square => Sample::Square(INK),
                    Marker::Cross => Sample::Cross(WARN),
                };
                (sample, t.clone())
            })
            .collect();
        style::header(&top, &chart_spec.title, &note, &legend)?;
        root.present().map_err(FigureError::drawing)?;
    }
    Ok(svg)
}

/// The note, with what thinning left out.
fn with_thinning(note: &str, thinning: &Thinning) -> String {
    if thinning.thinned() {
        format!(
            "{note}; {} points binned to {} columns, each showing its largest |residual| ({} drawn)",
            thinning.total, thinning.bins, thinning.kept
        )
    } else {
        note.to_string()
    }
}
