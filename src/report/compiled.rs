//! The listing of the compiled spectra (`termsight assign --list-species`).

use comfy_table::{CellAlignment, LineStyle, Table, TableStyle};

use crate::levels::COMPILED_RANGE_NM;

/// One compiled spectrum, as the listing shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct CompiledSpectrum {
    /// The spectrum (`Ar II`).
    pub species: String,
    /// Levels in its table.
    pub levels: usize,
    /// E1 lines predicted between them within [`COMPILED_RANGE_NM`].
    pub lines: usize,
    /// Of those, lines with a published transition probability.
    pub lines_with_transition_probability: usize,
    /// Lowest level energy, cm⁻¹.
    pub lowest_level_cm1: f64,
    /// Highest level energy, cm⁻¹.
    pub highest_level_cm1: f64,
    /// File in `reference-levels/`.
    pub file: String,
    /// Citation of the source.
    pub source: String,
}

/// A table of the compiled spectra, one row each, with a header sentence and the
/// sources below it.
pub fn compiled_spectra_table(rows: &[CompiledSpectrum]) -> String {
    let mut table = Table::new();
    table
        .load_style(TableStyle::new().header_separator(LineStyle::none().fill('─').junction('─')))
        .set_header(vec![
            "spectrum",
            "levels",
            "lines",
            "with A",
            "levels from–to\ncm⁻¹",
            "file",
        ]);
    for row in rows {
        table.add_row(vec![
            row.species.clone(),
            row.levels.to_string(),
            row.lines.to_string(),
            row.lines_with_transition_probability.to_string(),
            format!("{:.0}–{:.0}", row.lowest_level_cm1, row.highest_level_cm1),
            format!("reference-levels/{}", row.file),
        ]);
    }
    for (index, column) in table.column_iter_mut().enumerate() {
        column.set_padding((u16::from(index > 0), 0));
        if (1..=4).contains(&index) {
            column.set_cell_alignment(CellAlignment::Right);
        }
    }
    let (shortest, longest) = COMPILED_RANGE_NM;
    let mut text = format!(
        "{} compiled spectra. Lines: E1 lines predicted (Ritz) between the levels, vacuum \
         wavelengths {shortest} nm to {longest} nm; with A: lines with a published transition \
         probability A_ki (shown as gA beside a candidate).\n\n",
        rows.len()
    );
    text.push_str(&table.trim_fmt());
    text.push_str("\n\nSources (reference-levels/SOURCES.md says more):\n");
    for row in rows {
        text.push_str(&format!("  {}: {}.\n", row.species, row.source));
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_row_per_spectrum_and_its_source() {
        let rows = vec![CompiledSpectrum {
            species: "He I".into(),
            levels: 101,
            lines: 600,
            lines_with_transition_probability: 244,
            lowest_level_cm1: 0.0,
            highest_level_cm1: 197_216.0,
            file: "HeI.csv".into(),
            source: "NIST ASD".into(),
        }];
        let text = compiled_spectra_table(&rows);
        assert!(text.starts_with("1 compiled spectra."), "{text}");
        assert!(text.contains("He I"), "{text}");
        assert!(text.contains("0–197216"), "{text}");
        assert!(text.contains("  He I: NIST ASD."), "{text}");
    }
}
