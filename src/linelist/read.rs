//! The reader: find the header, read the rows.

use std::io::BufRead;

use super::error::{LineListError, LineProblem};
use super::fields::{Delimiter, Splitter};
use super::header::Layout;
use super::options::ReadOptions;
use super::physical::{Next, PhysicalLines};
use super::row::convert_row;
use super::{LineList, SkippedRow};
use crate::location::Location;

/// How many skipped rows [`LineList::skipped`] keeps in detail; the rest are only
/// counted in [`LineList::skipped_total`], so that memory stays bounded.
pub const SKIPPED_DETAIL_LIMIT: usize = 500;

/// Read a measured line list from `reader`; `source` names it in messages (a path
/// or `<stdin>`). The format is described in the [module documentation](super).
///
/// Returns the lines in input order. Errors name the file,
/// the line and the column; with [`ReadOptions::skip_bad`] bad data rows are left
/// out and listed instead.
pub fn read_line_list(
    reader: impl BufRead,
    source: &str,
    options: &ReadOptions,
) -> Result<LineList, LineListError> {
    let mut physical = PhysicalLines::new(reader, options.max_line_bytes);
    let mut buf = Vec::new();
    let bad_line = |line: usize, problem| LineListError::BadLine {
        location: Location::line(source, line),
        problem,
    };

    let (layout, mut splitter) = loop {
        let next = physical
            .next_line(&mut buf, false)
            .map_err(|error| io_error(source, physical.number() + 1, error))?;
        let line = physical.number();
        match next {
            Next::End => {
                return Err(LineListError::Empty {
                    location: Location::source(source),
                });
            }
            Next::TooLong => {
                let limit = options.max_line_bytes;
                return Err(bad_line(line, LineProblem::TooLong { limit }));
            }
            Next::Line if is_blank_or_comment(&buf) => continue,
            Next::Line => {}
        }
        let delimiter = Delimiter::detect(&buf);
        let text = delimiter
            .text_of(&buf)
            .ok_or_else(|| bad_line(line, LineProblem::InvalidUtf8))?;
        let mut splitter = Splitter::new(delimiter);
        let fields = splitter
            .split(text)
            .map_err(|problem| bad_line(line, problem))?;
        break (Layout::from_header(&fields, source, line)?, splitter);
    };

    let mut lines = Vec::new();
    let mut skipped = Vec::new();
    let mut skipped_total = 0;
    let mut medium_assumed = false;
    let mut row = 0;
    loop {
        let next = physical
            .next_line(&mut buf, options.skip_bad)
            .map_err(|error| io_error(source, physical.number() + 1, error))?;
        let line = physical.number();
        let outcome = match next {
            Next::End => break,
            Next::Line if is_blank_or_comment(&buf) => continue,
            Next::TooLong => {
                row += 1;
                let limit = options.max_line_bytes;
                Err((None, LineProblem::TooLong { limit }))
            }
            Next::Line => {
                row += 1;
                match splitter.delimiter().text_of(&buf) {
                    None => Err((None, LineProblem::InvalidUtf8)),
                    Some(text) => match splitter.split(text) {
                        Err(problem) => Err((None, problem)),
                        Ok(fields) => convert_row(&fields, &layout, options, row, line),
                    },
                }
            }
        };
        match outcome {
            Ok(converted) => {
                medium_assumed |= converted.medium_assumed;
                lines.push(converted.line);
            }
            Err((column, problem)) => {
                let mut location = Location::line(source, line);
                if let Some(column) = column {
                    location = location.column(layout.name(column));
                }
                if !options.skip_bad {
                    return Err(LineListError::BadLine { location, problem });
                }
                skipped_total += 1;
                if skipped.len() < SKIPPED_DETAIL_LIMIT {
                    skipped.push(SkippedRow {
                        location,
                        reason: problem.to_string(),
                    });
                }
            }
        }
    }

    if lines.is_empty() {
        return Err(LineListError::NoLines {
            location: Location::line(source, layout.line),
            skipped: skipped_total,
        });
    }
    let extra_columns = layout
        .extras
        .iter()
        .map(|&column| layout.name(column).to_string())
        .collect();
    Ok(LineList {
        source: source.to_string(),
        lines,
        extra_columns,
        air_formula: options.air_formula,
        skipped,
        skipped_total,
        medium_assumed,
    })
}

fn io_error(source: &str, line: usize, error: std::io::Error) -> LineListError {
    LineListError::Io {
        location: Location::line(source, line),
        source: error,
    }
}

/// A blank line, or one whose first non-blank character is `#`. Looked at before
/// the line is checked as UTF-8, so that comments in another encoding do no harm.
fn is_blank_or_comment(line: &[u8]) -> bool {
    line.trim_ascii_start()
        .first()
        .is_none_or(|&byte| byte == b'#')
}
