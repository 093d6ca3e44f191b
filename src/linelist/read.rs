//! The reader: find the header, read the rows (the bytes in one stream, their
//! conversion in parallel batches; the result and the errors are those of reading
//! line by line).

use std::io::BufRead;

use super::error::{LineListError, LineProblem};
use super::fields::{Delimiter, Splitter};
use super::header::Layout;
use super::options::ReadOptions;
use super::physical::{Next, PhysicalLines};
use super::row::{ConvertedRow, RowError, convert_row};
use super::{LineList, SkippedRow};
use crate::location::Location;
use rayon::prelude::*;

/// Data lines read before they are converted, in parallel tasks of at least
/// [`LINES_PER_TASK`] lines.
const LINES_PER_BATCH: usize = 1 << 14;

/// Lines converted by one task.
const LINES_PER_TASK: usize = 1 << 10;

/// A data line read and not yet converted.
struct Pending {
    /// 1-based data row.
    row: usize,
    /// Physical line number.
    line: usize,
    /// Where its bytes are in the batch; `None` for a line over the length limit.
    bytes: Option<std::ops::Range<usize>>,
}

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

    let (layout, splitter) = loop {
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

    let delimiter = splitter.delimiter();
    drop(splitter);
    let mut lines = Vec::new();
    let mut skipped = Vec::new();
    let mut skipped_total = 0;
    let mut medium_assumed = false;
    let mut row = 0;
    let mut batch: Vec<Pending> = Vec::with_capacity(LINES_PER_BATCH);
    let mut bytes: Vec<u8> = Vec::new();
    let mut finished = false;
    while !finished {
        // Read a batch of data lines (sequential: the input is one stream); an I/O
        // error is reported after the rows before it, as a line-by-line reader would.
        batch.clear();
        bytes.clear();
        let mut read_error = None;
        while batch.len() < LINES_PER_BATCH {
            let next = match physical.next_line(&mut buf, options.skip_bad) {
                Ok(next) => next,
                Err(error) => {
                    read_error = Some(io_error(source, physical.number() + 1, error));
                    break;
                }
            };
            let line = physical.number();
            match next {
                Next::End => {
                    finished = true;
                    break;
                }
                Next::Line if is_blank_or_comment(&buf) => {}
                Next::TooLong => {
                    row += 1;
                    batch.push(Pending {
                        row,
                        line,
                        bytes: None,
                    });
                    if !options.skip_bad {
                        // Reading stopped inside the line: nothing after it is read.
                        break;
                    }
                }
                Next::Line => {
                    row += 1;
                    let start = bytes.len();
                    bytes.extend_from_slice(&buf);
                    batch.push(Pending {
                        row,
                        line,
                        bytes: Some(start..bytes.len()),
                    });
                }
            }
        }
        // Convert the batch on every core, in order.
        let outcomes: Vec<Result<ConvertedRow, RowError>> = batch
            .par_iter()
            .with_min_len(LINES_PER_TASK)
            .map_init(
                || Splitter::new(delimiter),
                |splitter, pending| {
                    let limit = options.max_line_bytes;
                    let range = pending
                        .bytes
                        .clone()
                        .ok_or((None, LineProblem::TooLong { limit }))?;
                    let text = delimiter
                        .text_of(bytes.get(range).unwrap_or_default())
                        .ok_or((None, LineProblem::InvalidUtf8))?;
                    let fields = splitter.split(text).map_err(|problem| (None, problem))?;
                    convert_row(&fields, &layout, options, pending.row, pending.line)
                },
            )
            .collect();
        for (pending, outcome) in batch.iter().zip(outcomes) {
            match outcome {
                Ok(converted) => {
                    medium_assumed |= converted.medium_assumed;
                    lines.push(converted.line);
                }
                Err((column, problem)) => {
                    let mut location = Location::line(source, pending.line);
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
        if let Some(error) = read_error {
            return Err(error);
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
