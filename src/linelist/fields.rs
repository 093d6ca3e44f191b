//! Splitting one line into fields: CSV, TSV or runs of whitespace.
//!
//! CSV and TSV lines go through `csv_core`, the allocation-free parser under the
//! `csv` crate, fed one physical line at a time: the `csv` crate's own reader owns
//! the whole input, so it could not share the line numbering, the comment rules,
//! the whitespace format and the line-length bound that [`super::physical`] gives
//! every format.

use std::ops::Range;

use csv_core::{ReadRecordResult, Reader, ReaderBuilder, Terminator};

use super::error::LineProblem;

/// How the columns of a line list are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Delimiter {
    /// Commas, with `"` quoting.
    Comma,
    /// Tabs, with `"` quoting.
    Tab,
    /// Runs of spaces and tabs; `#` starts a trailing comment.
    Whitespace,
}

impl Delimiter {
    /// The delimiter of a list whose header line is `header`: a comma if there is one
    /// before any `#`, else a tab if there is one, else whitespace. (Looking only
    /// before the `#` keeps a trailing comment of a whitespace header from deciding.)
    pub(crate) fn detect(header: &[u8]) -> Delimiter {
        let header = before_comment(header);
        if header.contains(&b',') {
            Delimiter::Comma
        } else if header.contains(&b'\t') {
            Delimiter::Tab
        } else {
            Delimiter::Whitespace
        }
    }
}

impl Delimiter {
    /// The text of a line that this format reads: in the whitespace format the part
    /// before any `#` (so a trailing comment need not be UTF-8), else the whole line.
    /// `None` if that part is not valid UTF-8.
    pub(crate) fn text_of(self, line: &[u8]) -> Option<&str> {
        let data = match self {
            Delimiter::Whitespace => before_comment(line),
            Delimiter::Comma | Delimiter::Tab => line,
        };
        std::str::from_utf8(data).ok()
    }
}

/// The bytes before the first `#` (all of them if there is none). The byte `#` never
/// occurs inside a multi-byte UTF-8 character, so this cuts between characters.
fn before_comment(line: &[u8]) -> &[u8] {
    line.iter()
        .position(|&byte| byte == b'#')
        .and_then(|at| line.get(..at))
        .unwrap_or(line)
}

/// The fields of one line, trimmed.
pub(crate) struct Fields<'a> {
    text: &'a str,
    ranges: &'a [Range<usize>],
}

impl<'a> Fields<'a> {
    /// Number of fields.
    pub(crate) fn len(&self) -> usize {
        self.ranges.len()
    }

    /// Field `index` (0-based) without surrounding whitespace; empty if there is no
    /// such field.
    pub(crate) fn get(&self, index: usize) -> &'a str {
        self.ranges
            .get(index)
            .and_then(|range| self.text.get(range.clone()))
            .unwrap_or_default()
            .trim()
    }
}

/// Splits lines into fields, reusing its buffers from line to line.
pub(crate) struct Splitter {
    delimiter: Delimiter,
    csv: Reader,
    unescaped: Vec<u8>,
    ends: Vec<usize>,
    ranges: Vec<Range<usize>>,
}

impl Splitter {
    /// A splitter for lines separated by `delimiter`.
    pub(crate) fn new(delimiter: Delimiter) -> Self {
        let byte = match delimiter {
            Delimiter::Tab => b'\t',
            Delimiter::Comma | Delimiter::Whitespace => b',',
        };
        let csv = ReaderBuilder::new()
            .delimiter(byte)
            // Only `\n` ends a record: a lone `\r` inside a line is data.
            .terminator(Terminator::Any(b'\n'))
            .build();
        Splitter {
            delimiter,
            csv,
            unescaped: Vec::new(),
            ends: Vec::new(),
            ranges: Vec::new(),
        }
    }

    /// The format this splitter reads.
    pub(crate) fn delimiter(&self) -> Delimiter {
        self.delimiter
    }

    /// Split `line` (one physical line, without its line end).
    pub(crate) fn split<'a>(&'a mut self, line: &'a str) -> Result<Fields<'a>, LineProblem> {
        self.ranges.clear();
        match self.delimiter {
            Delimiter::Whitespace => {
                let data = line.split_once('#').map_or(line, |(data, _comment)| data);
                let mut start = None;
                for (at, byte) in data.bytes().enumerate() {
                    match (byte.is_ascii_whitespace(), start) {
                        (false, None) => start = Some(at),
                        (true, Some(from)) => {
                            self.ranges.push(from..at);
                            start = None;
                        }
                        _ => {}
                    }
                }
                if let Some(from) = start {
                    self.ranges.push(from..data.len());
                }
                Ok(Fields {
                    text: data,
                    ranges: &self.ranges,
                })
            }
            Delimiter::Comma | Delimiter::Tab => {
                let length = self.split_delimited(line.as_bytes())?;
                let text = self
                    .unescaped
                    .get(..length)
                    .and_then(|bytes| std::str::from_utf8(bytes).ok())
                    // Unescaping valid UTF-8 only removes ASCII quotes, so this holds.
                    .ok_or(LineProblem::InvalidUtf8)?;
                Ok(Fields {
                    text,
                    ranges: &self.ranges,
                })
            }
        }
    }

