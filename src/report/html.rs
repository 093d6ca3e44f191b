//! The one-page analysis report (`termsight report`): a single self-contained HTML
//! file — no scripts, no external fonts, styles or images, nothing fetched — with
//! the input summary, a summary per species, the tables of each stage and every
//! figure as inline SVG, so that it opens the same in any browser, offline.

use std::fmt::Write as _;

use super::figures::escape;
use super::{AssignReport, FitReport, significant};
use crate::assign::AssignmentRecord;
use crate::levels::optimize::OptimizationReport;
use crate::levels::search::LevelSearch;
use crate::notation::Species;

/// Rows of a table shown at most; the rest are counted under the table.
pub const MAX_TABLE_ROWS: usize = 400;

/// One figure of the page.
#[derive(Debug, Clone, PartialEq)]
pub struct PageFigure {
    /// The caption under it.
    pub caption: String,
    /// The figure, SVG.
    pub svg: String,
}

/// Everything the page shows.
pub struct AnalysisPage<'a> {
    /// The assignment.
    pub assign: &'a AssignReport<'a>,
    /// Its rows (as [`crate::assign::records`] gives them).
    pub records: &'a [AssignmentRecord],
    /// The level optimisation and its description, or why there is none.
    pub optimization: Result<(&'a OptimizationReport, Vec<String>), String>,
    /// The fit, or why there is none (`None`: no model was given).
    pub fit: Option<Result<FitReport<'a>, String>>,
    /// The figures.
    pub figures: Vec<PageFigure>,
    /// Figures that could not be drawn, and why.
    pub missing_figures: Vec<String>,
    /// The search for new levels, when one was asked for.
    pub level_search: Option<&'a PageLevelSearch>,
}

/// A search for new levels of one spectrum, for the page.
#[derive(Debug, Clone, PartialEq)]
pub struct PageLevelSearch {
    /// The spectrum whose known levels the candidates combine with.
    pub species: Species,
    /// The search.
    pub search: LevelSearch,
}

const STYLE: &str = "body{font-family:sans-serif;margin:1.5em auto;max-width:1250px;\
color:#000;background:#fff;line-height:1.4}h1{font-size:1.5em}h2{font-size:1.2em;\
border-bottom:1px solid #888;margin-top:1.6em}table{border-collapse:collapse;\
font-size:0.85em;margin:0.5em 0}th,td{border:1px solid #bbb;padding:2px 6px;\
text-align:left}td.n{text-align:right;font-variant-numeric:tabular-nums}th{background:#eee}\
figure{margin:1em 0}figure svg{max-width:100%;height:auto;border:1px solid #ddd}\
figcaption{font-size:0.9em}p.note{font-size:0.85em;color:#333}";

/// The page as HTML.
pub fn analysis_html(page: &AnalysisPage<'_>) -> String {
    let mut h = String::new();
    let source = &page.assign.input.source;
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <title>termsight report: {}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n",
        escape(source)
    );
    let _ = writeln!(h, "<h1>Analysis of {}</h1>", escape(source));
    let _ = writeln!(
        h,
        "<p class=\"note\">Made by termsight {}: assign → optimize{}. Every number below is \
         also in the CSV and JSON outputs of the commands.</p>",
        env!("CARGO_PKG_VERSION"),
        if page.fit.is_some() { " → fit" } else { "" }
    );

    h.push_str("<h2>Input and matching</h2>\n<ul>\n");
    for line in page.assign.description() {
        let _ = writeln!(h, "<li>{}</li>", escape(&line));
    }
    h.push_str("</ul>\n");

    species_summary(&mut h, page);
    if let Some(evidence) = &page.assign.evidence {
        let mut lines = evidence.summary_lines().into_iter();
        if let Some(heading) = lines.next() {
            let _ = writeln!(h, "<p>{}</p>\n<ul>", escape(&heading));
            for line in lines {
                let _ = writeln!(h, "<li>{}</li>", escape(line.trim()));
            }
            h.push_str("</ul>\n");
        }
    }

    if !page.figures.is_empty() || !page.missing_figures.is_empty() {
        h.push_str("<h2>Figures</h2>\n");
    }
    for figure in &page.figures {
        let _ = writeln!(
            h,
            "<figure>\n{}\n<figcaption>{}</figcaption>\n</figure>",
            figure.svg.trim(),
            escape(&figure.caption)
        );
    }
    for missing in &page.missing_figures {
        let _ = writeln!(h, "<p class=\"note\">{}</p>", escape(missing));
    }

    assignments_table(&mut h, page.records);
    if let Some(search) = page.level_search {
        level_search_table(&mut h, search);
    }
    match &page.optimization {
        Ok((report, description)) => levels_table(&mut h, report, description),
        Err(why) => {
            let _ = writeln!(
                h,
                "<h2>Level optimisation</h2>\n<p class=\"note\">No optimisation: {}</p>",
                escape(why)
            );
        }
    }
    match &page.fit {
        Some(Ok(fit)) => fit_table(&mut h, fit),
        Some(Err(why)) => {
            let _ = writeln!(
                h,
                "<h2>Fit of the level model</h2>\n<p class=\"note\">No fit: {}</p>",
                escape(why)
            );
        }
        None => {}
    }
    h.push_str("</body>\n</html>\n");
    h
}

