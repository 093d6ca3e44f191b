//! The outputs of `termsight find-levels`: a table to read, a CSV in the columns
//! of a level table (so that the candidates can be appended to one), and JSON.

use comfy_table::{CellAlignment, LineStyle, Table, TableStyle};
use serde::Serialize;

use crate::levels::search::{CandidateLevel, LevelSearch, SearchLine, SpinCheck, Support};
use crate::levels::{LEVEL_COLUMNS, Level};
use crate::notation::{HalfInt, Parity, Species, Term};

/// What the outputs of a search are made from.
#[derive(Debug, Clone, Copy)]
pub struct LevelSearchReport<'a> {
    /// The search.
    pub search: &'a LevelSearch,
    /// The lines searched, as given to the search.
    pub lines: &'a [SearchLine],
    /// The known levels, as given to the search.
    pub levels: &'a [Level],
    /// Their spectrum.
    pub species: Species,
    /// Where the lines and the levels came from, one sentence each.
    pub sources: &'a [String],
    /// Write the CSV with the eighth column `energy_status` of the compiled tables
    /// (empty for a candidate: its energy is from observed lines), so that its rows
    /// append to a table that has that column.
    pub status_column: bool,
}

/// Decimals that show two significant digits of an uncertainty `u` (4 when `u` is
/// not a positive number), at most 8.
fn decimals(u: f64) -> usize {
    if u > 0.0 && u.is_finite() {
        (1.0 - u.log10().floor()).clamp(0.0, 8.0) as usize
    } else {
        4
    }
}

/// A probability to three significant digits: `2.13e-5`, `0.0421`, `1`.
fn probability(p: f64) -> String {
    if p == 0.0 || p >= 1e-3 {
        format!("{}", super::digits::round_significant(p, 3))
    } else {
        format!("{p:.2e}")
    }
}

/// `1, 2` or `3/2`.
fn j_list(j: &[HalfInt]) -> String {
    j.iter()
        .map(ToString::to_string)
        .collect::<Vec<_>>()
        .join(", ")
}

/// The term a candidate is written with in a level table: its energy rounded down,
/// with its parity (`45678e`, `45678°`), the way compilations designate levels
/// known by energy only.
pub fn candidate_term(candidate: &CandidateLevel) -> Term {
    Term::Numbered {
        number: candidate
            .energy_cm1
            .max(0.0)
            .floor()
            .min(f64::from(u32::MAX)) as u32,
        parity: candidate.parity,
    }
}

/// The flags of a candidate, for the outputs.
fn flags(report: &LevelSearchReport<'_>, c: &CandidateLevel) -> Vec<String> {
    let mut out = Vec::new();
    if let Some(SpinCheck {
        best_multiplicities,
        intercombination_lines,
    }) = &c.spin
        && *intercombination_lines > 0
    {
        out.push(format!(
            "intercombination: {intercombination_lines} of the {} lines change the spin \
             whatever the new level's (fewest with 2S+1 = {})",
            c.supports.len(),
            best_multiplicities
                .iter()
                .map(ToString::to_string)
                .collect::<Vec<_>>()
                .join(" or ")
        ));
    }
    if let Some(level) = c.coincides_with.and_then(|i| report.levels.get(i)) {
        out.push(format!(
            "coincides with the known level {} at {} cm⁻¹: its lines may be missing from \
             the predictions",
            level.label, level.energy_cm1
        ));
    }
    out
}

/// The description of the search, one sentence per line.
fn description(report: &LevelSearchReport<'_>) -> Vec<String> {
    let s = report.search;
    let c = &s.config;
    let mut out = vec![format!(
        "termsight find-levels: new levels of {} from {} lines against {} known levels.",
        report.species, s.lines, s.known_levels_used
    )];
    out.extend(report.sources.iter().cloned());
    if s.known_levels_offset > 0 {
        out.push(format!(
            "{} known levels relative to an unknown offset (+x) left out.",
            s.known_levels_offset
        ));
    }
    out.push(format!(
        "Energies {:.0} to {:.0} cm⁻¹; a line supports an energy E when |σ − |E − E_k|| ≤ {} \
         combined standard uncertainties; at least {} lines; {} candidate energies (the \
         look-elsewhere factor); candidates with chance probability ≤ {} shown, {} found.",
        s.energy_range_cm1.0,
        s.energy_range_cm1.1,
        c.tolerance_sigma(),
        c.min_lines(),
        s.candidate_energies,
        c.max_chance_probability(),
        s.candidates.len()
    ));
    out
}

