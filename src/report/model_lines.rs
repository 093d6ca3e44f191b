//! The outputs of `termsight lines`: the predicted E1 lines of a level model as a
//! terminal table, CSV or JSON.

use comfy_table::{CellAlignment, ContentArrangement, LineStyle, Table, TableStyle};
use serde::Serialize;

use super::csv_document::csv_document;
use super::significant;
use crate::levels::LevelLabel;
use crate::transitions::ModelSpectrum;
use crate::units::{AirFormula, Medium, air};

/// The columns of the `termsight lines` CSV, in order.
///
/// | column | meaning |
/// |---|---|
/// | `wavenumber_cm1` | vacuum wavenumber σ = E_upper − E_lower |
/// | `wavelength_nm`, `medium` | the wavelength, in air at and above 200 nm (vacuum wavelength) and in vacuum below, unless all are asked in vacuum |
/// | `lower_level`, `lower_configuration`, `lower_term`, `lower_J`, `lower_energy_cm1`, `lower_percent` | lower level: its number in the output of `termsight levels` (1 = lowest), its label, its energy on the model's own scale (as `termsight levels` prints it), and the share of the label's LS state in it |
/// | `upper_level`, `upper_configuration`, `upper_term`, `upper_J`, `upper_energy_cm1`, `upper_percent` | upper level |
/// | `strength_au` | line strength S, e²a₀² |
/// | `gf`, `log_gf` | weighted oscillator strength and its base-10 logarithm |
/// | `a_per_s` | Einstein A, s⁻¹ |
/// | `flags` | `;`-separated: `LS-allowed`, or `intercombination`, `L-forbidden`, `jump-forbidden`, `two-electron-jump` |
pub const LINE_COLUMNS: [&str; 20] = [
    "wavenumber_cm1",
    "wavelength_nm",
    "medium",
    "lower_level",
    "lower_configuration",
    "lower_term",
    "lower_J",
    "lower_energy_cm1",
    "lower_percent",
    "upper_level",
    "upper_configuration",
    "upper_term",
    "upper_J",
    "upper_energy_cm1",
    "upper_percent",
    "strength_au",
    "gf",
    "log_gf",
    "a_per_s",
    "flags",
];

/// Which lines to show and how to write wavelengths.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LineSelection {
    /// Shortest wavelength shown, nm, as printed (in its medium); `None`: no limit.
    pub from_nm: Option<f64>,
    /// Longest wavelength shown, nm, as printed; `None`: no limit.
    pub to_nm: Option<f64>,
    /// Smallest gf shown; `None`: every line.
    pub min_gf: Option<f64>,
    /// Write every wavelength in vacuum instead of following the convention.
    pub all_vacuum: bool,
    /// The air formula for wavelengths in air.
    pub air_formula: AirFormula,
}

/// One printed line.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LineRow {
    /// Vacuum wavenumber, cm⁻¹.
    pub wavenumber_cm1: f64,
    /// Wavelength, nm, in `medium`.
    pub wavelength_nm: f64,
    /// The medium of the wavelength.
    pub medium: Medium,
    /// Number of the lower level in `termsight levels` (1 = lowest).
    pub lower_level: usize,
    /// Lower level.
    #[serde(serialize_with = "as_text")]
    pub lower: LevelLabel,
    /// Its energy on the model's own scale, cm⁻¹.
    pub lower_energy_cm1: f64,
    /// The share of the lower label's LS state in the level, percent.
    pub lower_percent: f64,
    /// Number of the upper level in `termsight levels`.
    pub upper_level: usize,
    /// Upper level.
    #[serde(serialize_with = "as_text")]
    pub upper: LevelLabel,
    /// Its energy on the model's own scale, cm⁻¹.
    pub upper_energy_cm1: f64,
    /// The share of the upper label's LS state in the level, percent.
    pub upper_percent: f64,
    /// Line strength S, e²a₀².
    pub strength_au: f64,
    /// gf.
    pub gf: f64,
    /// log₁₀ gf (−∞ for a line with no strength: `-inf` in the CSV, null in JSON).
    pub log_gf: f64,
    /// Einstein A, s⁻¹.
    pub a_per_s: f64,
    /// Flag names.
    pub flags: Vec<&'static str>,
}

/// A dipole integral and its value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DipoleValue {
    /// Its name, `P(3s,3p)`.
    pub name: String,
    /// ⟨a|r|b⟩, bohr.
    pub value_bohr: f64,
}

