//! CSV documents that open with their description as `#` comment lines.

/// A CSV document: each line of `description` as a `# ` comment line, then the
/// `header` and the `rows`, every line ended by `\n`. Fields are quoted where CSV
/// needs it.
pub(super) fn csv_document<H, R>(
    description: &[String],
    header: H,
    rows: impl IntoIterator<Item = R>,
) -> Vec<u8>
where
    H: IntoIterator,
    H::Item: AsRef<[u8]>,
    R: IntoIterator,
    R::Item: AsRef<[u8]>,
{
    let mut out = Vec::new();
    for line in description {
        out.extend_from_slice(b"# ");
        out.extend_from_slice(line.as_bytes());
        out.push(b'\n');
    }
    let mut writer = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(out);
    // Writing to a Vec cannot fail.
    let _ = writer.write_record(header);
    for row in rows {
        let _ = writer.write_record(row);
    }
    writer
        .into_inner()
        .unwrap_or_else(|e| e.into_inner().get_ref().clone())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn description_header_and_rows() {
        let text = csv_document(&["a run".to_string()], ["x", "y"], [["1", "a,b"]]);
        assert_eq!(
            String::from_utf8(text).unwrap(),
            "# a run\nx,y\n1,\"a,b\"\n"
        );
    }
}