/// The known level of a support, printed.
fn level_text(report: &LevelSearchReport<'_>, s: &Support) -> (String, f64) {
    report
        .levels
        .get(s.level)
        .map_or((String::new(), f64::NAN), |l| {
            (l.label.to_string(), l.energy_cm1)
        })
}

/// The table of `termsight find-levels`: the description, then each candidate with
/// its supporting lines.
pub fn level_search_table(report: &LevelSearchReport<'_>) -> String {
    let mut text = description(report).join("\n");
    text.push('\n');
    if report.search.candidates.is_empty() {
        text.push_str("\nNo candidate level.\n");
    }
    for (rank, c) in report.search.candidates.iter().enumerate() {
        let d = decimals(c.uncertainty_cm1);
        text.push_str(&format!(
            "\nCandidate {}: {:.d$} ± {:.d$} cm⁻¹, {}, J = {}; {} lines; chance probability {} \
             (local {}, {} candidate energies expected by chance)\n",
            rank + 1,
            c.energy_cm1,
            c.uncertainty_cm1,
            c.parity,
            j_list(&c.allowed_j),
            c.supports.len(),
            probability(c.chance_probability),
            probability(c.local_probability),
            probability(c.expected_by_chance),
        ));
        for flag in flags(report, c) {
            text.push_str(&format!("  flag: {flag}\n"));
        }
        let mut table = Table::new();
        table
            .load_style(
                TableStyle::new().header_separator(LineStyle::none().fill('─').junction('─')),
            )
            .set_header(vec![
                "line",
                "σ obs\ncm⁻¹",
                "u\ncm⁻¹",
                "intensity",
                "known level",
                "E_k\ncm⁻¹",
                "new level",
                "residual\ncm⁻¹",
                "residual\n/u_c",
            ]);
        for s in &c.supports {
            let Some(line) = report.lines.get(s.line) else {
                continue;
            };
            let (label, energy) = level_text(report, s);
            let dl = decimals(line.uncertainty_cm1);
            table.add_row(vec![
                line.row.to_string(),
                format!("{:.dl$}", line.wavenumber_cm1),
                format!(
                    "{}",
                    super::digits::round_significant(line.uncertainty_cm1, 2)
                ),
                line.intensity.map_or(String::new(), |i| i.to_string()),
                label,
                energy.to_string(),
                if s.new_level_is_upper {
                    "upper"
                } else {
                    "lower"
                }
                .to_string(),
                format!("{:+.dl$}", s.residual_cm1),
                format!("{:+.1}", s.residual_cm1 / s.combined_uncertainty_cm1),
            ]);
        }
        for (index, column) in table.column_iter_mut().enumerate() {
            column.set_padding((2, 0));
            if index != 4 && index != 6 {
                column.set_cell_alignment(CellAlignment::Right);
            }
        }
        text.push_str(&table.trim_fmt());
        text.push('\n');
    }
    if !report.search.candidates.is_empty() {
        text.push_str(
            "\nTo test a candidate: write it into your level table (--format csv gives the \
             rows), assign again, and search the lines still unassigned.\n",
        );
    }
    text
}

/// The CSV of `termsight find-levels`: the columns of a level table
/// ([`LEVEL_COLUMNS`]), one row per candidate and allowed J (the term is the
/// energy rounded down with the parity, the configuration blank), each candidate
/// opened by a `#` comment line; with [`LevelSearchReport::status_column`], the
/// column `energy_status` (empty) after them. The rows after the header can be
/// appended to a level table with the same columns.
pub fn level_search_csv(report: &LevelSearchReport<'_>) -> Vec<u8> {
    let mut out = Vec::new();
    out.extend_from_slice(LEVEL_COLUMNS.join(",").as_bytes());
    if report.status_column {
        out.extend_from_slice(b",energy_status");
    }
    out.push(b'\n');
    for (rank, c) in report.search.candidates.iter().enumerate() {
        let d = decimals(c.uncertainty_cm1);
        let rows: Vec<String> = c
            .supports
            .iter()
            .filter_map(|s| report.lines.get(s.line).map(|l| l.row.to_string()))
            .collect();
        let source = format!(
            "find-levels candidate {}: {} lines (rows {}), chance probability {}{}",
            rank + 1,
            c.supports.len(),
            rows.join(" "),
            probability(c.chance_probability),
            if c.allowed_j.len() > 1 {
                format!(
                    "; J one of {} (one row each: keep the J you accept)",
                    j_list(&c.allowed_j)
                )
            } else {
                String::new()
            }
        );
        let mut comment = format!(
            "# candidate {}: {:.d$} ± {:.d$} cm⁻¹, {}, J = {}",
            rank + 1,
            c.energy_cm1,
            c.uncertainty_cm1,
            c.parity,
            j_list(&c.allowed_j)
        );
        for flag in flags(report, c) {
            comment.push_str("; ");
            comment.push_str(&flag);
        }
        out.extend_from_slice(comment.as_bytes());
        out.push(b'\n');
        let mut writer = csv::WriterBuilder::new()
            .terminator(csv::Terminator::Any(b'\n'))
            .from_writer(Vec::new());
        for j in &c.allowed_j {
            // Writing to a Vec cannot fail.
            let mut record = vec![
                report.species.to_string(),
                String::new(),
                candidate_term(c).to_string(),
                j.to_string(),
                format!("{:.d$}", c.energy_cm1),
                format!("{:.d$}", c.uncertainty_cm1),
                source.clone(),
            ];
            if report.status_column {
                record.push(String::new());
            }
            let _ = writer.write_record(&record);
        }
        if let Ok(bytes) = writer.into_inner() {
            out.extend_from_slice(&bytes);
        }
    }
    out
}

