//! The term (Grotrian) diagram of one spectrum, written as SVG by hand: no chart
//! crate draws levels as bars in columns joined by transitions. Levels are bars in
//! columns by LS term (multiplicity, then L, then parity), or by parity and J for
//! levels without an LS label; the energy axis is in cm⁻¹ on the left and eV on the
//! right. Lines join their levels, wider for stronger observed lines,
//! intercombination lines dashed; levels fixed by one line only are dashed bars;
//! candidate levels (from a level search) stand in a column of their own, dotted.

use std::fmt::Write as _;

use super::FigureError;
use super::style::{self, escape};
use crate::levels::LevelLabel;
use crate::levels::e1::classify;
use crate::levels::optimize::{ClassifiedLines, SpeciesResult};
use crate::notation::{HalfInt, Parity, Term, term_letter};
use crate::units::constants::EV_CM1;

/// A level of the diagram.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagramLevel {
    /// Its label.
    pub label: LevelLabel,
    /// Energy, cm⁻¹.
    pub energy_cm1: f64,
    /// Fixed by one line only.
    pub single_line: bool,
}

/// A line between two levels of the diagram.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagramTransition {
    /// Index of the lower level in [`TermDiagram::levels`].
    pub lower: usize,
    /// Index of the upper level.
    pub upper: usize,
    /// Observed intensity, when given.
    pub intensity: Option<f64>,
}

/// A level to mark that is not among the diagram's levels: a candidate from a level
/// search, with the J values it may have.
#[derive(Debug, Clone, PartialEq)]
pub struct ExtraLevel {
    /// Energy, cm⁻¹.
    pub energy_cm1: f64,
    /// Parity.
    pub parity: Parity,
    /// Possible J values.
    pub j: Vec<HalfInt>,
    /// A short label.
    pub label: String,
}

/// What the term diagram shows.
#[derive(Debug, Clone, PartialEq)]
pub struct TermDiagram {
    /// The spectrum.
    pub species: String,
    /// The input, for the title.
    pub source: String,
    /// The levels.
    pub levels: Vec<DiagramLevel>,
    /// The lines.
    pub transitions: Vec<DiagramTransition>,
    /// Further levels to mark (candidates).
    pub extra: Vec<ExtraLevel>,
}

/// The diagram of one spectrum's optimisation: its levels and the lines used, with
/// their intensities from `input` (by line number) where it gives them.
pub fn term_diagram_from(
    source: &str,
    result: &SpeciesResult,
    input: &ClassifiedLines,
    extra: Vec<ExtraLevel>,
) -> TermDiagram {
    let levels: Vec<DiagramLevel> = result
        .levels
        .iter()
        .map(|l| DiagramLevel {
            label: l.label.clone(),
            energy_cm1: l.energy_cm1,
            single_line: l.single_line(),
        })
        .collect();
    let index = |label: &LevelLabel| levels.iter().position(|l| &l.label == label);
    let transitions = result
        .lines
        .iter()
        .filter_map(|line| {
            let intensity = input
                .lines
                .iter()
                .find(|c| {
                    c.line == line.line
                        && c.species == result.species
                        && c.lower == line.lower
                        && c.upper == line.upper
                })
                .and_then(|c| c.intensity);
            Some(DiagramTransition {
                lower: index(&line.lower)?,
                upper: index(&line.upper)?,
                intensity,
            })
        })
        .collect();
    TermDiagram {
        species: result.species.to_string(),
        source: source.to_string(),
        levels,
        transitions,
        extra,
    }
}

/// The column a level stands in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Column {
    /// An LS term: multiplicity, L, parity (even first).
    Ls(u32, u32, bool),
    /// No LS label: parity (even first), J.
    ParityJ(bool, HalfInt),
}

impl Column {
    fn of(label: &LevelLabel) -> Column {
        match &label.term {
            Term::Ls(t) => Column::Ls(t.multiplicity, t.l, t.parity == Parity::Odd),
            _ => Column::ParityJ(label.parity() == Parity::Odd, label.j),
        }
    }

    fn heading(&self) -> String {
        let odd = |o: bool| if o { "°" } else { "" };
        match self {
            Column::Ls(m, l, o) => format!("{m}{}{}", term_letter(*l), odd(*o)),
            Column::ParityJ(o, j) => format!("{} J={j}", if *o { "odd" } else { "even" }),
        }
    }
}