    /// Run the CSV parser over one line followed by a `\n`; fills `unescaped` and
    /// `ranges` and returns the length of the unescaped text.
    fn split_delimited(&mut self, line: &[u8]) -> Result<usize, LineProblem> {
        // Unescaping never makes a record longer than its input.
        if self.unescaped.len() < line.len() + 1 {
            self.unescaped.resize(line.len() + 1, 0);
        }
        if self.ends.is_empty() {
            self.ends.resize(16, 0);
        }
        let (mut written, mut fields) = (0, 0);
        let mut input = line;
        let mut newline_fed = false;
        loop {
            let output = self.unescaped.get_mut(written..).unwrap_or_default();
            let ends = self.ends.get_mut(fields..).unwrap_or_default();
            let (result, read, wrote, ended) = self.csv.read_record(input, output, ends);
            input = input.get(read..).unwrap_or_default();
            written += wrote;
            fields += ended;
            match result {
                ReadRecordResult::Record => break,
                ReadRecordResult::InputEmpty if !newline_fed => {
                    input = b"\n";
                    newline_fed = true;
                }
                ReadRecordResult::OutputEndsFull => {
                    let more = self.ends.len() * 2;
                    self.ends.resize(more, 0);
                }
                ReadRecordResult::OutputFull => {
                    let more = self.unescaped.len() * 2;
                    self.unescaped.resize(more, 0);
                }
                // The line end was taken into a quoted field.
                ReadRecordResult::InputEmpty | ReadRecordResult::End => {
                    self.csv.reset();
                    return Err(LineProblem::UnterminatedQuote);
                }
            }
        }
        let mut start = 0;
        for &end in self.ends.get(..fields).unwrap_or_default() {
            self.ranges.push(start..end);
            start = end;
        }
        Ok(written)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn split(delimiter: Delimiter, line: &str) -> Result<Vec<String>, LineProblem> {
        let mut splitter = Splitter::new(delimiter);
        let fields = splitter.split(line)?;
        Ok((0..fields.len())
            .map(|i| fields.get(i).to_string())
            .collect())
    }

    #[test]
    fn detects_the_delimiter_from_the_header() {
        assert_eq!(Delimiter::detect(b"a, b\tc"), Delimiter::Comma);
        assert_eq!(Delimiter::detect(b"a\tb c"), Delimiter::Tab);
        assert_eq!(Delimiter::detect(b"a  b"), Delimiter::Whitespace);
        assert_eq!(Delimiter::detect(b"a b # x, y"), Delimiter::Whitespace);
    }

    #[test]
    fn csv_fields_are_unquoted_and_trimmed() {
        assert_eq!(
            split(Delimiter::Comma, r#" 1.5 ,"a, ""b""",,x"#).unwrap(),
            vec!["1.5", r#"a, "b""#, "", "x"]
        );
        assert_eq!(
            split(Delimiter::Tab, "1\t\"x\ty\"\t").unwrap(),
            vec!["1", "x\ty", ""]
        );
    }

    #[test]
    fn an_unclosed_quote_is_an_error_and_the_next_line_is_fine() {
        let mut splitter = Splitter::new(Delimiter::Comma);
        assert_eq!(
            splitter.split("1,\"open").err(),
            Some(LineProblem::UnterminatedQuote)
        );
        let fields = splitter.split("2,3").unwrap();
        assert_eq!((fields.len(), fields.get(0), fields.get(1)), (2, "2", "3"));
    }

    #[test]
    fn many_fields_grow_the_buffers() {
        let line = vec!["7"; 100].join(",");
        assert_eq!(split(Delimiter::Comma, &line).unwrap(), vec!["7"; 100]);
    }

    #[test]
    fn whitespace_fields_stop_at_a_comment() {
        assert_eq!(
            split(Delimiter::Whitespace, "  589.0\t 0.01  x # note 1 2").unwrap(),
            vec!["589.0", "0.01", "x"]
        );
        assert_eq!(split(Delimiter::Whitespace, "a#b").unwrap(), vec!["a"]);
    }
}
