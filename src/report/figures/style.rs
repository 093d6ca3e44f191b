//! What the figures share: size, fonts, the marks' colours and the header (title,
//! note, legend) drawn above each chart.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::FigureError;

/// Width and height of a chart, px (a print page's width at 150 dpi, about).
pub const SIZE: (u32, u32) = (1200, 640);
/// Height of the header above the chart: title, note, legend, px.
pub const HEADER: u32 = 78;
/// The font family of every text.
pub const FONT: &str = "sans-serif";

/// Observed lines, level bars, data points.
pub const INK: RGBColor = RGBColor(0, 0, 0);
/// Predicted lines and fitted lines.
pub const PREDICTED: RGBColor = RGBColor(178, 34, 34);
/// Predicted lines without a strength (drawn short).
pub const FAINT: RGBColor = RGBColor(140, 140, 140);
/// Connectors between an observed line and its assignment.
pub const CONNECTOR: RGBColor = RGBColor(31, 95, 170);
/// Marks of unassigned lines and outliers.
pub const WARN: RGBColor = RGBColor(214, 110, 0);
/// Axes and the zero line.
pub const AXIS: RGBColor = RGBColor(64, 64, 64);

/// One legend entry: a sample mark and its text.
pub enum Sample {
    /// A vertical stick of this colour and width.
    Stick(RGBColor, u32),
    /// A horizontal line of this colour and width.
    Line(RGBColor, u32),
    /// A cross of this colour.
    Cross(RGBColor),
    /// A filled circle of this colour.
    Dot(RGBColor),
    /// An open square of this colour.
    Square(RGBColor),
    /// No mark: the text alone (what a figure does not draw, and why).
    Nothing,
}

/// Draw the title (bold), one note line under it and the legend row across the
/// header area `area`.
pub fn header(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    title: &str,
    note: &str,
    legend: &[(Sample, String)],
) -> Result<(), FigureError> {
    let left = |size: u32| {
        TextStyle::from((FONT, size).into_font())
            .color(&INK)
            .pos(Pos::new(HPos::Left, VPos::Top))
    };
    area.draw(&Text::new(
        title.to_string(),
        (14, 6),
        TextStyle::from((FONT, 20, FontStyle::Bold).into_font())
            .color(&INK)
            .pos(Pos::new(HPos::Left, VPos::Top)),
    ))
    .map_err(FigureError::drawing)?;
    area.draw(&Text::new(note.to_string(), (14, 32), left(13)))
        .map_err(FigureError::drawing)?;
    let mut x = 20;
    let y = 62;
    for (sample, text) in legend {
        match sample {
            Sample::Stick(colour, width) => area.draw(&PathElement::new(
                vec![(x, y - 7), (x, y + 7)],
                colour.stroke_width(*width),
            )),
            Sample::Line(colour, width) => area.draw(&PathElement::new(
                vec![(x - 8, y), (x + 8, y)],
                colour.stroke_width(*width),
            )),
            Sample::Cross(colour) => {
                area.draw(&PathElement::new(cross((x, y), 5), colour.stroke_width(2)))
            }
            Sample::Dot(colour) => area.draw(&Circle::new((x, y), 4, colour.filled())),
            Sample::Square(colour) => area.draw(&Rectangle::new(
                [(x - 4, y - 4), (x + 4, y + 4)],
                colour.stroke_width(1),
            )),
            Sample::Nothing => Ok(()),
        }
        .map_err(FigureError::drawing)?;
        area.draw(&Text::new(
            text.clone(),
            (x + 14, y),
            TextStyle::from((FONT, 13).into_font())
                .color(&INK)
                .pos(Pos::new(HPos::Left, VPos::Center)),
        ))
        .map_err(FigureError::drawing)?;
        // The naive text measure of plotters' SVG backend: about 0.55 em per character.
        x += 40 + (text.chars().count() as i32 * 13 * 55) / 100;
    }
    Ok(())
}

/// The points of a cross (×) of half-size `r` about `(x, y)`, as one polyline.
pub fn cross<T>(centre: (T, T), r: T) -> Vec<(T, T)>
where
    T: Copy + std::ops::Add<Output = T> + std::ops::Sub<Output = T>,
{
    let (x, y) = centre;
    vec![
        (x - r, y - r),
        (x + r, y + r),
        (x, y),
        (x - r, y + r),
        (x + r, y - r),
    ]
}

/// Text of `size` px in the figure's font.
pub fn text(size: u32) -> TextStyle<'static> {
    TextStyle::from((FONT, size).into_font()).color(&INK)
}

/// Round a value for an axis label: at most `digits` decimals, trailing zeros dropped.
pub fn tick(value: f64, digits: usize) -> String {
    let s = format!("{value:.digits$}");
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" { "0".to_string() } else { s }
}

/// Escape text for SVG and HTML.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}
