//! Physical lines of a text input, one at a time, numbered, with a bound on their
//! length.
//!
//! Written by hand because `BufRead::read_until` has no length limit: a file without
//! line ends would be read whole into memory before anything could be said about it.

use std::io::{self, BufRead};

/// The UTF-8 byte-order mark, skipped at the start of the input.
const BOM: &[u8] = b"\xEF\xBB\xBF";

/// What [`PhysicalLines::next_line`] found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Next {
    /// A line, now in the buffer without its line end.
    Line,
    /// A line longer than the limit; the buffer is empty.
    TooLong,
    /// The end of the input.
    End,
}

/// Reads an input line by line, accepting `\n` and `\r\n` line ends.
pub(crate) struct PhysicalLines<R> {
    inner: R,
    number: usize,
    max_bytes: usize,
}

impl<R: BufRead> PhysicalLines<R> {
    /// Lines of `inner`, each at most `max_bytes` long without its line end.
    pub(crate) fn new(inner: R, max_bytes: usize) -> Self {
        PhysicalLines {
            inner,
            number: 0,
            max_bytes,
        }
    }

    /// 1-based number of the line last read (0 before the first).
    pub(crate) fn number(&self) -> usize {
        self.number
    }

    /// Read the next line into `buf` (cleared first), without its line end; a
    /// byte-order mark at the start of line 1 is dropped.
    ///
    /// A line longer than the limit gives [`Next::TooLong`]. With
    /// `discard_overlong` the rest of it is read and thrown away, so that the next
    /// call reads the next line; without, reading stops where the limit was passed
    /// (the caller is expected to give up).
    pub(crate) fn next_line(
        &mut self,
        buf: &mut Vec<u8>,
        discard_overlong: bool,
    ) -> io::Result<Next> {
        buf.clear();
        let mut read_any = false;
        let mut too_long = false;
        loop {
            let available = match self.inner.fill_buf() {
                Ok(available) => available,
                Err(error) if error.kind() == io::ErrorKind::Interrupted => continue,
                Err(error) => return Err(error),
            };
            if available.is_empty() {
                break;
            }
            read_any = true;
            let newline = available.iter().position(|&byte| byte == b'\n');
            let content = newline.unwrap_or(available.len());
            if !too_long {
                if buf.len() + content > self.max_bytes {
                    too_long = true;
                    buf.clear();
                } else {
                    buf.extend_from_slice(available.get(..content).unwrap_or_default());
                }
            }
            let consumed = newline.map_or(available.len(), |at| at + 1);
            self.inner.consume(consumed);
            if newline.is_some() || (too_long && !discard_overlong) {
                break;
            }
        }
        if !read_any {
            return Ok(Next::End);
        }
        self.number += 1;
        if too_long {
            return Ok(Next::TooLong);
        }
        if buf.last() == Some(&b'\r') {
            buf.pop();
        }
        if self.number == 1 && buf.starts_with(BOM) {
            buf.drain(..BOM.len());
        }
        Ok(Next::Line)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Read;

    fn all_lines(input: &[u8], max: usize) -> Vec<(Next, Vec<u8>)> {
        let mut reader = PhysicalLines::new(input, max);
        let mut buf = Vec::new();
        let mut out = Vec::new();
        loop {
            let next = reader.next_line(&mut buf, true).unwrap();
            if next == Next::End {
                return out;
            }
            out.push((next, buf.clone()));
        }
    }

    #[test]
    fn splits_lf_and_crlf_and_drops_the_bom() {
        let lines = all_lines(b"\xEF\xBB\xBFa,b\r\n\r\nc\nd", 100);
        let expect: Vec<(Next, Vec<u8>)> = vec![
            (Next::Line, b"a,b".to_vec()),
            (Next::Line, b"".to_vec()),
            (Next::Line, b"c".to_vec()),
            (Next::Line, b"d".to_vec()),
        ];
        assert_eq!(lines, expect);
    }

    #[test]
    fn overlong_lines_are_discarded_and_counted() {
        // A small BufReader capacity makes the long line span several buffers.
        let input = b"short\n0123456789abcdef\nnext\n";
        let reader = io::BufReader::with_capacity(4, &input[..]);
        let mut lines = PhysicalLines::new(reader, 8);
        let mut buf = Vec::new();
        assert_eq!(lines.next_line(&mut buf, true).unwrap(), Next::Line);
        assert_eq!(lines.next_line(&mut buf, true).unwrap(), Next::TooLong);
        assert_eq!(lines.number(), 2);
        assert_eq!(lines.next_line(&mut buf, true).unwrap(), Next::Line);
        assert_eq!((buf.as_slice(), lines.number()), (&b"next"[..], 3));
        assert_eq!(lines.next_line(&mut buf, true).unwrap(), Next::End);
    }

    #[test]
    fn without_discarding_an_overlong_line_stops_reading_early() {
        let mut input = io::repeat(b'x').take(100_000_000);
        let mut lines = PhysicalLines::new(io::BufReader::new(&mut input), 1000);
        let mut buf = Vec::new();
        assert_eq!(lines.next_line(&mut buf, false).unwrap(), Next::TooLong);
        // Only a few kilobytes were taken from the 100 MB source.
        assert!(input.limit() > 99_000_000);
    }
}
