//! The terminal table of `termsight assign`.
//!
//! Written by a fixed-width writer of our own: the column widths are found in one
//! pass over the rows and the rows are written in a second, both in parallel
//! batches, so a table of a million lines never holds more than a batch of cells.
//! Its layout is that of the `comfy-table` crate's table with a rule under the
//! header (a test checks that both give the same text); that crate is kept for a
//! small table too wide for the terminal, whose cells it wraps to fit.

use std::io::{self, Write};
use std::sync::OnceLock;

use comfy_table::{
    CellAlignment, ColumnConstraint, ContentArrangement, LineStyle, Table, TableStyle,
};
use rayon::prelude::*;

use super::AssignReport;
use super::assign_rows::{LINES_PER_TASK, Rendered, Row};
use super::digits::{push_integer, push_shortest, round_fixed};
use crate::assign::LineAssignment;
use crate::levels::LevelLabel;
use crate::linelist::GivenPosition;
use crate::notation::{ConfigPart, Configuration};

/// Options of [`assign_table`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TableOptions {
    /// List every candidate, not only the best. Default: false.
    pub all: bool,
    /// Width to fit the table to, in columns. Default: 120.
    pub width: u16,
}

impl Default for TableOptions {
    fn default() -> Self {
        TableOptions {
            all: false,
            width: 120,
        }
    }
}

/// Rows up to which a table too wide for [`TableOptions::width`] has its cells
/// wrapped to fit; a longer one keeps its natural widths (it is read in a pager or
/// a file, and wrapping would need every row at once).
const WRAPPED_ROWS: usize = 5000;

/// Where the column of predicted strengths goes: after the upper level.
const STRENGTH_COLUMN: usize = 6;

/// Append, on a line of its own below the gA (or model gf) of a candidate, its
/// observed over predicted intensity on its species' fitted scale, as `×0.21` (two
/// significant digits); nothing when the line has no intensity or the species no
/// scale (and in the position-only ranking).
fn push_ratio(out: &mut Vec<u8>, evidence: Option<&crate::assign::CandidateEvidence>) {
    if let Some(ratio) = evidence.and_then(|e| e.observed_to_predicted_intensity) {
        out.extend_from_slice("\n×".as_bytes());
        push_significant(out, ratio, 2, false);
    }
}

/// The cells of one row: their texts one after the other, and where each ends.
#[derive(Default)]
struct Cells {
    text: Vec<u8>,
    ends: Vec<usize>,
}

impl Cells {
    fn clear(&mut self) {
        self.text.clear();
        self.ends.clear();
    }

    /// End the current cell.
    fn end(&mut self) {
        self.ends.push(self.text.len());
    }

    fn push(&mut self, text: &str) {
        self.text.extend_from_slice(text.as_bytes());
        self.end();
    }

    fn cells(&self) -> impl Iterator<Item = &[u8]> + Clone + '_ {
        let starts = std::iter::once(0).chain(self.ends.iter().copied());
        starts
            .zip(self.ends.iter().copied())
            .map(|(start, end)| self.text.get(start..end).unwrap_or_default())
    }
}

/// Characters in a UTF-8 text (every character of the table is one column wide).
fn width(text: &[u8]) -> usize {
    text.iter().filter(|&&b| b & 0xC0 != 0x80).count()
}

/// What the whole table shares.
struct Layout<'a> {
    rendered: Rendered<'a>,
    options: TableOptions,
    /// `air λ, nm` when every line was given in one unit and medium.
    common_unit: Option<String>,
    /// A column of predicted strengths (gf of a level model).
    strengths: bool,
    /// A column of published gA values (compiled spectra).
    published: bool,
    /// Widest configuration on one line of a label cell (broken after a `.`).
    label_width: usize,
    /// Shortened labels of the levels of each predicted line, made when first shown.
    labels: Vec<OnceLock<(String, String)>>,
}

impl<'a> Layout<'a> {
    fn header(&self) -> Vec<String> {
        let (observed, predicted) = match &self.common_unit {
            Some(unit) => (format!("observed\n{unit}"), format!("predicted\n{unit}")),
            None => ("observed".to_string(), "predicted".to_string()),
        };
        let mut header = vec![
            "line".to_string(),
            observed,
            predicted,
            "species".to_string(),
            "lower level".to_string(),
            "upper level".to_string(),
            "Δσ\ncm⁻¹".to_string(),
            "Δσ/u".to_string(),
            "P\nchance".to_string(),
            "alt".to_string(),
            "flags".to_string(),
        ];
        if self.published {
            header.insert(STRENGTH_COLUMN, "gA\ns⁻¹".to_string());
        }
        if self.strengths {
            header.insert(STRENGTH_COLUMN, "gf\n(model)".to_string());
        }
        header
    }

