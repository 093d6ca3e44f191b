//! The outputs of `termsight levels`: the levels of a level model as a terminal
//! table, CSV or JSON.

use comfy_table::{CellAlignment, Table, presets};
use serde::Serialize;

use crate::structure::{Level, LevelStructure};

/// One LS component of a printed level.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ComponentRow {
    /// The LS state label, e.g. `3d4.(5D).4s 6D`.
    pub label: String,
    /// Its share in percent.
    pub percent: f64,
}

/// One printed level.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LevelRow {
    /// Its number, 1 = lowest: `termsight lines` names the levels of each line by it.
    pub level: usize,
    /// Energy in cm⁻¹ on the model's own scale (the zero of its E_av parameters).
    pub energy_cm1: f64,
    /// J, `3/2`.
    #[serde(rename = "J")]
    pub j: String,
    /// `even` or `odd`.
    pub parity: String,
    /// The configuration with the largest share.
    pub configuration: String,
    /// The leading LS component.
    pub leading_term: String,
    /// Its percentage.
    pub leading_percent: f64,
    /// Further components, largest first.
    pub further_components: Vec<ComponentRow>,
    /// Landé g_J.
    pub lande_g: f64,
}

/// The printed form of `levels` (as [`LevelStructure::levels`] returns them).
pub fn level_rows(structure: &LevelStructure, levels: &[Level], further: usize) -> Vec<LevelRow> {
    levels
        .iter()
        .enumerate()
        .map(|(index, level)| {
            let label = |state| structure.state_label(level.block, state).to_string();
            let leading = level.composition.first();
            LevelRow {
                level: index + 1,
                energy_cm1: level.energy_cm1,
                j: level.j.to_string(),
                parity: level.parity.to_string(),
                configuration: structure.configurations()[level.configuration].to_string(),
                leading_term: leading.map_or_else(String::new, |c| label(c.state)),
                leading_percent: leading.map_or(0.0, |c| c.percent),
                further_components: level
                    .composition
                    .iter()
                    .skip(1)
                    .take(further)
                    .map(|c| ComponentRow {
                        label: label(c.state),
                        percent: c.percent,
                    })
                    .collect(),
                lande_g: level.lande_g,
            }
        })
        .collect()
}

/// A terminal table of the levels.
pub fn levels_table(species: &str, rows: &[LevelRow]) -> String {
    let mut table = Table::new();
    table.load_style(presets::UTF8_BORDERS_ONLY);
    table.set_header(vec![
        "#",
        "energy (cm⁻¹)",
        "J",
        "parity",
        "leading component",
        "%",
        "further components",
        "g",
    ]);
    for row in rows {
        let further = row
            .further_components
            .iter()
            .filter(|c| c.percent >= 0.05)
            .map(|c| format!("{:.1}% {}", c.percent, c.label))
            .collect::<Vec<_>>()
            .join(", ");
        table.add_row(vec![
            row.level.to_string(),
            format!("{:.3}", row.energy_cm1),
            row.j.clone(),
            row.parity.clone(),
            row.leading_term.clone(),
            format!("{:.1}", row.leading_percent),
            further,
            format!("{:.4}", row.lande_g),
        ]);
    }
    for column in [0, 1, 2, 5, 7] {
        if let Some(c) = table.column_mut(column) {
            c.set_cell_alignment(CellAlignment::Right);
        }
    }
    format!(
        "{species}: {} levels; {ENERGY_SCALE}\n{table}\n",
        rows.len()
    )
}

/// What the energies are, atop every output of `termsight levels`.
pub const ENERGY_SCALE: &str = "energies in cm⁻¹ on the model's own scale (the zero of its \
E_av parameters, as in termsight lines and fit); levels numbered from the lowest, as \
termsight lines names them";

