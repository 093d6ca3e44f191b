//! The terminal table of `termsight assign`.

use comfy_table::{
    CellAlignment, ColumnConstraint, ContentArrangement, LineStyle, Table, TableStyle,
};

use super::{AssignReport, significant};
use crate::assign::AssignmentRecord;
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

/// The description lines and a table with, per observed line, the best candidate and
/// the number of alternatives (or every candidate with `all`), and the predicted gf
/// in a column of its own when the predictions have strengths (a level model).
/// Levels are printed without the subshells closed in both of them (the full labels
/// are in the CSV and JSON outputs).
pub fn assign_table(report: &AssignReport<'_>, options: &TableOptions) -> String {
    let mut table = Table::new();
    table
        .load_style(TableStyle::new().header_separator(LineStyle::none().fill('─').junction('─')))
        .set_content_arrangement(ContentArrangement::Disabled);
    let unit = common_unit(report.records);
    let (observed_header, predicted_header) = match &unit {
        Some(unit) => (format!("observed\n{unit}"), format!("predicted\n{unit}")),
        None => ("observed".to_string(), "predicted".to_string()),
    };
    // A column of predicted strengths (gf of a level model) when any candidate of a
    // model has one, and one of published gA values when any candidate has one.
    let strengths = report.records.iter().any(|r| {
        r.candidate
            .as_ref()
            .is_some_and(|c| c.predicted_strength.is_some() && c.ga_s1.is_none())
    });
    let published = report
        .records
        .iter()
        .any(|r| r.candidate.as_ref().is_some_and(|c| c.ga_s1.is_some()));
    let mut header = vec![
        "line".to_string(),
        observed_header,
        predicted_header,
        "species".to_string(),
        "lower level".to_string(),
        "upper level".to_string(),
        "Δσ\ncm⁻¹".to_string(),
        "Δσ/u".to_string(),
        "P\nchance".to_string(),
        "alt".to_string(),
        "flags".to_string(),
    ];
    if published {
        header.insert(STRENGTH_COLUMN, "gA\ns⁻¹".to_string());
    }
    if strengths {
        header.insert(STRENGTH_COLUMN, "gf\n(model)".to_string());
    }
    table.set_header(header);
    for (index, record) in report.records.iter().enumerate() {
        let first = record.rank.is_none_or(|r| r == 1);
        if !first && !options.all {
            continue;
        }
        let alternatives = report
            .records
            .iter()
            .skip(index + 1)
            .take_while(|r| r.line == record.line && r.rank.is_some())
            .count();
        let mut cells = row(record, first, alternatives, options.all, unit.is_some());
        if published {
            let ga = record
                .candidate
                .as_ref()
                .and_then(|c| c.ga_s1)
                .map(|v| format!("{v:.1e}"))
                .unwrap_or_default();
            cells.insert(STRENGTH_COLUMN, ga);
        }
        if strengths {
            let gf = record
                .candidate
                .as_ref()
                .and_then(|c| c.predicted_strength)
                .map(|s| significant(s, 2))
                .unwrap_or_default();
            cells.insert(STRENGTH_COLUMN, gf);
        }
        table.add_row(cells);
    }
    // One space before each cell and none after: the columns stay apart, and
    // labels such as 2p5.(2P°<3/2>).3s keep to one line at 120 columns.
    for (index, column) in table.column_iter_mut().enumerate() {
        column.set_padding((u16::from(index > 0), 0));
    }
    let extra = usize::from(strengths) + usize::from(published);
    let right: Vec<usize> = [0, 1, 2].into_iter().chain(6..10 + extra).collect();
    for &column in &right {
        if let Some(c) = table.column_mut(column) {
            c.set_cell_alignment(CellAlignment::Right);
        }
    }
    // Natural column widths when they fit; else let the table wrap cells to fit.
    let natural_width = table.lines().map(|l| l.chars().count()).max().unwrap_or(0);
    if natural_width > usize::from(options.width) {
        table
            .set_content_arrangement(ContentArrangement::Dynamic)
            .set_width(options.width);
        // Level labels are short lines that read badly when split; other columns
        // give way first.
        for column in [4, 5] {
            if let Some(c) = table.column_mut(column) {
                c.set_constraint(ColumnConstraint::ContentWidth);
            }
        }
    }
    let mut text = String::new();
    for line in report.description() {
        text.push_str(&wrap(&line, usize::from(options.width).max(40)));
    }
    text.push('\n');
    text.push_str(&table.trim_fmt());
    text.push('\n');
    text
}

