//! The assign CSV, written row by row as it is formatted.

use std::io::{self, Write};

use super::AssignReport;
use super::assign_rows::{Rendered, Row, given_parts};
use super::digits::{push_fixed, push_integer, push_shortest, push_uncertainty, push_wavenumber};

/// How one column is written: the field of a row, appended to the buffer (text
/// fields quoted where CSV needs it).
type WriteField = fn(&Row<'_>, &mut Vec<u8>);

/// One column of the CSV: its name and how its field is written.
struct Column {
    name: &'static str,
    write: WriteField,
}

/// The columns, in order: the one place that says what each column holds and how
/// it is written (numbers to the digits they carry, see [`super::digits`]). Their
/// names are [`crate::assign::ASSIGN_COLUMNS`], which the reader knows; a test checks that the two
/// lists agree.
const COLUMNS: [Column; 32] = [
    Column {
        name: "line",
        write: |r, out| push_integer(out, r.observed.row),
    },
    Column {
        name: "given_value",
        write: |r, out| push_shortest(out, given_parts(&r.observed.given).0),
    },
    Column {
        name: "given_unit",
        write: |r, out| out.extend_from_slice(given_parts(&r.observed.given).1.as_bytes()),
    },
    Column {
        name: "given_medium",
        write: |r, out| {
            let medium = given_parts(&r.observed.given).2.unwrap_or("");
            out.extend_from_slice(medium.as_bytes());
        },
    },
    Column {
        name: "observed_wavenumber_cm1",
        write: |r, out| push_wavenumber(out, r.observed.wavenumber_cm1),
    },
    Column {
        name: "observed_uncertainty_cm1",
        write: |r, out| push_uncertainty(out, r.observed.uncertainty_cm1),
    },
    Column {
        name: "observed_intensity",
        write: |r, out| {
            if let Some(intensity) = r.observed.intensity {
                push_shortest(out, intensity);
            }
        },
    },
    Column {
        name: "rank",
        write: |r, out| {
            if let Some(rank) = r.rank {
                push_integer(out, rank);
            }
        },
    },
    Column {
        name: "species",
        write: |r, out| candidate_text(r, out, |c| &c.lower.species),
    },
    Column {
        name: "lower_configuration",
        write: |r, out| candidate_text(r, out, |c| &c.lower.configuration),
    },
    Column {
        name: "lower_term",
        write: |r, out| candidate_text(r, out, |c| &c.lower.term),
    },
    Column {
        name: "lower_J",
        write: |r, out| candidate_text(r, out, |c| &c.lower.j),
    },
    Column {
        name: "lower_energy_cm1",
        write: |r, out| candidate_bytes(r, out, |c| &c.lower.energy_text),
    },
    Column {
        name: "upper_configuration",
        write: |r, out| candidate_text(r, out, |c| &c.upper.configuration),
    },
    Column {
        name: "upper_term",
        write: |r, out| candidate_text(r, out, |c| &c.upper.term),
    },
    Column {
        name: "upper_J",
        write: |r, out| candidate_text(r, out, |c| &c.upper.j),
    },
    Column {
        name: "upper_energy_cm1",
        write: |r, out| candidate_bytes(r, out, |c| &c.upper.energy_text),
    },
    Column {
        name: "predicted_wavenumber_cm1",
        write: |r, out| candidate_wavenumber(r, out, |c| c.line.wavenumber_cm1),
    },
    Column {
        name: "predicted_uncertainty_cm1",
        write: |r, out| candidate_uncertainty(r, out, |c| c.predicted_uncertainty_cm1()),
    },
    Column {
        name: "predicted_in_given_unit",
        write: |r, out| {
            if let Some((value, decimals)) = r.predicted_in_given_unit() {
                push_fixed(out, value, decimals);
            }
        },
    },
    Column {
        name: "predicted_strength",
        write: |r, out| {
            if let Some(strength) = r.candidate.and_then(|c| c.line.relative_strength) {
                push_uncertainty(out, strength);
            }
        },
    },
    Column {
        name: "ga_s1",
        write: |r, out| {
            // The published value as printed, multiplied by g_k: all its digits.
            if let Some(probability) = r.candidate.and_then(|c| c.line.transition_probability) {
                push_shortest(out, probability.ga_s1());
            }
        },
    },
    Column {
        name: "deviation_cm1",
        write: |r, out| candidate_wavenumber(r, out, |c| c.candidate.deviation_cm1),
    },
    Column {
        name: "combined_uncertainty_cm1",
        write: |r, out| candidate_uncertainty(r, out, |c| c.candidate.combined_uncertainty_cm1),
    },
    Column {
        name: "deviation_sigma",
        write: |r, out| candidate_uncertainty(r, out, |c| c.candidate.deviation_sigma),
    },
    Column {
        name: "chance_probability",
        write: |r, out| candidate_uncertainty(r, out, |c| c.candidate.chance_probability),
    },
    Column {
        name: "selection_rules",
        write: |r, out| {
            if let Some(c) = r.candidate {
                out.extend_from_slice(c.line.rules.name().as_bytes());
            }
        },
    },
    Column {
        name: "flags",
        write: |r, out| {
            for (i, flag) in r.flags().enumerate() {
                if i > 0 {
                    out.push(b';');
                }
                out.extend_from_slice(flag.name().as_bytes());
            }
        },
    },
    Column {
        name: "observed_to_predicted_intensity",
        write: |r, out| {
            if let Some(v) = evidence(r).and_then(|e| e.observed_to_predicted_intensity) {
                push_uncertainty(out, v);
            }
        },
    },
    Column {
        name: "predicted_relative_intensity",
        write: |r, out| {
            if let Some(v) = evidence(r).and_then(|e| e.predicted_relative_intensity) {
                push_uncertainty(out, v);
            }
        },
    },
    Column {
        name: "log_likelihood",
        write: |r, out| {
            if let Some(e) = evidence(r) {
                push_fixed(out, e.log_likelihood, 3);
            }
        },
    },
    Column {
        name: "species_verdict",
        write: |r, out| {
            if let Some(e) = evidence(r) {
                out.extend_from_slice(e.species_verdict.name().as_bytes());
            }
        },
    },
];

fn evidence<'a>(r: &Row<'a>) -> Option<&'a crate::assign::CandidateEvidence> {
    r.candidate.and_then(|c| c.candidate.evidence.as_ref())
}