/// A label as its text, `3s.3p 3P° 1`.
fn as_text<S: serde::Serializer>(label: &LevelLabel, serializer: S) -> Result<S::Ok, S::Error> {
    serializer.collect_str(label)
}

/// Everything the outputs of `termsight lines` show.
#[derive(Debug, Clone, Serialize)]
pub struct LinesReport {
    /// The spectrum, `Mg I`.
    pub species: String,
    /// The model file.
    pub model: String,
    /// Levels of the model.
    pub levels: usize,
    /// Lines of the model in all (before the selection).
    pub lines_in_model: usize,
    /// The dipole integrals used.
    pub dipole_integrals: Vec<DipoleValue>,
    /// How wavelengths are written.
    pub wavelengths: String,
    /// The selection applied.
    pub selection: String,
    /// The lines shown, by wavelength.
    pub rows: Vec<LineRow>,
}

impl LinesReport {
    /// Select and order the lines of `spectrum`.
    pub fn new(
        species: String,
        model: String,
        spectrum: &ModelSpectrum,
        dipole: &[(String, f64)],
        selection: &LineSelection,
    ) -> LinesReport {
        let mut rows: Vec<LineRow> = spectrum
            .lines
            .iter()
            .filter(|l| selection.min_gf.is_none_or(|g| l.gf >= g))
            .map(|line| {
                let vacuum_nm = 1e7 / line.wavenumber_cm1;
                let medium = if selection.all_vacuum {
                    Medium::Vacuum
                } else {
                    Medium::conventional(vacuum_nm)
                };
                let wavelength_nm = match medium {
                    Medium::Air => {
                        air::vacuum_to_air_nm(vacuum_nm, selection.air_formula).unwrap_or(vacuum_nm)
                    }
                    Medium::Vacuum => vacuum_nm,
                };
                let (lower, upper) = (&spectrum.levels[line.lower], &spectrum.levels[line.upper]);
                LineRow {
                    wavenumber_cm1: line.wavenumber_cm1,
                    wavelength_nm,
                    medium,
                    lower_level: line.lower + 1,
                    lower: lower.label.clone(),
                    lower_energy_cm1: lower.energy_cm1,
                    lower_percent: lower.label_percent,
                    upper_level: line.upper + 1,
                    upper: upper.label.clone(),
                    upper_energy_cm1: upper.energy_cm1,
                    upper_percent: upper.label_percent,
                    strength_au: line.strength,
                    gf: line.gf,
                    log_gf: line.gf.log10(),
                    a_per_s: line.a_per_s,
                    flags: line.flag_names(),
                }
            })
            .filter(|row| {
                selection
                    .from_nm
                    .is_none_or(|from| row.wavelength_nm >= from)
                    && selection.to_nm.is_none_or(|to| row.wavelength_nm <= to)
            })
            .collect();
        rows.sort_by(|a, b| b.wavenumber_cm1.total_cmp(&a.wavenumber_cm1));
        let wavelengths = if selection.all_vacuum {
            "wavelengths in vacuum".to_string()
        } else {
            format!(
                "wavelengths in air at and above 200 nm (by the vacuum wavelength) and in \
                 vacuum below, the usual convention; air wavelengths from {}",
                selection.air_formula.citation()
            )
        };
        let mut limits = Vec::new();
        if let Some(from) = selection.from_nm {
            limits.push(format!("λ ≥ {from} nm"));
        }
        if let Some(to) = selection.to_nm {
            limits.push(format!("λ ≤ {to} nm"));
        }
        if let Some(g) = selection.min_gf {
            limits.push(format!("gf ≥ {g}"));
        }
        let selection_text = if limits.is_empty() {
            "every line".to_string()
        } else {
            limits.join(", ")
        };
        LinesReport {
            species,
            model,
            levels: spectrum.levels.len(),
            lines_in_model: spectrum.lines.len(),
            dipole_integrals: dipole
                .iter()
                .map(|(i, v)| DipoleValue {
                    name: i.clone(),
                    value_bohr: *v,
                })
                .collect(),
            wavelengths,
            selection: selection_text,
            rows,
        }
    }