/// Where the column of predicted strengths goes: after the upper level.
const STRENGTH_COLUMN: usize = 6;

/// `air, nm` when every line was given in one unit and medium.
fn common_unit(records: &[AssignmentRecord]) -> Option<String> {
    let describe = |r: &AssignmentRecord| match r.given {
        GivenPosition::Wavelength { unit, medium, .. } => format!("{medium} λ, {unit}"),
        GivenPosition::Wavenumber { .. } => "σ, cm⁻¹".to_string(),
    };
    let first = describe(records.first()?);
    records
        .iter()
        .all(|r| describe(r) == first)
        .then_some(first)
}

fn row(
    record: &AssignmentRecord,
    first: bool,
    alternatives: usize,
    all: bool,
    common_unit: bool,
) -> Vec<String> {
    let (given_value, unit) = match record.given {
        GivenPosition::Wavelength { value, unit, .. } => (value, unit.to_string()),
        GivenPosition::Wavenumber { value } => (value, "cm⁻¹".to_string()),
    };
    let with_unit = |text: String| {
        if common_unit {
            text
        } else {
            format!("{text} {unit}")
        }
    };
    let decimals = decimals_of(given_value);
    let line = if first {
        record.line.to_string()
    } else {
        String::new()
    };
    let observed = if first {
        with_unit(format!("{given_value}"))
    } else {
        String::new()
    };
    let flags = record
        .flags
        .iter()
        .map(|f| f.name())
        .collect::<Vec<_>>()
        .join("\n");
    let Some(c) = &record.candidate else {
        return vec![
            line,
            observed,
            String::new(),
            "–".into(),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            flags,
        ];
    };
    let (lower, upper) = shortened(&c.lower, &c.upper);
    let alternatives = if all && !first {
        format!("#{}", record.rank.unwrap_or(0))
    } else {
        alternatives.to_string()
    };
    vec![
        line,
        observed,
        c.predicted_in_given_unit
            .map(|v| with_unit(format!("{v:.prec$}", prec = decimals + 1)))
            .unwrap_or_default(),
        c.species.to_string(),
        lower,
        upper,
        deviation_text(c.deviation_cm1),
        format!("{:+.2}", c.deviation_sigma),
        significant(c.chance_probability, 2),
        alternatives,
        flags,
    ]
}

/// A deviation in cm⁻¹ with its sign, two significant digits and at most four
/// decimals (the CSV and JSON outputs keep every digit).
fn deviation_text(deviation_cm1: f64) -> String {
    if deviation_cm1.abs() < 1e-3 {
        format!("{deviation_cm1:+.4}")
    } else {
        format!("{}", Signed(significant(deviation_cm1, 2)))
    }
}

/// A number printed with an explicit sign.
struct Signed(String);

impl std::fmt::Display for Signed {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.0.starts_with('-') {
            f.write_str(&self.0)
        } else {
            write!(f, "+{}", self.0)
        }
    }
}

/// Decimals in the shortest printing of `value`.
fn decimals_of(value: f64) -> usize {
    let text = format!("{value}");
    text.split_once('.').map_or(0, |(_, d)| d.len()).min(6)
}

/// The two labels on two lines each (configuration; term and J), without the
/// subshells that are closed in both (kept when nothing else would remain).
fn shortened(lower: &LevelLabel, upper: &LevelLabel) -> (String, String) {
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
            break_at_dots(&configuration.to_string(), LABEL_WIDTH),
            label.term,
            label.j
        )
    };
    (strip(lower), strip(upper))
}

/// Widest configuration printed on one line of the table; longer ones are broken
/// after a `.` (17 keeps the pair-coupled Ne I and Ar I labels on one line).
const LABEL_WIDTH: usize = 17;

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