type CandidateRow<'a> = super::assign_rows::CandidateRow<'a>;

fn candidate_text(
    r: &Row<'_>,
    out: &mut Vec<u8>,
    text: for<'c> fn(&'c CandidateRow<'c>) -> &'c str,
) {
    if let Some(c) = &r.candidate {
        push_field(out, text(c));
    }
}

fn candidate_bytes(
    r: &Row<'_>,
    out: &mut Vec<u8>,
    bytes: for<'c> fn(&'c CandidateRow<'c>) -> &'c [u8],
) {
    if let Some(c) = &r.candidate {
        out.extend_from_slice(bytes(c));
    }
}

fn candidate_wavenumber(r: &Row<'_>, out: &mut Vec<u8>, value: fn(&CandidateRow<'_>) -> f64) {
    if let Some(c) = &r.candidate {
        push_wavenumber(out, value(c));
    }
}

fn candidate_uncertainty(r: &Row<'_>, out: &mut Vec<u8>, value: fn(&CandidateRow<'_>) -> f64) {
    if let Some(c) = &r.candidate {
        push_uncertainty(out, value(c));
    }
}

/// Append a text field, quoted when it holds a comma, a quote or a line end (the
/// quotes inside doubled), as RFC 4180 has it.
pub(super) fn push_field(out: &mut Vec<u8>, text: &str) {
    if !text
        .bytes()
        .any(|b| matches!(b, b',' | b'"' | b'\n' | b'\r'))
    {
        out.extend_from_slice(text.as_bytes());
        return;
    }
    out.push(b'"');
    for byte in text.bytes() {
        if byte == b'"' {
            out.push(b'"');
        }
        out.push(byte);
    }
    out.push(b'"');
}

/// Write the CSV of an assign run to `out`: the description as `#` comment lines,
/// the header ([`crate::assign::ASSIGN_COLUMNS`] and the pass-through columns), then one row per
/// candidate (one for an unassigned line), by line in input order, then rank.
/// [`crate::assign::read_assignments`] reads it back.
pub fn write_assign_csv<W: Write + ?Sized>(
    report: &AssignReport<'_>,
    out: &mut W,
) -> io::Result<()> {
    let mut head = Vec::new();
    // The species summary is part of the description (its last lines).
    for line in report.description() {
        head.extend_from_slice(b"# ");
        head.extend_from_slice(line.as_bytes());
        head.push(b'\n');
    }
    let extra_columns = &report.list.extra_columns;
    let names = COLUMNS
        .iter()
        .map(|c| c.name)
        .chain(extra_columns.iter().map(String::as_str));
    for (i, name) in names.enumerate() {
        if i > 0 {
            head.push(b',');
        }
        push_field(&mut head, name);
    }
    head.push(b'\n');
    out.write_all(&head)?;
    let extra_count = extra_columns.len();
    let rendered = Rendered::new(report);
    rendered.write_lines(out, |rendered, assignment, buffer| {
        for row in rendered.rows_of(assignment) {
            for (i, column) in COLUMNS.iter().enumerate() {
                if i > 0 {
                    buffer.push(b',');
                }
                (column.write)(&row, buffer);
            }
            // A line with another number of pass-through fields than the header
            // is padded or cut.
            for i in 0..extra_count {
                buffer.push(b',');
                push_field(buffer, row.observed.extra.get(i).map_or("", String::as_str));
            }
            buffer.push(b'\n');
        }
    })
}

/// [`write_assign_csv`] into memory.
pub fn assign_csv(report: &AssignReport<'_>) -> Vec<u8> {
    let mut out = Vec::new();
    // Writing to a Vec cannot fail.
    let _ = write_assign_csv(report, &mut out);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assign::ASSIGN_COLUMNS;

    #[test]
    fn the_writer_has_the_columns_the_reader_knows() {
        let names: Vec<&str> = COLUMNS.iter().map(|c| c.name).collect();
        assert_eq!(names, ASSIGN_COLUMNS);
    }

    #[test]
    fn fields_are_quoted_where_csv_needs_it() {
        // RFC 4180, section 2: fields with commas, quotes or line breaks are
        // enclosed in double quotes, and a quote inside is doubled.
        let mut out = Vec::new();
        push_field(&mut out, "a,b");
        out.push(b' ');
        push_field(&mut out, "say \"x\"");
        out.push(b' ');
        push_field(&mut out, "plain");
        assert_eq!(
            String::from_utf8(out).unwrap(),
            "\"a,b\" \"say \"\"x\"\"\" plain"
        );
    }
}
