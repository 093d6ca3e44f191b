//! The assign CSV.

use super::AssignReport;
use super::csv_document::csv_document;
use crate::assign::ASSIGN_COLUMNS;

/// The CSV of an assign run: the description as `#` comment lines, the header
/// ([`ASSIGN_COLUMNS`] and the pass-through columns), then one row per record.
/// [`crate::assign::read_assignments`] reads it back.
pub fn assign_csv(report: &AssignReport<'_>) -> Vec<u8> {
    let header: Vec<&str> = ASSIGN_COLUMNS
        .iter()
        .copied()
        .chain(report.extra_columns.iter().map(String::as_str))
        .collect();
    // A row of another length than the header (a record with the wrong number of
    // pass-through fields) is padded or cut.
    let width = header.len();
    let rows = report.records.iter().map(|record| {
        let mut fields = record.csv_fields();
        fields.resize(width, String::new());
        fields
    });
    csv_document(&report.description(), &header, rows)
}