    fn right_aligned(&self, column: usize) -> bool {
        let extra = usize::from(self.strengths) + usize::from(self.published);
        matches!(column, 0..=2) || (6..10 + extra).contains(&column)
    }

    /// Call `row` with the cells of every table row of one observed line.
    fn rows_of(
        &self,
        assignment: &'a LineAssignment,
        cells: &mut Cells,
        mut row: impl FnMut(&Cells),
    ) {
        let alternatives = assignment.candidates.len().saturating_sub(1);
        for r in self.rendered.rows_of(assignment) {
            let first = r.rank.is_none_or(|rank| rank == 1);
            if !first && !self.options.all {
                continue;
            }
            cells.clear();
            self.fill(&r, first, alternatives, cells);
            row(cells);
        }
    }

    fn fill(&self, r: &Row<'_>, first: bool, alternatives: usize, cells: &mut Cells) {
        let (given_value, unit) = match r.observed.given {
            GivenPosition::Wavelength { value, unit, .. } => (value, unit.to_string()),
            GivenPosition::Wavenumber { value } => (value, "cm⁻¹".to_string()),
        };
        let with_unit = |cells: &mut Cells| {
            if self.common_unit.is_none() {
                cells.text.push(b' ');
                cells.text.extend_from_slice(unit.as_bytes());
            }
        };
        if first {
            push_integer(&mut cells.text, r.observed.row);
        }
        cells.end();
        let mut given = Vec::new();
        push_shortest(&mut given, given_value);
        if first {
            cells.text.extend_from_slice(&given);
            with_unit(cells);
        }
        cells.end();
        let flags = |cells: &mut Cells| {
            for (i, flag) in r.flags().enumerate() {
                if i > 0 {
                    cells.text.push(b'\n');
                }
                cells.text.extend_from_slice(flag.name().as_bytes());
            }
            cells.end();
        };
        let Some(c) = &r.candidate else {
            cells.end();
            cells.push("–");
            for _ in 0..6 {
                cells.end();
            }
            if self.strengths {
                cells.end();
            }
            if self.published {
                cells.end();
            }
            flags(cells);
            return;
        };
        // One decimal more than the given value shows, at most seven.
        let decimals = decimals_of(&given) + 1;
        if let Some((value, _)) = r.predicted_in_given_unit() {
            push_decimals(&mut cells.text, value, decimals, false);
            with_unit(cells);
        }
        cells.end();
        cells.text.extend_from_slice(c.lower.species.as_bytes());
        if let Some(evidence) = &c.candidate.evidence {
            cells.text.push(b'\n');
            cells
                .text
                .extend_from_slice(evidence.species_verdict.name().as_bytes());
        }
        cells.end();
        let (lower, upper) = self.labels[c.candidate.prediction].get_or_init(|| {
            let levels = self.rendered.report.predictions.levels();
            match (levels.get(c.line.lower), levels.get(c.line.upper)) {
                (Some(lower), Some(upper)) => {
                    shortened(&lower.label, &upper.label, self.label_width)
                }
                _ => (String::new(), String::new()),
            }
        });
        cells.push(lower);
        cells.push(upper);
        if self.strengths {
            if let Some(gf) = c
                .line
                .relative_strength
                .filter(|_| c.line.transition_probability.is_none())
            {
                push_significant(&mut cells.text, gf, 2, false);
            }
            push_ratio(&mut cells.text, c.candidate.evidence.as_ref());
            cells.end();
        }
        if self.published {
            if let Some(probability) = c.line.transition_probability {
                cells
                    .text
                    .extend_from_slice(format!("{:.1e}", probability.ga_s1()).as_bytes());
                push_ratio(&mut cells.text, c.candidate.evidence.as_ref());
            }
            cells.end();
        }
        push_deviation(&mut cells.text, c.candidate.deviation_cm1);
        cells.end();
        push_decimals(&mut cells.text, c.candidate.deviation_sigma, 2, true);
        cells.end();
        push_significant(&mut cells.text, c.candidate.chance_probability, 2, false);
        cells.end();
        if self.options.all && !first {
            cells.text.push(b'#');
            push_integer(&mut cells.text, r.rank.unwrap_or(0));
        } else {
            push_integer(&mut cells.text, alternatives);
        }
        cells.end();
        flags(cells);
    }

