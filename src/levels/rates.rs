//! Reading the compiled line lists (`reference-levels/<spectrum>-lines.csv`): the
//! classified E1 lines of a source by the data rows of their two levels, with the
//! published transition probability A_ki and its accuracy code.
//!
//! The build script reads them with this module (`build.rs`), so a defect in a
//! line list is a build error naming the file and line.

use serde::{Deserialize, Serialize};

use super::accuracy::AccuracyCode;
use crate::location::Location;

/// The header of a compiled line list.
pub const RATES_HEADER: &str = "lower,upper,A_s1,accuracy";

/// One published line of a compiled line list.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PublishedLine {
    /// 0-based index of one level in its table's order (the `lower` column).
    pub lower: usize,
    /// 0-based index of the other level (the `upper` column).
    pub upper: usize,
    /// A_ki, s⁻¹, as published; `None` when none is published.
    pub a_ki_s1: Option<f64>,
    /// The accuracy code, when one is printed.
    pub accuracy: Option<AccuracyCode>,
}

/// A compiled line list that cannot be read (a defect of the build).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{location}: {problem}")]
pub struct RatesError {
    /// The row.
    pub location: Location,
    /// What is wrong.
    pub problem: String,
}

/// The lines of the compiled line list `text`, in file order; `source` names it in
/// errors. Comment (`#`) and blank lines are skipped; the header must be
/// [`RATES_HEADER`].
pub fn read_rates(text: &str, source: &str) -> Result<Vec<PublishedLine>, RatesError> {
    let mut lines = Vec::new();
    let mut header_seen = false;
    for (number, line) in text.lines().enumerate() {
        let bad = |problem: String| RatesError {
            location: Location::line(source, number + 1),
            problem,
        };
        if line.starts_with('#') || line.trim().is_empty() {
            continue;
        }
        if !header_seen {
            header_seen = true;
            if line != RATES_HEADER {
                return Err(bad(format!("unexpected header '{line}'")));
            }
            continue;
        }
        let fields: Vec<&str> = line.split(',').collect();
        let [lower, upper, a, accuracy] = fields.as_slice() else {
            return Err(bad(format!("{} fields where 4 are expected", fields.len())));
        };
        let row = |text: &str| {
            text.parse::<usize>()
                .ok()
                .and_then(|r| r.checked_sub(1))
                .ok_or_else(|| bad(format!("'{text}' is not a level row")))
        };
        let a_ki_s1 = if a.is_empty() {
            None
        } else {
            Some(
                a.parse::<f64>()
                    .ok()
                    .filter(|v| v.is_finite() && *v > 0.0)
                    .ok_or_else(|| bad(format!("'{a}' is not a transition probability")))?,
            )
        };
        let accuracy = if accuracy.is_empty() {
            None
        } else {
            Some(
                AccuracyCode::from_name(accuracy)
                    .ok_or_else(|| bad(format!("'{accuracy}' is not an accuracy code")))?,
            )
        };
        lines.push(PublishedLine {
            lower: row(lower)?,
            upper: row(upper)?,
            a_ki_s1,
            accuracy,
        });
    }
    Ok(lines)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Malformed-input checks (common practice, no source): each defect names its line.
    #[test]
    fn rows_are_read_and_defects_name_their_line() {
        let text = "# c\nlower,upper,A_s1,accuracy\n1,18,1.45e+03,B+\n2,3,,\n";
        let lines = read_rates(text, "x.csv").unwrap();
        assert_eq!(lines.len(), 2);
        assert_eq!(
            lines[0],
            PublishedLine {
                lower: 0,
                upper: 17,
                a_ki_s1: Some(1450.0),
                accuracy: Some(AccuracyCode::BPlus)
            }
        );
        assert_eq!((lines[1].a_ki_s1, lines[1].accuracy), (None, None));
        for (body, problem) in [
            ("0,2,1,\n", "x.csv:3: '0' is not a level row"),
            ("1,2,-1,\n", "x.csv:3: '-1' is not a transition probability"),
            ("1,2,1,Q\n", "x.csv:3: 'Q' is not an accuracy code"),
            ("1,2,1\n", "x.csv:3: 3 fields where 4 are expected"),
        ] {
            let e = read_rates(&format!("# c\n{RATES_HEADER}\n{body}"), "x.csv").unwrap_err();
            assert_eq!(e.to_string(), problem);
        }
        let e = read_rates("lower,upper\n", "x.csv").unwrap_err();
        assert_eq!(e.to_string(), "x.csv:1: unexpected header 'lower,upper'");
    }
}
