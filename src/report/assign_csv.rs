//! The assign CSV.

use super::AssignReport;
use crate::assign::ASSIGN_COLUMNS;

/// The CSV of an assign run: the description as `#` comment lines, the header
/// ([`ASSIGN_COLUMNS`] and the pass-through columns), then one row per record.
/// [`crate::assign::read_assignments`] reads it back.
pub fn assign_csv(report: &AssignReport<'_>) -> Vec<u8> {
    let mut out = Vec::new();
    for line in report.description() {
        out.extend_from_slice(b"# ");
        out.extend_from_slice(line.as_bytes());
        out.push(b'\n');
    }
    let mut writer = csv::WriterBuilder::new()
        .flexible(false)
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(out);
    let header: Vec<&str> = ASSIGN_COLUMNS
        .iter()
        .copied()
        .chain(report.extra_columns.iter().map(String::as_str))
        .collect();
    // Writing to a Vec cannot fail; a row of another length than the header (a
    // record with the wrong number of pass-through fields) is padded or cut.
    let width = header.len();
    let _ = writer.write_record(&header);
    for record in report.records {
        let mut fields = record.csv_fields();
        fields.resize(width, String::new());
        let _ = writer.write_record(&fields);
    }
    writer
        .into_inner()
        .unwrap_or_else(|e| e.into_inner().get_ref().clone())
}