    /// The widest line of each column, the header's included.
    fn widths(&self) -> Vec<usize> {
        let header = self.header();
        let mut widths: Vec<usize> = header
            .iter()
            .map(|h| h.lines().map(|l| l.chars().count()).max().unwrap_or(0))
            .collect();
        let assignments = self.rendered.report.assignments;
        let columns = widths.len();
        let task_widths: Vec<Vec<usize>> = assignments
            .par_chunks(LINES_PER_TASK)
            .map(|task| {
                let mut widths = vec![0; columns];
                let mut cells = Cells::default();
                for assignment in task {
                    self.rows_of(assignment, &mut cells, |cells| {
                        for (w, cell) in widths.iter_mut().zip(cells.cells()) {
                            for line in cell.split(|&b| b == b'\n') {
                                *w = (*w).max(width(line));
                            }
                        }
                    });
                }
                widths
            })
            .collect();
        for task in task_widths {
            for (w, t) in widths.iter_mut().zip(task) {
                *w = (*w).max(t);
            }
        }
        widths
    }

    /// Append one table row, each of its cells' lines on a line of its own,
    /// padded to the column widths, trailing blanks trimmed.
    fn push_row<'c>(
        &self,
        cells: impl Iterator<Item = &'c [u8]> + Clone,
        widths: &[usize],
        out: &mut Vec<u8>,
    ) {
        let height = cells
            .clone()
            .map(|c| c.split(|&b| b == b'\n').count())
            .max()
            .unwrap_or(1);
        for k in 0..height {
            let start = out.len();
            for (column, (cell, &w)) in cells.clone().zip(widths).enumerate() {
                if column > 0 {
                    // The blank rule between columns, then the cell's padding.
                    out.extend_from_slice(b"  ");
                }
                let line = cell.split(|&b| b == b'\n').nth(k).unwrap_or_default();
                let pad = w.saturating_sub(width(line));
                if self.right_aligned(column) {
                    out.extend(std::iter::repeat_n(b' ', pad));
                    out.extend_from_slice(line);
                } else {
                    out.extend_from_slice(line);
                    out.extend(std::iter::repeat_n(b' ', pad));
                }
            }
            let kept = out.get(start..).map_or(0, |l| l.trim_ascii_end().len());
            out.truncate(start + kept);
            out.push(b'\n');
        }
    }

    fn write<W: Write + ?Sized>(&self, out: &mut W) -> io::Result<()> {
        let widths = self.widths();
        let header = self.header();
        let mut head = Vec::new();
        self.push_row(header.iter().map(|h| h.as_bytes()), &widths, &mut head);
        let total = widths.iter().sum::<usize>() + 2 * widths.len().saturating_sub(1);
        head.extend("─".repeat(total).as_bytes());
        head.push(b'\n');
        out.write_all(&head)?;
        self.rendered.write_lines(out, |_, assignment, buffer| {
            let mut cells = Cells::default();
            self.rows_of(assignment, &mut cells, |cells| {
                self.push_row(cells.cells(), &widths, buffer);
            });
        })
    }

    /// The table by `comfy-table`, its cells wrapped to `width` columns.
    fn wrapped(&self) -> String {
        self.by_comfy_table(ContentArrangement::Dynamic)
    }

    fn by_comfy_table(&self, arrangement: ContentArrangement) -> String {
        let mut table = Table::new();
        table
            .load_style(
                TableStyle::new().header_separator(LineStyle::none().fill('─').junction('─')),
            )
            .set_content_arrangement(arrangement)
            .set_width(self.options.width);
        table.set_header(self.header());
        let mut cells = Cells::default();
        for assignment in self.rendered.report.assignments {
            self.rows_of(assignment, &mut cells, |cells| {
                table.add_row(
                    cells
                        .cells()
                        .map(|c| String::from_utf8_lossy(c).into_owned())
                        .collect::<Vec<_>>(),
                );
            });
        }
        style_columns(&mut table, |c| self.right_aligned(c));
        // Level labels are short lines that read badly when split; other columns
        // give way first.
        for column in [4, 5] {
            if let Some(c) = table.column_mut(column) {
                c.set_constraint(ColumnConstraint::ContentWidth);
            }
        }
        let mut text = table.trim_fmt();
        text.push('\n');
        text
    }
}