/// CSV: a `#` line saying what the energies are ([`ENERGY_SCALE`]), then
/// `level,energy_cm1,J,parity,configuration,leading_term,leading_percent,further_components,lande_g`;
/// further components as `label:percent` separated by `;`.
pub fn levels_csv(rows: &[LevelRow]) -> String {
    let mut writer = csv::Writer::from_writer(Vec::new());
    let header = [
        "level",
        "energy_cm1",
        "J",
        "parity",
        "configuration",
        "leading_term",
        "leading_percent",
        "further_components",
        "lande_g",
    ];
    let mut records = vec![header.iter().map(|s| s.to_string()).collect::<Vec<_>>()];
    for row in rows {
        let further = row
            .further_components
            .iter()
            .map(|c| format!("{}:{:.6}", c.label, c.percent))
            .collect::<Vec<_>>()
            .join(";");
        records.push(vec![
            row.level.to_string(),
            format!("{:.6}", row.energy_cm1),
            row.j.clone(),
            row.parity.clone(),
            row.configuration.clone(),
            row.leading_term.clone(),
            format!("{:.6}", row.leading_percent),
            further,
            format!("{:.8}", row.lande_g),
        ]);
    }
    for record in records {
        // Writing to a Vec cannot fail.
        let _ = writer.write_record(&record);
    }
    let bytes = writer.into_inner().unwrap_or_default();
    format!(
        "# {ENERGY_SCALE}\n{}",
        String::from_utf8(bytes).unwrap_or_default()
    )
}

/// JSON: `{"description": ENERGY_SCALE, "levels": [LevelRow…]}`.
pub fn levels_json(rows: &[LevelRow]) -> String {
    let document = serde_json::json!({ "description": ENERGY_SCALE, "levels": rows });
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_else(|_| "{}".into());
    text.push('\n');
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::structure::model::parse_model;

    const SP: &str = "species = \"Mg I\"\n[[configuration]]\nlabel = \"3s.3p\"\nEav = 100.0\n\
                      \"G1(3s,3p)\" = 6000.0\n\"zeta(3p)\" = 1000.0\n";

    fn rows() -> Vec<LevelRow> {
        let loaded = parse_model(SP, "sp.toml").unwrap();
        let values = loaded.model.values_for(&loaded.structure);
        let levels = loaded.structure.levels(&values).unwrap();
        level_rows(&loaded.structure, &levels, 2)
    }

    #[test]
    fn rows_carry_the_intermediate_coupling_levels() {
        // s.p with G¹ = 6000, ζ = 1000: the ³P₁ level at −2608.4952830141510,
        // 97.699905 % ³P (intermediate_coupling.csv, sympy). The table keeps the raw
        // ∓G¹/3 term energies: its centre of gravity is
        // (−3000 − 3·2608.495… + 3·2108.495… + 5·(−1500))/12 = −1000, ours is E_av = 100.
        let rows = rows();
        assert_eq!(rows.len(), 4);
        let p1 = &rows[1];
        assert_eq!((p1.j.as_str(), p1.parity.as_str()), ("1", "odd"));
        assert!((p1.energy_cm1 - (100.0 - 2608.495283014151 + 1000.0)).abs() < 1e-9);
        assert_eq!(p1.leading_term, "3s.3p 3P°");
        assert!((p1.leading_percent - 97.699905).abs() < 1e-6);
        assert_eq!(p1.further_components[0].label, "3s.3p 1P°");
    }

    #[test]
    fn csv_and_json_have_the_documented_columns() {
        let rows = rows();
        let csv = levels_csv(&rows);
        let mut lines = csv.lines();
        assert!(
            lines
                .next()
                .unwrap()
                .starts_with("# energies in cm⁻¹ on the model's own scale")
        );
        assert_eq!(
            lines.next().unwrap(),
            "level,energy_cm1,J,parity,configuration,leading_term,leading_percent,further_components,lande_g"
        );
        assert_eq!(csv.lines().count(), 6);
        let json: serde_json::Value = serde_json::from_str(&levels_json(&rows)).unwrap();
        assert_eq!(json["levels"].as_array().unwrap().len(), 4);
        assert_eq!(json["levels"][0]["J"], "0");
        assert_eq!(json["levels"][3]["level"], 4);
        let table = levels_table("Mg I", &rows);
        assert!(table.contains("3s.3p 3P°") && table.starts_with("Mg I: 4 levels; energies"));
    }
}