/// Size of the diagram, px.
const WIDTH: f64 = 1200.0;
const HEIGHT: f64 = 760.0;
const LEFT: f64 = 96.0;
const RIGHT: f64 = 84.0;
const TOP: f64 = 118.0;
const BOTTOM: f64 = 40.0;
/// Most lines drawn; the strongest are kept.
const MAX_TRANSITIONS: usize = 3000;

/// Draw the term diagram as SVG.
pub fn term_diagram_svg(data: &TermDiagram) -> Result<String, FigureError> {
    if data.levels.is_empty() && data.extra.is_empty() {
        return Err(FigureError::Empty(format!("no levels of {}", data.species)));
    }
    let mut columns: Vec<Column> = data.levels.iter().map(|l| Column::of(&l.label)).collect();
    columns.sort();
    columns.dedup();
    let extra_column = !data.extra.is_empty();
    let n_columns = columns.len() + usize::from(extra_column);
    let column_width = ((WIDTH - LEFT - RIGHT) / n_columns.max(1) as f64).min(150.0);
    let column_x = |i: usize| LEFT + column_width * (i as f64 + 0.5);
    let x_of = |label: &LevelLabel| {
        let c = Column::of(label);
        column_x(columns.iter().position(|k| *k == c).unwrap_or(0))
    };

    let energies = data
        .levels
        .iter()
        .map(|l| l.energy_cm1)
        .chain(data.extra.iter().map(|e| e.energy_cm1));
    let (e_lo, e_hi) = energies.fold((f64::MAX, f64::MIN), |(a, b), e| (a.min(e), b.max(e)));
    let span = (e_hi - e_lo).max(1.0);
    let (e_lo, e_hi) = (e_lo - 0.03 * span, e_hi + 0.03 * span);
    let y = |e: f64| TOP + (HEIGHT - TOP - BOTTOM) * (e_hi - e) / (e_hi - e_lo);

    let mut svg = String::new();
    let w = &mut svg;
    let _ = writeln!(
        w,
        r##"<svg width="{WIDTH}" height="{HEIGHT}" viewBox="0 0 {WIDTH} {HEIGHT}" xmlns="http://www.w3.org/2000/svg" font-family="{}">"##,
        style::FONT
    );
    let _ = writeln!(
        w,
        r##"<rect x="0" y="0" width="{WIDTH}" height="{HEIGHT}" fill="#FFFFFF"/>"##
    );

    // Header: title, note, legend.
    let single = data.levels.iter().filter(|l| l.single_line).count();
    let mut kept: Vec<&DiagramTransition> = data
        .transitions
        .iter()
        .filter(|t| data.levels.get(t.lower).is_some() && data.levels.get(t.upper).is_some())
        .collect();
    let total_transitions = kept.len();
    if kept.len() > MAX_TRANSITIONS {
        kept.sort_by(|a, b| {
            b.intensity
                .unwrap_or(0.0)
                .total_cmp(&a.intensity.unwrap_or(0.0))
        });
        kept.truncate(MAX_TRANSITIONS);
    }
    let coupling = if columns.iter().all(|c| matches!(c, Column::Ls(..))) {
        "columns by LS term"
    } else if columns.iter().any(|c| matches!(c, Column::Ls(..))) {
        "columns by LS term, and by parity and J for levels without one"
    } else {
        "columns by parity and J (the labels are not LS)"
    };
    let mut note = format!(
        "{} levels ({single} fixed by one line), {} lines; {coupling}; line width by observed intensity",
        data.levels.len(),
        total_transitions
    );
    if kept.len() < total_transitions {
        let _ = write!(note, "; only the {} strongest lines drawn", kept.len());
    }
    if extra_column {
        let _ = write!(note, "; {} candidate levels", data.extra.len());
    }
    let _ = writeln!(
        w,
        r##"<text x="14" y="26" font-size="16" font-weight="bold" fill="#000000">{}</text>"##,
        escape(&format!(
            "Term diagram of {}: {}",
            data.species, data.source
        ))
    );
    let _ = writeln!(
        w,
        r##"<text x="14" y="48" font-size="10.5" fill="#000000">{}</text>"##,
        escape(&note)
    );
    let legend = [
        (
            r##"<line x1="12" y1="0" x2="36" y2="0" stroke="#000000" stroke-width="2"/>"##,
            "level",
        ),
        (
            r##"<line x1="12" y1="0" x2="36" y2="0" stroke="#D66E00" stroke-width="2" stroke-dasharray="4 2"/>"##,
            "level fixed by one line",
        ),
        (
            r##"<line x1="12" y1="0" x2="36" y2="0" stroke="#1F5FAA" stroke-width="1.5"/>"##,
            "line",
        ),
        (
            r##"<line x1="12" y1="0" x2="36" y2="0" stroke="#B22222" stroke-width="1.5" stroke-dasharray="6 3"/>"##,
            "intercombination line",
        ),
        (
            r##"<line x1="12" y1="0" x2="36" y2="0" stroke="#000000" stroke-width="2" stroke-dasharray="1 2"/>"##,
            "candidate level",
        ),
    ];
    let mut lx = 14.0;
    for (sample, text) in legend {
        let _ = writeln!(
            w,
            r##"<g transform="translate({lx},70)">{sample}<text x="42" y="0" dy="0.35em" font-size="10.5" fill="#000000">{}</text></g>"##,
            escape(text)
        );
        lx += 60.0 + text.chars().count() as f64 * 6.2;
    }

    // Energy axes: cm⁻¹ on the left, eV on the right.
    let axis_right = LEFT + column_width * n_columns as f64;
    let _ = writeln!(
        w,
        r##"<g class="axes" stroke="#404040" stroke-width="1"><line x1="{LEFT}" y1="{TOP}" x2="{LEFT}" y2="{}"/><line x1="{axis_right}" y1="{TOP}" x2="{axis_right}" y2="{}"/></g>"##,
        HEIGHT - BOTTOM,
        HEIGHT - BOTTOM
    );
    for tick in nice_ticks(e_lo, e_hi, 8) {
        let ty = y(tick);
        let _ = writeln!(
            w,
            r##"<line x1="{}" y1="{ty:.1}" x2="{LEFT}" y2="{ty:.1}" stroke="#404040"/><text x="{}" y="{ty:.1}" dy="0.35em" text-anchor="end" font-size="10.5" fill="#000000">{}</text>"##,
            LEFT - 5.0,
            LEFT - 8.0,
            style::tick(tick, 0)
        );
    }
    for tick in nice_ticks(e_lo / EV_CM1, e_hi / EV_CM1, 8) {
        let ty = y(tick * EV_CM1);
        let _ = writeln!(
            w,
            r##"<line x1="{axis_right}" y1="{ty:.1}" x2="{}" y2="{ty:.1}" stroke="#404040"/><text x="{}" y="{ty:.1}" dy="0.35em" font-size="10.5" fill="#000000">{}</text>"##,
            axis_right + 5.0,
            axis_right + 8.0,
            style::tick(tick, 3)
        );
    }
    let mid = (TOP + HEIGHT - BOTTOM) / 2.0;
    let _ = writeln!(
        w,
        r##"<text x="22" y="{mid}" transform="rotate(270, 22, {mid})" text-anchor="middle" font-size="12" fill="#000000">energy (cm⁻¹)</text>"##
    );
    let rx = WIDTH - 18.0;
    let _ = writeln!(
        w,
        r##"<text x="{rx}" y="{mid}" transform="rotate(90, {rx}, {mid})" text-anchor="middle" font-size="12" fill="#000000">energy (eV)</text>"##
    );
    for (i, c) in columns.iter().enumerate() {
        let _ = writeln!(
            w,
            r##"<text class="column" x="{:.1}" y="{}" text-anchor="middle" font-size="12" fill="#000000">{}</text>"##,
            column_x(i),
            TOP - 8.0,
            escape(&c.heading())
        );
    }
    if extra_column {
        let _ = writeln!(
            w,
            r##"<text class="column" x="{:.1}" y="{}" text-anchor="middle" font-size="12" fill="#000000">candidates</text>"##,
            column_x(columns.len()),
            TOP - 8.0
        );
    }

    // Lines first, so the level bars lie on top.
    let strongest = kept
        .iter()
        .filter_map(|t| t.intensity)
        .fold(0.0_f64, f64::max);
    let _ = writeln!(w, r##"<g class="transitions">"##);
    for t in &kept {
        let (Some(lower), Some(upper)) = (data.levels.get(t.lower), data.levels.get(t.upper))
        else {
            continue;
        };
        let width = match t.intensity {
            Some(i) if strongest > 0.0 && i > 0.0 => 0.6 + 3.4 * (i / strongest).sqrt(),
            _ => 1.0,
        };
        let intercombination = classify(&lower.label, &upper.label).1.intercombination;
        let (class, colour, dash) = if intercombination {
            (
                "intercombination",
                "#B22222",
                r##" stroke-dasharray="6 3""##,
            )
        } else {
            ("transition", "#1F5FAA", "")
        };
        let _ = writeln!(
            w,
            r##"<line class="{class}" x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{colour}" stroke-width="{width:.2}"{dash}/>"##,
            x_of(&lower.label),
            y(lower.energy_cm1),
            x_of(&upper.label),
            y(upper.energy_cm1)
        );
    }
    let _ = writeln!(w, "</g>");

    // Level bars, labelled where there is room.
    let half = column_width * 0.36;
    let _ = writeln!(w, r##"<g class="levels">"##);
    let mut order: Vec<&DiagramLevel> = data.levels.iter().collect();
    order.sort_by(|a, b| a.energy_cm1.total_cmp(&b.energy_cm1));
    let mut last_label: Vec<Option<f64>> = vec![None; n_columns];
    for level in order {
        let x = x_of(&level.label);
        let ly = y(level.energy_cm1);
        let (class, colour, dash) = if level.single_line {
            (
                "level single-line",
                "#D66E00",
                r##" stroke-dasharray="4 2""##,
            )
        } else {
            ("level", "#000000", "")
        };
        let _ = writeln!(
            w,
            r##"<line class="{class}" x1="{:.1}" y1="{ly:.1}" x2="{:.1}" y2="{ly:.1}" stroke="{colour}" stroke-width="2"{dash}/>"##,
            x - half,
            x + half
        );
        let column = columns
            .iter()
            .position(|k| *k == Column::of(&level.label))
            .unwrap_or(0);
        if let Some(slot) = last_label.get_mut(column)
            && slot.is_none_or(|previous| previous - ly >= 10.0)
        {
            *slot = Some(ly);
            let outer = level
                .label
                .configuration
                .subshells()
                .last()
                .map(|s| s.to_string())
                .unwrap_or_default();
            let _ = writeln!(
                w,
                r##"<text x="{:.1}" y="{ly:.1}" dy="-0.2em" font-size="9" fill="#000000">{} {}</text>"##,
                x + half + 2.0,
                escape(&outer),
                level.label.j
            );
        }
    }
    let _ = writeln!(w, "</g>");
    if extra_column {
        let x = column_x(columns.len());
        let _ = writeln!(w, r##"<g class="candidates">"##);
        for e in &data.extra {
            let ly = y(e.energy_cm1);
            let js: Vec<String> = e.j.iter().map(|j| j.to_string()).collect();
            let _ = writeln!(
                w,
                r##"<line class="candidate" x1="{:.1}" y1="{ly:.1}" x2="{:.1}" y2="{ly:.1}" stroke="#000000" stroke-width="2" stroke-dasharray="1 2"/><text x="{:.1}" y="{ly:.1}" dy="-0.2em" font-size="9" fill="#000000">{} {} J={}</text>"##,
                x - half,
                x + half,
                x - half,
                escape(&e.label),
                if e.parity == Parity::Odd {
                    "odd"
                } else {
                    "even"
                },
                js.join(",")
            );
        }
        let _ = writeln!(w, "</g>");
    }
    let _ = writeln!(w, "</svg>");
    Ok(svg)
}

/// About `count` round tick values (1, 2 or 5 × 10ⁿ apart) within `[lo, hi]`.
fn nice_ticks(lo: f64, hi: f64, count: usize) -> Vec<f64> {
    if hi.is_nan() || lo.is_nan() || hi <= lo || !lo.is_finite() || !hi.is_finite() {
        return Vec::new();
    }
    let raw = (hi - lo) / count.max(1) as f64;
    let magnitude = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * magnitude)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * magnitude);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|k| k as f64 * step).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_inside() {
        // Common practice, no source: axis ticks at 1, 2 or 5 × 10ⁿ.
        assert_eq!(
            nice_ticks(0.0, 10.0, 5),
            vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]
        );
        assert_eq!(
            nice_ticks(159_000.0, 192_000.0, 8),
            vec![
                160_000.0, 165_000.0, 170_000.0, 175_000.0, 180_000.0, 185_000.0, 190_000.0
            ]
        );
        assert!(nice_ticks(1.0, 1.0, 5).is_empty());
    }
}