impl<'a> Layout<'a> {
    fn new(report: &'a AssignReport<'a>, options: &TableOptions, label_width: usize) -> Layout<'a> {
        let lines = &report.list.lines;
        let describe = |given: &GivenPosition| match given {
            GivenPosition::Wavelength { unit, medium, .. } => format!("{medium} λ, {unit}"),
            GivenPosition::Wavenumber { .. } => "σ, cm⁻¹".to_string(),
        };
        let common_unit = lines.first().map(|l| describe(&l.given)).filter(|first| {
            lines
                .par_iter()
                .all(|l| match (&l.given, lines.first().map(|f| &f.given)) {
                    (
                        GivenPosition::Wavelength { unit, medium, .. },
                        Some(GivenPosition::Wavelength {
                            unit: u, medium: m, ..
                        }),
                    ) => unit == u && medium == m,
                    (GivenPosition::Wavenumber { .. }, Some(GivenPosition::Wavenumber { .. })) => {
                        true
                    }
                    _ => false,
                })
                && !first.is_empty()
        });
        let predictions = report.predictions;
        // A column of gf for candidates of a level model, and one of gA for those
        // with a published transition probability.
        let any_line = |test: &(dyn Fn(&crate::levels::PredictedLine) -> bool + Sync)| {
            report.assignments.par_iter().any(|a| {
                a.candidates
                    .iter()
                    .any(|c| predictions.lines().get(c.prediction).is_some_and(test))
            })
        };
        let strengths =
            any_line(&|l| l.relative_strength.is_some() && l.transition_probability.is_none());
        let published = any_line(&|l| l.transition_probability.is_some());
        Layout {
            label_width,
            rendered: Rendered::new(report),
            options: *options,
            common_unit,
            strengths,
            published,
            labels: (0..predictions.lines().len())
                .map(|_| OnceLock::new())
                .collect(),
        }
    }
}

/// The table rows by the writer of this module and by `comfy-table` without
/// wrapping, for the test that they agree.
#[cfg(test)]
pub(super) fn by_both_writers(
    report: &AssignReport<'_>,
    options: &TableOptions,
) -> (String, String) {
    let layout = Layout::new(report, options, LABEL_WIDTH);
    let mut ours = Vec::new();
    let _ = layout.write(&mut ours);
    let ours = String::from_utf8(ours).unwrap_or_default();
    (ours, layout.by_comfy_table(ContentArrangement::Disabled))
}

/// One space before each cell and none after: the columns stay apart, and labels
/// such as 2p5.(2P°<3/2>).3s keep to one line at 120 columns.
fn style_columns(table: &mut Table, right_aligned: impl Fn(usize) -> bool) {
    for (index, column) in table.column_iter_mut().enumerate() {
        column.set_padding((u16::from(index > 0), 0));
        if right_aligned(index) {
            column.set_cell_alignment(CellAlignment::Right);
        }
    }
}

/// Write the terminal table of an assign run to `out`: the description lines, then
/// per observed line the best candidate and the number of alternatives (or every
/// candidate with `all`), and the predicted gf in a column of its own when the
/// predictions have strengths (a level model). Levels are printed without the
/// subshells closed in both of them (the full labels are in the CSV and JSON
/// outputs).
pub fn write_assign_table<W: Write + ?Sized>(
    report: &AssignReport<'_>,
    options: &TableOptions,
    out: &mut W,
) -> io::Result<()> {
    let mut layout = Layout::new(report, options, LABEL_WIDTH);
    let mut text = String::new();
    for line in report.description() {
        text.push_str(&wrap(&line, usize::from(options.width).max(40)));
    }
    text.push('\n');
    out.write_all(text.as_bytes())?;
    let shown = if options.all {
        report
            .assignments
            .iter()
            .map(|a| a.candidates.len().max(1))
            .sum()
    } else {
        report.assignments.len()
    };
    if shown <= WRAPPED_ROWS {
        // Too wide: first break the configurations after more of their dots
        // (labels grow a line, numbers stay whole), then let comfy-table wrap.
        let mut label_width = LABEL_WIDTH;
        loop {
            let widths = layout.widths();
            let natural = widths.iter().sum::<usize>() + 2 * widths.len().saturating_sub(1);
            if natural <= usize::from(options.width) {
                break;
            }
            if label_width <= NARROWEST_LABEL_WIDTH {
                return out.write_all(layout.wrapped().as_bytes());
            }
            label_width -= 1;
            layout = Layout::new(report, options, label_width);
        }
    }
    layout.write(out)
}