/// Per species: lines assigned at rank 1, blends among them, levels optimised.
fn species_summary(h: &mut String, page: &AnalysisPage<'_>) {
    h.push_str(
        "<h2>Species</h2>\n<table>\n<tr><th>species</th><th>predicted lines</th>\
         <th>observed lines assigned (rank 1)</th><th>of them blends</th>\
         <th>levels optimised</th><th>lines used</th></tr>\n",
    );
    for s in page.assign.species() {
        let best: Vec<&AssignmentRecord> = page
            .records
            .iter()
            .filter(|r| {
                r.rank == Some(1) && r.candidate.as_ref().is_some_and(|c| c.species == s.species)
            })
            .collect();
        if best.is_empty() {
            continue;
        }
        let blends = best
            .iter()
            .filter(|r| r.flags.contains(&crate::assign::Flag::Blend))
            .count();
        let optimised = page
            .optimization
            .as_ref()
            .ok()
            .and_then(|(o, _)| o.species.iter().find(|r| r.species == s.species));
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{blends}</td>\
             <td class=\"n\">{}</td><td class=\"n\">{}</td></tr>",
            escape(&s.species.to_string()),
            s.ls_lines + s.parity_and_j_lines,
            best.len(),
            optimised.map_or(0, |o| o.levels.len()),
            optimised.map_or(0, |o| o.lines.len()),
        );
    }
    let unassigned = page.records.iter().filter(|r| r.rank.is_none()).count();
    let _ = writeln!(
        h,
        "</table>\n<p class=\"note\">Species without an assigned line are not listed; {unassigned} \
         observed lines have no candidate.</p>"
    );
}

/// The rank-1 candidate of every observed line.
fn assignments_table(h: &mut String, records: &[AssignmentRecord]) {
    h.push_str(
        "<h2>Assignments (best candidate of each line)</h2>\n<table>\n<tr><th>line</th>\
         <th>given</th><th>σ_obs (cm⁻¹)</th><th>intensity</th><th>species</th><th>lower level</th>\
         <th>upper level</th><th>Δ/u</th><th>P chance</th><th>flags</th></tr>\n",
    );
    let rows: Vec<&AssignmentRecord> = records
        .iter()
        .filter(|r| r.rank.is_none_or(|k| k == 1))
        .collect();
    for r in rows.iter().take(MAX_TABLE_ROWS) {
        let given = match r.given {
            crate::linelist::GivenPosition::Wavelength {
                value,
                unit,
                medium,
            } => {
                format!("{value} {unit} ({medium})")
            }
            crate::linelist::GivenPosition::Wavenumber { value } => format!("{value} cm⁻¹"),
        };
        let (species, lower, upper, dev, chance) = match &r.candidate {
            Some(c) => (
                c.species.to_string(),
                c.lower.to_string(),
                c.upper.to_string(),
                significant(c.deviation_sigma, 3),
                significant(c.chance_probability, 2),
            ),
            None => Default::default(),
        };
        let flags: Vec<&str> = r.flags.iter().map(|f| f.name()).collect();
        let _ = writeln!(
            h,
            "<tr><td class=\"n\">{}</td><td>{}</td><td class=\"n\">{:.3}</td><td class=\"n\">{}</td>\
             <td>{}</td><td>{}</td><td>{}</td><td class=\"n\">{dev}</td><td class=\"n\">{chance}</td>\
             <td>{}</td></tr>",
            r.line,
            escape(&given),
            r.observed_wavenumber_cm1,
            r.observed_intensity
                .map_or(String::new(), |i| i.to_string()),
            escape(&species),
            escape(&lower),
            escape(&upper),
            escape(&flags.join(" "))
        );
    }
    h.push_str("</table>\n");
    more_rows(h, rows.len());
}