    /// The description printed above the table and as `#` lines atop the CSV.
    pub fn description(&self) -> Vec<String> {
        let integrals = self
            .dipole_integrals
            .iter()
            .map(|d| format!("{} = {} bohr", d.name, d.value_bohr))
            .collect::<Vec<_>>()
            .join(", ");
        vec![
            format!(
                "{}: E1 lines of the level model {} ({} levels, {} lines); {} shown ({}).",
                self.species,
                self.model,
                self.levels,
                self.lines_in_model,
                self.rows.len(),
                self.selection
            ),
            format!(
                "Line strengths S in e²a₀² from the model's eigenvectors with {}; gf and A \
                 from S and σ with CODATA 2018 constants (gf = 303.756 S/λ[Å], A = 2.0261e18 \
                 S/(g λ³[Å]), λ in vacuum).",
                if integrals.is_empty() {
                    "no dipole integrals".to_string()
                } else {
                    integrals
                }
            ),
            format!(
                "Levels numbered as in termsight levels ([1] = lowest) and named by their LS \
                 components (unique per model); energies on the model's own scale (the zero \
                 of its E_av parameters, as in termsight levels and fit); {}.",
                self.wavelengths
            ),
        ]
    }
}

/// The terminal table.
pub fn lines_table(report: &LinesReport) -> String {
    let mut table = Table::new();
    table
        .load_style(TableStyle::new().header_separator(LineStyle::none().fill('─').junction('─')))
        .set_content_arrangement(ContentArrangement::Disabled);
    table.set_header(vec![
        "λ (nm)",
        "medium",
        "σ (cm⁻¹)",
        "lower level",
        "upper level",
        "S",
        "gf",
        "log gf",
        "A (s⁻¹)",
        "flags",
    ]);
    for row in &report.rows {
        table.add_row(vec![
            format!("{:.4}", row.wavelength_nm),
            match row.medium {
                Medium::Air => "air".to_string(),
                Medium::Vacuum => "vac".to_string(),
            },
            format!("{:.3}", row.wavenumber_cm1),
            format!("[{}] {}", row.lower_level, row.lower),
            format!("[{}] {}", row.upper_level, row.upper),
            significant(row.strength_au, 4),
            significant(row.gf, 4),
            if row.gf > 0.0 {
                format!("{:.3}", row.log_gf)
            } else {
                "-inf".to_string()
            },
            format!("{:.3e}", row.a_per_s),
            row.flags.join(" "),
        ]);
    }
    for (index, column) in table.column_iter_mut().enumerate() {
        column.set_padding((u16::from(index > 0), 0));
        if [0, 2, 5, 6, 7, 8].contains(&index) {
            column.set_cell_alignment(CellAlignment::Right);
        }
    }
    let mut out = String::new();
    for line in report.description() {
        out.push_str(&line);
        out.push('\n');
    }
    out.push('\n');
    out.push_str(&table.to_string());
    out.push('\n');
    out
}

/// The CSV: the description as `#` lines, the header [`LINE_COLUMNS`], one row
/// per line; numbers with the fewest digits that read back to the same value.
pub fn lines_csv(report: &LinesReport) -> Vec<u8> {
    let configuration = |l: &LevelLabel| l.configuration.to_string();
    let rows = report.rows.iter().map(|row| {
        [
            row.wavenumber_cm1.to_string(),
            row.wavelength_nm.to_string(),
            row.medium.name().to_string(),
            row.lower_level.to_string(),
            configuration(&row.lower),
            row.lower.term.to_string(),
            row.lower.j.to_string(),
            row.lower_energy_cm1.to_string(),
            row.lower_percent.to_string(),
            row.upper_level.to_string(),
            configuration(&row.upper),
            row.upper.term.to_string(),
            row.upper.j.to_string(),
            row.upper_energy_cm1.to_string(),
            row.upper_percent.to_string(),
            row.strength_au.to_string(),
            row.gf.to_string(),
            row.log_gf.to_string(),
            row.a_per_s.to_string(),
            row.flags.join(";"),
        ]
    });
    csv_document(&report.description(), LINE_COLUMNS, rows)
}

/// The JSON: the report's fields, with the description, and one object per line.
pub fn lines_json(report: &LinesReport) -> String {
    #[derive(Serialize)]
    struct Json<'a> {
        description: Vec<String>,
        #[serde(flatten)]
        report: &'a LinesReport,
    }
    // serde_json writes the −∞ of log gf (a line with no strength) as null.
    let mut text = serde_json::to_string_pretty(&Json {
        description: report.description(),
        report,
    })
    .unwrap_or_default();
    text.push('\n');
    text
}