/// [`write_assign_table`] into memory.
pub fn assign_table(report: &AssignReport<'_>, options: &TableOptions) -> String {
    let mut out = Vec::new();
    // Writing to a Vec cannot fail.
    let _ = write_assign_table(report, options, &mut out);
    String::from_utf8(out).unwrap_or_default()
}

/// Decimals in a number's shortest printing.
fn decimals_of(text: &[u8]) -> usize {
    text.iter()
        .position(|&b| b == b'.')
        .map_or(0, |point| text.len() - point - 1)
        .min(6)
}

/// Append `value` with exactly `decimals` decimals (as `format!("{:.N}")` prints
/// it, with `+` before a positive number when `signed`).
fn push_decimals(out: &mut Vec<u8>, value: f64, decimals: usize, signed: bool) {
    let rounded = round_fixed(value, decimals as u32);
    let scaled = rounded * 10f64.powi(decimals as i32);
    if !(value.is_finite() && scaled.abs() < 4.5e15) {
        let text = if signed {
            format!("{value:+.decimals$}")
        } else {
            format!("{value:.decimals$}")
        };
        out.extend_from_slice(text.as_bytes());
        return;
    }
    let digits = scaled.abs().round() as u64;
    if value.is_sign_negative() {
        out.push(b'-');
    } else if signed {
        out.push(b'+');
    }
    let unit = 10u64.pow(decimals as u32);
    let mut buffer = itoa::Buffer::new();
    out.extend_from_slice(buffer.format(digits / unit).as_bytes());
    if decimals > 0 {
        out.push(b'.');
        let fraction = buffer.format(digits % unit);
        out.extend(std::iter::repeat_n(b'0', decimals - fraction.len()));
        out.extend_from_slice(fraction.as_bytes());
    }
}

/// Append `value` with `significant` significant digits, in plain decimal notation
/// for magnitudes from 10⁻⁴ up, in exponent notation below.
fn push_significant(out: &mut Vec<u8>, value: f64, significant: usize, signed: bool) {
    if value == 0.0 || !value.is_finite() {
        push_decimals(out, value, 0, signed);
        return;
    }
    let magnitude = value.abs().log10().floor() as i32;
    if magnitude < -4 {
        let text = format!("{value:.prec$e}", prec = significant.saturating_sub(1));
        if signed && value > 0.0 {
            out.push(b'+');
        }
        out.extend_from_slice(text.as_bytes());
        return;
    }
    let decimals = (significant as i32 - 1 - magnitude).max(0) as usize;
    push_decimals(out, value, decimals, signed);
}

/// A deviation in cm⁻¹ with its sign, two significant digits and at most four
/// decimals (the CSV and JSON outputs keep 10⁻⁸ cm⁻¹).
fn push_deviation(out: &mut Vec<u8>, deviation_cm1: f64) {
    if deviation_cm1.abs() < 1e-3 {
        push_decimals(out, deviation_cm1, 4, true);
    } else {
        push_significant(out, deviation_cm1, 2, true);
    }
}

/// The two labels on two lines each (configuration; term and J), without the
/// subshells that are closed in both (kept when nothing else would remain).
fn shortened(lower: &LevelLabel, upper: &LevelLabel, width: usize) -> (String, String) {
    let closed = |c: &Configuration| -> Vec<(u32, u32)> {
        c.subshells()
            .filter(|s| s.is_closed())
            .map(|s| (s.n, s.l))
            .collect()
    };
    let (a, b) = (closed(&lower.configuration), closed(&upper.configuration));
    let common: Vec<(u32, u32)> = a.into_iter().filter(|s| b.contains(s)).collect();
    let strip = |label: &LevelLabel| {
        let parts: Vec<ConfigPart> = label
            .configuration
            .parts
            .iter()
            .filter(|p| match p {
                ConfigPart::Subshell(s) => !common.contains(&(s.n, s.l)),
                _ => true,
            })
            .cloned()
            .collect();
        let has_subshell = parts.iter().any(|p| matches!(p, ConfigPart::Subshell(_)));
        let configuration = if has_subshell {
            Configuration { parts }
        } else {
            label.configuration.clone()
        };
        format!(
            "{}\n{} {}",
            break_at_dots(&configuration.to_string(), width),
            label.term,
            label.j
        )
    };
    (strip(lower), strip(upper))
}