/// The optimised levels.
fn levels_table(h: &mut String, report: &OptimizationReport, description: &[String]) {
    h.push_str("<h2>Level optimisation</h2>\n<ul>\n");
    for line in description {
        let _ = writeln!(h, "<li>{}</li>", escape(line));
    }
    h.push_str(
        "</ul>\n<table>\n<tr><th>species</th><th>level</th><th>energy (cm⁻¹)</th>\
         <th>uncertainty (cm⁻¹)</th><th>lines</th><th>tabulated − optimised (cm⁻¹)</th><th>flags</th></tr>\n",
    );
    let mut shown = 0;
    let mut total = 0;
    for s in &report.species {
        for level in &s.levels {
            total += 1;
            if shown >= MAX_TABLE_ROWS {
                continue;
            }
            shown += 1;
            let mut flags = Vec::new();
            if level.is_reference {
                flags.push("reference");
            }
            if level.single_line() {
                flags.push("single-line");
            }
            let _ = writeln!(
                h,
                "<tr><td>{}</td><td>{}</td><td class=\"n\">{:.4}</td><td class=\"n\">{}</td>\
                 <td class=\"n\">{}</td><td class=\"n\">{}</td><td>{}</td></tr>",
                escape(&s.species.to_string()),
                escape(&level.label.to_string()),
                level.energy_cm1,
                significant(level.uncertainty_cm1, 3),
                level.line_count,
                level
                    .prior_energy_cm1
                    .map_or(String::new(), |p| format!("{:.4}", p - level.energy_cm1)),
                flags.join(" ")
            );
        }
    }
    h.push_str("</table>\n");
    more_rows(h, total);
}

/// The fitted parameters.
fn fit_table(h: &mut String, fit: &FitReport<'_>) {
    let r = fit.result;
    let _ = writeln!(
        h,
        "<h2>Fit of the level model</h2>\n<p>{} fitted to {} levels of {} ({} free parameters, \
         {} degrees of freedom): σ = {}, rms {} cm⁻¹.</p>",
        escape(fit.model_source),
        r.levels.len(),
        escape(fit.levels_source),
        r.free_parameters,
        r.degrees_of_freedom,
        r.sigma_cm1
            .map_or("— (no degrees of freedom)".to_string(), |s| format!(
                "{} cm⁻¹",
                significant(s, 4)
            )),
        significant(r.rms_cm1, 4)
    );
    h.push_str(
        "<table>\n<tr><th>parameter</th><th>initial (cm⁻¹)</th><th>fitted (cm⁻¹)</th>\
         <th>standard error (cm⁻¹)</th><th>adjusted</th></tr>\n",
    );
    for p in &r.parameters {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"n\">{:.3}</td><td class=\"n\">{:.3}</td><td class=\"n\">{}</td><td>{}</td></tr>",
            escape(&p.name),
            p.initial_cm1,
            p.fitted_cm1,
            p.standard_error_cm1
                .map_or(String::new(), |s| significant(s, 3)),
            if p.adjusted { "yes" } else { "no" }
        );
    }
    h.push_str("</table>\n");
}

/// The candidate new levels.
fn level_search_table(h: &mut String, page: &PageLevelSearch) {
    let search = &page.search;
    let _ = writeln!(
        h,
        "<h2>Candidate new levels of {}</h2>\n<p class=\"note\">{} unassigned lines searched \
         against {} known levels, {:.0}–{:.0} cm⁻¹ ({} candidate energies); a candidate needs \
         {} lines within {} combined standard uncertainties and a chance probability (look-elsewhere \
         factor included) of at most {}. Marked in the term diagram.</p>",
        escape(&page.species.to_string()),
        search.lines,
        search.known_levels_used,
        search.energy_range_cm1.0,
        search.energy_range_cm1.1,
        search.candidate_energies,
        search.config.min_lines(),
        search.config.tolerance_sigma(),
        significant(search.config.max_chance_probability(), 2),
    );
    if search.candidates.is_empty() {
        h.push_str("<p class=\"note\">No candidate.</p>\n");
        return;
    }
    h.push_str(
        "<table>\n<tr><th>energy (cm⁻¹)</th><th>uncertainty (cm⁻¹)</th><th>parity</th>\
         <th>possible J</th><th>lines</th><th>P chance</th><th>flags</th></tr>\n",
    );
    for c in search.candidates.iter().take(MAX_TABLE_ROWS) {
        let j: Vec<String> = c.allowed_j.iter().map(ToString::to_string).collect();
        let mut flags = Vec::new();
        if c.is_intercombination() {
            flags.push("intercombination");
        }
        if c.coincides_with.is_some() {
            flags.push("coincides");
        }
        let _ = writeln!(
            h,
            "<tr><td class=\"n\">{:.4}</td><td class=\"n\">{}</td><td>{}</td><td>{}</td>\
             <td class=\"n\">{}</td><td class=\"n\">{}</td><td>{}</td></tr>",
            c.energy_cm1,
            significant(c.uncertainty_cm1, 2),
            if c.parity == crate::notation::Parity::Odd {
                "odd"
            } else {
                "even"
            },
            escape(&j.join(", ")),
            c.supports.len(),
            significant(c.chance_probability, 2),
            flags.join(" ")
        );
    }
    h.push_str("</table>\n");
    more_rows(h, search.candidates.len());
}

/// The count of rows left out of a table.
fn more_rows(h: &mut String, total: usize) {
    if total > MAX_TABLE_ROWS {
        let _ = writeln!(
            h,
            "<p class=\"note\">{} more rows not shown (the first {MAX_TABLE_ROWS} of {total}); \
             the CSV outputs hold them all.</p>",
            total - MAX_TABLE_ROWS
        );
    }
}
