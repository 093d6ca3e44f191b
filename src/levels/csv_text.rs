//! Reading a small CSV document whole, with `#` comment lines, and telling the line
//! of each record. Shared by the readers of level tables, assign CSVs and
//! classified lines.
//!
//! Hand-written because the `csv` crate's own line count skips blank and comment
//! lines, while messages must name the line of the file.

use std::io::{BufRead, Read};

/// Why a text could not be read.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum TextError {
    /// An I/O error, as text.
    Io(String),
    /// More bytes than allowed.
    TooLarge {
        /// The limit in bytes.
        max_bytes: u64,
    },
    /// Invalid UTF-8 on this 1-based line.
    Utf8 {
        /// The line.
        line: usize,
    },
}

impl TextError {
    /// 1-based line of the problem, 0 when it concerns the whole source.
    pub(crate) fn line(&self) -> usize {
        match self {
            TextError::Utf8 { line } => *line,
            _ => 0,
        }
    }

    /// What went wrong, for a message.
    pub(crate) fn message(&self, what: &str) -> String {
        match self {
            TextError::Io(message) => message.clone(),
            TextError::TooLarge { max_bytes } => {
                format!("larger than {} MiB, too large for {what}", max_bytes >> 20)
            }
            TextError::Utf8 { .. } => "the text is not valid UTF-8".into(),
        }
    }
}

/// The whole text (at most `max_bytes`), a leading byte-order mark removed, with
/// comment lines (first non-blank character `#`) made blank so that they keep their
/// place in the line count.
pub(crate) fn read_text(reader: &mut impl BufRead, max_bytes: u64) -> Result<String, TextError> {
    let mut bytes = Vec::new();
    reader
        .take(max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| TextError::Io(e.to_string()))?;
    if bytes.len() as u64 > max_bytes {
        return Err(TextError::TooLarge { max_bytes });
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        let valid = e.utf8_error().valid_up_to();
        let newlines = e.as_bytes().get(..valid).unwrap_or_default();
        TextError::Utf8 {
            line: 1 + newlines.iter().filter(|&&b| b == b'\n').count(),
        }
    })?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    Ok(text
        .split_inclusive('\n')
        .map(|line| {
            if !line.trim_start().starts_with('#') {
                line
            } else if line.ends_with('\n') {
                "\n"
            } else {
                ""
            }
        })
        .collect())
}

/// Turns the CSV reader's positions into 1-based line numbers of the file. A
/// record's position is where the reader started looking for it, before the blank
/// lines it skipped, so those are skipped here too.
pub(crate) struct LineStarts<'t> {
    text: &'t [u8],
    starts: Vec<u64>,
}

impl<'t> LineStarts<'t> {
    /// Index the lines of `text`.
    pub(crate) fn new(text: &'t str) -> LineStarts<'t> {
        let starts = std::iter::once(0)
            .chain(text.match_indices('\n').map(|(i, _)| i as u64 + 1))
            .collect();
        LineStarts {
            text: text.as_bytes(),
            starts,
        }
    }

    /// The line of the first non-blank byte at or after `byte`.
    pub(crate) fn line_of(&self, byte: u64) -> usize {
        let rest = usize::try_from(byte)
            .ok()
            .and_then(|b| self.text.get(b..))
            .unwrap_or_default();
        let skipped = rest
            .iter()
            .take_while(|b| matches!(b, b'\n' | b'\r'))
            .count() as u64;
        self.starts
            .partition_point(|&start| start <= byte + skipped)
    }

    /// The line of a record read from the indexed text.
    pub(crate) fn line_of_record(&self, record: &csv::StringRecord) -> usize {
        record.position().map_or(0, |p| self.line_of(p.byte()))
    }
}

/// A CSV reader over a text from [`read_text`]: no header handling, fields trimmed,
/// rows of any length (the callers check the count and say where).
pub(crate) fn csv_reader(text: &str) -> csv::Reader<&[u8]> {
    csv::ReaderBuilder::new()
        .flexible(true)
        .trim(csv::Trim::All)
        .has_headers(false)
        .from_reader(text.as_bytes())
}

/// Why a CSV document could not be read, for the caller to turn into its own error
/// (naming the source and what kind of document it expected).
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum CsvError {
    /// The text or a record could not be read (I/O, bad UTF-8, too large).
    Unreadable {
        /// 1-based line, 0 when it concerns the whole source.
        line: usize,
        /// What went wrong.
        message: String,
    },
    /// No header line.
    Empty,
    /// A row has a different number of fields from the header.
    FieldCount {
        /// 1-based line of the row.
        line: usize,
        /// Fields in the header.
        expected: usize,
        /// Fields in the row.
        found: usize,
    },
}

impl CsvError {
    /// 1-based line of the problem, 0 when it concerns the whole source.
    pub(crate) fn line(&self) -> usize {
        match self {
            CsvError::Unreadable { line, .. } | CsvError::FieldCount { line, .. } => *line,
            CsvError::Empty => 0,
        }
    }
}

/// [`read_text`], with its error as [`CsvError::Unreadable`]; `what` names the kind
/// of document for the message (e.g. `a level table`).
pub(crate) fn read_csv_text(
    reader: &mut impl BufRead,
    max_bytes: u64,
    what: &str,
) -> Result<String, CsvError> {
    read_text(reader, max_bytes).map_err(|e| CsvError::Unreadable {
        line: e.line(),
        message: e.message(what),
    })
}

/// The header line of a CSV document.
pub(crate) struct CsvHeader {
    /// Its fields.
    pub(crate) fields: csv::StringRecord,
    /// Its 1-based line.
    pub(crate) line: usize,
}

/// The header of a text from [`read_text`] and an iterator over the rows after it:
/// each row with its 1-based line, blank rows left out, a row whose field count
/// differs from the header's an error ([`CsvError::FieldCount`]).
pub(crate) fn csv_rows(text: &str) -> Result<(CsvHeader, CsvRows<'_>), CsvError> {
    let mut rows = CsvRows {
        lines: LineStarts::new(text),
        records: csv_reader(text).into_records(),
        width: 0,
    };
    let fields = match rows.records.next() {
        Some(record) => record.map_err(|e| rows.unreadable(&e))?,
        None => return Err(CsvError::Empty),
    };
    let line = rows.lines.line_of_record(&fields);
    rows.width = fields.len();
    Ok((CsvHeader { fields, line }, rows))
}

/// The rows after the header, from [`csv_rows`].
pub(crate) struct CsvRows<'t> {
    lines: LineStarts<'t>,
    records: csv::StringRecordsIntoIter<&'t [u8]>,
    /// Fields in the header.
    width: usize,
}