/// Widest configuration printed on one line of the table; longer ones are broken
/// after a `.` (17 keeps the pair-coupled Ne I and Ar I labels on one line).
const LABEL_WIDTH: usize = 17;

/// Narrowest the configurations are broken to before a table too wide for the
/// terminal has its cells wrapped (a pair-coupled core `(2P°<3/2>).` is 11).
const NARROWEST_LABEL_WIDTH: usize = 11;

/// `text` broken into lines of at most `width` characters after `.` separators (a
/// longer segment stays whole).
fn break_at_dots(text: &str, width: usize) -> String {
    let mut lines: Vec<String> = Vec::new();
    let mut current = String::new();
    for segment in text.split_inclusive('.') {
        if !current.is_empty() && current.chars().count() + segment.chars().count() > width {
            lines.push(std::mem::take(&mut current));
        }
        current.push_str(segment);
    }
    lines.push(current);
    lines.join("\n")
}

/// `text` broken at spaces into lines of at most `width` characters (a longer word
/// stays whole), continuation lines indented by two spaces; each line ends in `\n`.
/// Written here because the description is plain text whose characters are all one
/// column wide, and that needs no more than this.
fn wrap(text: &str, width: usize) -> String {
    let mut out = String::new();
    let mut current = String::new();
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        let needed = current.chars().count() + 1 + word.chars().count();
        if !current.trim().is_empty() && needed > width {
            out.push_str(current.trim_end());
            out.push('\n');
            current = String::from("  ");
        } else if !current.is_empty() && !current.ends_with(' ') {
            current.push(' ');
        }
        current.push_str(word);
    }
    if !current.trim().is_empty() {
        out.push_str(current.trim_end());
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn deviation_text(deviation_cm1: f64) -> String {
        let mut out = Vec::new();
        push_deviation(&mut out, deviation_cm1);
        String::from_utf8(out).unwrap()
    }

    #[test]
    fn fixed_decimals_print_as_std_fmt_does() {
        // std::fmt is the reference for these (exact decimal rounding).
        for (value, decimals) in [
            (1.005, 2),
            (-0.5, 2),
            (2.5, 0),
            (-0.00004, 4),
            (123.456789, 5),
        ] {
            for signed in [false, true] {
                let mut out = Vec::new();
                push_decimals(&mut out, value, decimals, signed);
                let expected = if signed {
                    format!("{value:+.decimals$}")
                } else {
                    format!("{value:.decimals$}")
                };
                assert_eq!(String::from_utf8(out).unwrap(), expected);
            }
        }
    }

    #[test]
    fn deviations_keep_two_digits_and_four_decimals_at_most() {
        assert_eq!(deviation_text(0.012345), "+0.012");
        assert_eq!(deviation_text(-0.5), "-0.50");
        assert_eq!(deviation_text(0.00036), "+0.0004");
        assert_eq!(deviation_text(12.3), "+12");
    }

    #[test]
    fn long_configurations_break_after_dots() {
        assert_eq!(
            break_at_dots("5d9.6s2.(2D<5/2>).6p", 17),
            "5d9.6s2.\n(2D<5/2>).6p"
        );
        assert_eq!(break_at_dots("2p5.(2P°<3/2>).3s", 17), "2p5.(2P°<3/2>).3s");
        assert_eq!(break_at_dots("1s.2p", 3), "1s.\n2p");
    }

    #[test]
    fn wrap_breaks_at_spaces_and_indents() {
        assert_eq!(wrap("aaa bbb ccc", 7), "aaa bbb\n  ccc\n");
        assert_eq!(wrap("aaaaaaaaaa b", 4), "aaaaaaaaaa\n  b\n");
        assert_eq!(wrap("", 10), "");
    }
}