#[derive(Serialize)]
struct JsonReport<'a> {
    description: Vec<String>,
    species: String,
    energy_range_cm1: (f64, f64),
    candidate_energies: usize,
    lines: usize,
    known_levels_used: usize,
    known_levels_offset: usize,
    tolerance_sigma: f64,
    min_lines: usize,
    max_chance_probability: f64,
    candidates: Vec<JsonCandidate<'a>>,
}

#[derive(Serialize)]
struct JsonCandidate<'a> {
    rank: usize,
    energy_cm1: f64,
    uncertainty_cm1: f64,
    parity: Parity,
    term: String,
    allowed_j: Vec<String>,
    lines: usize,
    chance_probability: f64,
    local_probability: f64,
    expected_by_chance: f64,
    spin: &'a Option<SpinCheck>,
    intercombination: bool,
    coincides_with: Option<String>,
    flags: Vec<String>,
    supports: Vec<JsonSupport>,
}

#[derive(Serialize)]
struct JsonSupport {
    line: usize,
    observed_wavenumber_cm1: f64,
    observed_uncertainty_cm1: f64,
    observed_intensity: Option<f64>,
    known_level: String,
    known_energy_cm1: f64,
    new_level_is: &'static str,
    residual_cm1: f64,
    combined_uncertainty_cm1: f64,
}

/// The JSON of `termsight find-levels`: the description, the settings and every
/// candidate with its supporting lines.
pub fn level_search_json(report: &LevelSearchReport<'_>) -> String {
    let s = report.search;
    let candidates = s
        .candidates
        .iter()
        .enumerate()
        .map(|(rank, c)| JsonCandidate {
            rank: rank + 1,
            energy_cm1: c.energy_cm1,
            uncertainty_cm1: c.uncertainty_cm1,
            parity: c.parity,
            term: candidate_term(c).to_string(),
            allowed_j: c.allowed_j.iter().map(ToString::to_string).collect(),
            lines: c.supports.len(),
            chance_probability: c.chance_probability,
            local_probability: c.local_probability,
            expected_by_chance: c.expected_by_chance,
            spin: &c.spin,
            intercombination: c.is_intercombination(),
            coincides_with: c
                .coincides_with
                .and_then(|i| report.levels.get(i))
                .map(|l| l.label.to_string()),
            flags: flags(report, c),
            supports: c
                .supports
                .iter()
                .filter_map(|sup| {
                    let line = report.lines.get(sup.line)?;
                    let (known_level, known_energy_cm1) = level_text(report, sup);
                    Some(JsonSupport {
                        line: line.row,
                        observed_wavenumber_cm1: line.wavenumber_cm1,
                        observed_uncertainty_cm1: line.uncertainty_cm1,
                        observed_intensity: line.intensity,
                        known_level,
                        known_energy_cm1,
                        new_level_is: if sup.new_level_is_upper {
                            "upper"
                        } else {
                            "lower"
                        },
                        residual_cm1: sup.residual_cm1,
                        combined_uncertainty_cm1: sup.combined_uncertainty_cm1,
                    })
                })
                .collect(),
        })
        .collect();
    let json = JsonReport {
        description: description(report),
        species: report.species.to_string(),
        energy_range_cm1: s.energy_range_cm1,
        candidate_energies: s.candidate_energies,
        lines: s.lines,
        known_levels_used: s.known_levels_used,
        known_levels_offset: s.known_levels_offset,
        tolerance_sigma: s.config.tolerance_sigma(),
        min_lines: s.config.min_lines(),
        max_chance_probability: s.config.max_chance_probability(),
        candidates,
    };
    let mut text = serde_json::to_string_pretty(&json).unwrap_or_default();
    text.push('\n');
    text
}