impl CsvRows<'_> {
    /// A reader's error, located.
    fn unreadable(&self, error: &csv::Error) -> CsvError {
        CsvError::Unreadable {
            line: error.position().map_or(0, |p| self.lines.line_of(p.byte())),
            message: error.to_string(),
        }
    }
}

impl Iterator for CsvRows<'_> {
    type Item = Result<(usize, csv::StringRecord), CsvError>;

    fn next(&mut self) -> Option<Self::Item> {
        loop {
            let record = match self.records.next()? {
                Ok(record) => record,
                Err(e) => return Some(Err(self.unreadable(&e))),
            };
            if record.iter().all(str::is_empty) {
                continue; // a blank line
            }
            let line = self.lines.line_of_record(&record);
            if record.len() != self.width {
                return Some(Err(CsvError::FieldCount {
                    line,
                    expected: self.width,
                    found: record.len(),
                }));
            }
            return Some(Ok((line, record)));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn comment_and_blank_lines_keep_their_numbers() {
        let text = read_text(&mut "# c\na,b\n\n  # c\n1,2\n".as_bytes(), 100).unwrap();
        let lines = LineStarts::new(&text);
        let mut reader = csv_reader(&text);
        let found: Vec<usize> = reader
            .records()
            .map(|r| lines.line_of_record(&r.unwrap()))
            .collect();
        assert_eq!(found, vec![2, 5]);
    }

    #[test]
    fn rows_come_with_their_lines_and_field_count_checked() {
        let text = read_csv_text(&mut "# c\na,b\n\n1,2\n3\n".as_bytes(), 100, "x").unwrap();
        let (header, rows) = csv_rows(&text).unwrap();
        assert_eq!((header.fields.len(), header.line), (2, 2));
        let rows: Vec<_> = rows
            .map(|r| r.map(|(line, row)| (line, row.len())))
            .collect();
        assert_eq!(
            rows,
            vec![
                Ok((4, 2)),
                Err(CsvError::FieldCount {
                    line: 5,
                    expected: 2,
                    found: 1
                })
            ]
        );
        assert_eq!(csv_rows("\n\n").err(), Some(CsvError::Empty));
        assert_eq!(
            read_csv_text(&mut "abcdef".as_bytes(), 3, "x"),
            Err(CsvError::Unreadable {
                line: 0,
                message: "larger than 0 MiB, too large for x".into()
            })
        );
    }

    #[test]
    fn limits_size_and_reports_bad_utf8_line() {
        assert_eq!(
            read_text(&mut "abcdef".as_bytes(), 3),
            Err(TextError::TooLarge { max_bytes: 3 })
        );
        assert_eq!(
            read_text(&mut b"a\nb\n\xff".as_slice(), 100),
            Err(TextError::Utf8 { line: 3 })
        );
        assert_eq!(
            read_text(&mut "\u{feff}a,b".as_bytes(), 100).unwrap(),
            "a,b"
        );
    }
}
